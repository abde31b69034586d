#ifndef PLUMB_RUNNER_RUN_CASE_SCORER_H_
#define PLUMB_RUNNER_RUN_CASE_SCORER_H_

/// CaseScorer turns one pipeline reply into CaseScores (SPEC §6.2-6.4) using the metrics
/// library. It is built once per suite: gold answers are normalized and patterns compiled up
/// front, so Score() does only per-reply work. Score() is const and safe to call from several
/// threads at once. The Suite and Corpus passed to Create must outlive the scorer.

#include <map>
#include <memory>
#include <mutex>
#include <string>
#include <vector>

#include "metrics/answer_metrics.h"
#include "metrics/offset_units.h"
#include "metrics/pattern_match.h"
#include "metrics/span.h"
#include "runner/pipeline/response.h"
#include "runner/run/case_scores.h"
#include "runner/suite/corpus.h"
#include "runner/suite/suite.h"

namespace plumb {

class CaseScorer {
 public:
  /// `corpus` may be null when the suite has no corpus (then citations only score doc-only).
  /// Fails when a pattern does not compile (the loader normally caught that already).
  static std::unique_ptr<CaseScorer> Create(const Suite& suite, Corpus* corpus, std::string* error);

  /// Scores case `case_index` of the suite. `response` is null when the call errored: the case
  /// then scores 0 on every answer metric it defines, 0 citation recall where it has gold
  /// spans, and never passes. `offsets` is the unit the pipeline reports offsets in (its
  /// `offsets:` key); they are converted to code points first, and an offset that cannot be
  /// converted (inside a UTF-8 sequence, splitting a surrogate pair) makes that item a miss
  /// with a warning.
  CaseScores Score(size_t case_index, const Response* response,
                   metrics::OffsetUnit offsets = metrics::OffsetUnit::kCodePoints) const;

  /// The corpus as it stands after each of the suite's updates (issue 23), by update index, for
  /// the citations of cases with `after`; each must outlive the scorer. Call before Score.
  /// Without it, such citations are looked up in the corpus given to Create.
  void UseUpdateCorpora(std::vector<Corpus*> corpora) { update_corpora_ = std::move(corpora); }

  /// Sets `correct` (the max of the suite's `correct_from` metrics the case defines; 0 when it
  /// defines none of them, and 0 for an errored case), `pass` and `cause` (ClassifyFailure)
  /// from the values in *scores. A case with `after` (Score gave it a `fresh` value) gets `fresh` =
  /// `correct`. Score() calls it; a grading pass that adds grade.NAME values calls it again.
  void Conclude(CaseScores* scores) const;

  CaseScorer(const CaseScorer&) = delete;
  CaseScorer& operator=(const CaseScorer&) = delete;

 private:
  CaseScorer(const Suite& suite, Corpus* corpus) : suite_(suite), corpus_(corpus) {}
  /// `corpus` is the case's corpus (CorpusOf); indexes are kept per corpus and document.
  const std::string* DocumentText(Corpus* corpus, const std::string& doc) const;
  /// A code-point index per document, built on first use, so a non-ASCII document is decoded
  /// once per run rather than once per citation.
  const metrics::CodePointIndex* DocumentIndex(Corpus* corpus, const std::string& doc) const;
  std::vector<metrics::CitedRef> ToCodePoints(Corpus* corpus, const std::vector<SourceRef>& refs,
                                              metrics::OffsetUnit unit, const char* what,
                                              std::vector<std::string>* warnings) const;
  /// The corpus a case's citations are read from: the one after its update, if it has one.
  Corpus* CorpusOf(const Case& c) const;
  bool Passes(const CaseScores& scores) const;
  /// The document text of each citation placed as a span (`placed`), for cited_support.
  std::vector<std::string> CitedTexts(Corpus* corpus,
                                      const std::vector<metrics::CitedRef>& resolved,
                                      const std::vector<bool>& placed) const;

  struct PreparedCase {
    metrics::NormalizedGold gold;
    std::vector<std::string> knowledge;  // the gold spans' text, normalized (knowledge_f1)
    metrics::PatternSet patterns;
    bool has_patterns = false;
    std::vector<std::vector<std::string>> stale;  // the stale answers, normalized (stale)
  };

  const Suite& suite_;
  Corpus* corpus_;
  std::vector<Corpus*> update_corpora_;
  std::vector<PreparedCase> prepared_;
  mutable std::mutex index_mutex_;
  mutable std::map<std::pair<const Corpus*, std::string>, std::unique_ptr<metrics::CodePointIndex>>
      indexes_;
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_CASE_SCORER_H_
