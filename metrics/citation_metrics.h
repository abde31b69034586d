#ifndef PLUMB_METRICS_CITATION_METRICS_H_
#define PLUMB_METRICS_CITATION_METRICS_H_

/// Citation metrics (SPEC §6.3): a case's citations scored against its gold source spans, as
/// citation_precision, citation_recall and citation_f1. The runner calls ScoreCitations once per
/// case and repeat; CitationMatcher, the hit rule itself, is shared with the retrieval metrics
/// (metrics/retrieval_metrics.h) so that both decide a hit the same way.

#include <cstdint>
#include <functional>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "metrics/offset_units.h"
#include "metrics/span.h"

namespace plumb::metrics {

/// Looks up a prebuilt CodePointIndex of a document; nullptr means "build one for this call".
/// A runner scoring many cases over one corpus indexes each document once and passes this. The
/// index must be built from the text DocumentLookup returns for the same id and outlive the call.
using CodePointIndexLookup = std::function<const CodePointIndex*(const std::string& doc)>;

/// The least overlap, in code points, that lets a span hit a gold span of `gold_length` code
/// points: max(1, ceil(min_overlap * gold_length)) (SPEC §6.3). min_overlap is read as the
/// decimal the user wrote, so a product within a relative 1e-9 of an integer counts as that
/// integer: 0.07 of 100 code points needs 7, although 0.07 * 100 is 7.000000000000001 in binary
/// floating point. min_overlap <= 0 gives 1; above 1 no span can reach the threshold.
int64_t MinOverlapCodePoints(int64_t gold_length, double min_overlap);

/// Code points shared by the half-open spans [a_start, a_end) and [b_start, b_end); 0 if none.
int64_t SpanOverlap(int64_t a_start, int64_t a_end, int64_t b_start, int64_t b_end);

/// A citation (or retrieved item) after CitationMatcher placed it on its document.
struct PlacedCitation {
  enum class Kind {
    kSpan,     // a valid code-point span in a known document (given, or a located quote)
    kDocOnly,  // {doc} alone: hits every gold span of that doc
    kMiss,     // cannot hit anything; `warning` says why
  };
  Kind kind = Kind::kMiss;
  CitedRef ref;         // as given; a located quote also has start and end filled in
  std::string warning;  // set for kMiss only, e.g. "quote not found in boarding.md: '…'"
};

/// SPEC §6.3's hit rule. A citation hits a gold span when the docs are equal and either it is
/// doc-only, or it is a span (given or a located quote) whose overlap with the gold span is at
/// least MinOverlapCodePoints(gold length, min_overlap).
///
/// Place() decides what a citation is:
///  - start and end both set: a span; a quote beside them is ignored. It misses, with a warning,
///    when start < 0, start >= end, or end is beyond the document's length in code points.
///  - only one of start/end set: malformed, a miss with a warning.
///  - a quote and no offsets: located with LocateQuote (exact, then whitespace-collapsed, first
///    occurrence) and then a span; an unlocated quote is a miss with a warning.
///  - doc alone: doc-only.
///  - any of these naming a doc that DocumentLookup does not know: a miss with a warning.
/// When `documents` is empty (no corpus), docs cannot be checked: spans are only checked for
/// start >= 0 and start < end, doc-only citations stand, and quotes miss with a warning.
///
/// Caches each document's text and CodePointIndex on first use, so placing many citations into
/// one document decodes it at most once. Keeps copies of both lookups; the texts and indexes they
/// return must outlive the matcher. Not thread-safe: use one per thread (ScoreCitations and
/// ScoreRetrieval make their own). Not copyable: the cache points into itself.
class CitationMatcher {
 public:
  CitationMatcher(double min_overlap, const DocumentLookup& documents,
                  const CodePointIndexLookup& indexes);
  CitationMatcher(const CitationMatcher&) = delete;
  CitationMatcher& operator=(const CitationMatcher&) = delete;

  /// `label` names the citation in a warning, e.g. "citation 2".
  PlacedCitation Place(const CitedRef& citation, const std::string& label);

  /// Whether `citation` hits `gold`. A kMiss hits nothing; `gold` is assumed valid (GoldProblem).
  bool Hits(const PlacedCitation& citation, const GoldSpanRef& gold) const;

  /// Why `gold` can never be hit (negative offset, or start >= end), or "" when it is well
  /// formed. The suite loader has already checked gold spans against the documents; this guards
  /// the metric against a caller that did not.
  static std::string GoldProblem(const GoldSpanRef& gold, const std::string& label);
  /// For each gold span, whether it is valid (GoldProblem is empty); each invalid one adds a
  /// warning "gold span N ...; it cannot be hit" to *warnings. Shared by citation and retrieval
  /// scoring so both judge gold spans alike.
  static std::vector<bool> ValidGold(const std::vector<GoldSpanRef>& gold,
                                     std::vector<std::string>* warnings);

 private:
  struct Document {
    const std::string* text = nullptr;      // nullptr: unknown to the corpus
    const CodePointIndex* index = nullptr;  // the caller's, or `own`
    std::optional<CodePointIndex> own;
  };
  Document& Lookup(const std::string& doc);
  const CodePointIndex& IndexOf(Document& document);

  double min_overlap_;
  DocumentLookup documents_;
  CodePointIndexLookup indexes_;
  std::map<std::string, Document> cache_;
};

/// One case's citation scores, plus what the HTML report draws.
struct CitationScores {
  std::optional<double> precision;  // citation_precision
  std::optional<double> recall;     // citation_recall
  std::optional<double> f1;         // citation_f1
  int64_t citations = 0;            // distinct citations
  int64_t citations_hit = 0;        // distinct citations that hit some gold span
  int64_t gold = 0;                 // gold spans
  int64_t gold_hit = 0;             // gold spans hit by some citation
  /// One line per distinct citation that misses for a reason the user can fix, and per
  /// malformed gold span, e.g. "citation 2: quote not found in boarding.md: 'Boarding clo…'".
  std::vector<std::string> warnings;
  std::vector<bool> citation_hit;    // per input citation, in input order (duplicates too)
  std::vector<bool> gold_hit_flags;  // per gold span, in input order
  std::vector<CitedRef> resolved;    // the input citations; located quotes gain start and end
  std::vector<bool> placed_span;     // per input citation: a valid span of a known document
};

/// Scores one case's `citations` against its `gold` spans (SPEC §6.3 definition).
///
/// Distinct citations: two citations are the same when their doc, start and end (after quote
/// resolution) are equal. A doc-only citation is distinct from every span citation of its doc;
/// unlocated quotes are the same when doc and quote text are equal. Each distinct citation
/// counts once, whether it hits or misses, and warns once. Gold spans are not deduplicated.
///
///   precision = distinct citations hitting some gold span / distinct citations
///               (nullopt when the case has no citation; 0 when it has citations but no gold)
///   recall    = gold spans hit by some citation / gold spans (nullopt when no gold spans)
///   f1        = 2PR / (P + R), defined exactly when recall is: 0 when there are gold spans
///               but no citation, and 0 when P + R = 0
/// With neither gold spans nor citations all three are nullopt. Misses (unknown doc, unlocated
/// quote, invalid span) count as distinct citations that hit nothing. A malformed gold span
/// stays in the recall denominator and is never hit.
CitationScores ScoreCitations(const std::vector<CitedRef>& citations,
                              const std::vector<GoldSpanRef>& gold, double min_overlap,
                              const DocumentLookup& documents,
                              const CodePointIndexLookup& indexes = {});

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_CITATION_METRICS_H_
