#ifndef PLUMB_METRICS_ANSWER_METRICS_H_
#define PLUMB_METRICS_ANSWER_METRICS_H_

/// Per-case answer metrics of SPEC §6.2: exact_match and SQuAD token F1 against a case's gold
/// answers, with the abstention rules. The scorer normalizes a suite's gold answers once
/// (NormalizeGold) and scores every response and repeat against them (ScoreAnswer).
/// Pure functions; safe to call from several threads on shared NormalizedGold values.

#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "metrics/normalize.h"

namespace plumb::metrics {

/// SQuAD multiset token F1 (bag-of-tokens precision and recall, harmonic mean). If either list
/// is empty: 1 when both are, else 0 (SQuAD v2.0 rule). Computed with the same floating-point
/// operations as the official evaluate-v2.0.py, so values agree bit for bit.
double TokenF1(const std::vector<std::string>& prediction, const std::vector<std::string>& gold);

/// Gold answers normalized once per suite and reused for every case and repeat.
/// `answers` empty means an abstention case.
struct NormalizedGold {
  std::vector<std::vector<std::string>> answers;
};

/// Normalizes each gold answer with `profile`. As in the official SQuAD v2.0 evaluation
/// (get_raw_scores), gold answers that normalize to no tokens are dropped; when every answer is
/// dropped (answers: [] included) the result is an abstention case.
NormalizedGold NormalizeGold(const std::vector<std::string>& answers, NormalizationProfile profile,
                             std::string_view lang);

struct AnswerScores {
  double exact_match = 0;
  double token_f1 = 0;
  bool abstained = false;  // the answer was nullopt or normalized to no tokens
};

/// Scores one answer; `answer` nullopt means the pipeline abstained. exact_match is equality of
/// the normalized token lists (for squad, equality of normalize_answer strings), token_f1 is
/// TokenF1, each the max over gold answers. Abstention cases (gold.answers empty) score 1/1 iff
/// the pipeline abstained or the answer normalizes to no tokens, else 0/0; a non-abstention case
/// answered by abstaining scores 0/0. This equals SQuAD v2.0's scoring with abstention read as
/// the empty prediction.
AnswerScores ScoreAnswer(const std::optional<std::string>& answer, const NormalizedGold& gold,
                         NormalizationProfile profile, std::string_view lang);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_ANSWER_METRICS_H_
