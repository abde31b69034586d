#include "metrics/retrieval_metrics.h"

namespace plumb::metrics {

RetrievalScores ScoreRetrieval(const std::vector<CitedRef>& retrieved_ranked,
                               const std::vector<GoldSpanRef>& gold, const std::vector<int>& ks,
                               double min_overlap, const DocumentLookup& documents,
                               const CodePointIndexLookup& indexes) {
  CitationMatcher matcher(min_overlap, documents, indexes);
  RetrievalScores scores;

  const std::vector<bool> gold_valid = CitationMatcher::ValidGold(gold, &scores.warnings);

  // first_rank[j]: 1-based rank of the first item hitting gold span j, 0 while none has.
  std::vector<int64_t> first_rank(gold.size(), 0);
  for (size_t i = 0; i < retrieved_ranked.size(); ++i) {
    const auto rank = static_cast<int64_t>(i + 1);
    const PlacedCitation placed =
        matcher.Place(retrieved_ranked[i], "retrieved item " + std::to_string(rank));
    if (placed.kind == PlacedCitation::Kind::kMiss) scores.warnings.push_back(placed.warning);
    bool hit = false;
    for (size_t j = 0; j < gold.size(); ++j) {
      if (gold_valid[j] && matcher.Hits(placed, gold[j])) {
        hit = true;
        if (first_rank[j] == 0) first_rank[j] = rank;
      }
    }
    if (hit && scores.first_hit_rank == 0) scores.first_hit_rank = rank;
    scores.retrieved_hit.push_back(hit);
  }

  if (gold.empty()) return scores;
  for (int k : ks) {
    if (k < 1) continue;
    int64_t found = 0;
    for (int64_t rank : first_rank) {
      if (rank != 0 && rank <= k) ++found;
    }
    scores.recall_at[k] = static_cast<double>(found) / static_cast<double>(gold.size());
  }
  scores.mrr = scores.first_hit_rank > 0 ? 1.0 / static_cast<double>(scores.first_hit_rank) : 0.0;
  return scores;
}

}  // namespace plumb::metrics
