#ifndef PLUMB_METRICS_RETRIEVAL_METRICS_H_
#define PLUMB_METRICS_RETRIEVAL_METRICS_H_

/// Retrieval metrics (SPEC §6.4): a case's ranked `retrieved` list scored against its gold
/// source spans, as recall@k and reciprocal rank (averaged over cases into mrr by the runner).
/// An item hits a gold span by the citation rule of §6.3 (CitationMatcher), so a retrieved chunk
/// counts as finding a gold span exactly when citing that chunk would.

#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "metrics/citation_metrics.h"
#include "metrics/span.h"

namespace plumb::metrics {

/// One case's retrieval scores.
struct RetrievalScores {
  std::map<int, double> recall_at;  // k -> recall@k
  std::optional<double> mrr;        // this case's reciprocal rank
  int64_t first_hit_rank = 0;       // 1-based rank of the first item hitting any gold span; 0 none
  /// One line per item that cannot hit anything for a reason the user can fix (unknown doc,
  /// unlocated quote, invalid span), and per malformed gold span; e.g. "retrieved item 3: ...".
  std::vector<std::string> warnings;
  std::vector<bool> retrieved_hit;  // per retrieved item, in rank order: hits some gold span
};

/// Scores one case's `retrieved_ranked` list (best first) against its `gold` spans.
///
///   recall@k = gold spans hit by at least one of the top k items / gold spans, for each k in
///              `ks` (common practice: the fraction of relevant items found in the first k).
///              A list shorter than k counts as the whole list; k < 1 is skipped.
///   mrr      = 1 / rank of the first item that hits any gold span, 0 if none hits
///              (Voorhees 1999, TREC-8 Question Answering Track Report; from memory).
/// Ranks are positions in the list as given; a repeated item keeps its position and is not
/// removed. With no gold spans nothing is defined: recall_at is empty and mrr nullopt (hit
/// flags and warnings are still filled in). Whether the response carried a `retrieved` list at
/// all is the caller's to decide: an empty list here scores 0 everywhere. `min_overlap`,
/// `documents` and `indexes` are as for ScoreCitations.
RetrievalScores ScoreRetrieval(const std::vector<CitedRef>& retrieved_ranked,
                               const std::vector<GoldSpanRef>& gold, const std::vector<int>& ks,
                               double min_overlap, const DocumentLookup& documents,
                               const CodePointIndexLookup& indexes = {});

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_RETRIEVAL_METRICS_H_
