#include "metrics/answer_metrics.h"

#include <algorithm>
#include <unordered_map>

namespace plumb::metrics {

namespace {

// Size of collections.Counter(a) & collections.Counter(b): the multiset intersection.
size_t CommonTokenCount(const std::vector<std::string>& a, const std::vector<std::string>& b) {
  // Answers are short (SQuAD's average a few tokens): pairwise matching without allocation beats
  // hashing there.
  constexpr size_t kSmall = 64;
  if (b.size() <= kSmall) {
    bool used[kSmall] = {};
    size_t common = 0;
    for (const std::string& token : a) {
      for (size_t j = 0; j < b.size(); ++j) {
        if (!used[j] && b[j] == token) {
          used[j] = true;
          ++common;
          break;
        }
      }
    }
    return common;
  }
  std::unordered_map<std::string_view, size_t> counts;
  counts.reserve(b.size());
  for (const std::string& token : b) ++counts[token];
  size_t common = 0;
  for (const std::string& token : a) {
    auto it = counts.find(token);
    if (it != counts.end() && it->second > 0) {
      --it->second;
      ++common;
    }
  }
  return common;
}

}  // namespace

double TokenF1(const std::vector<std::string>& prediction, const std::vector<std::string>& gold) {
  if (prediction.empty() || gold.empty()) return prediction.empty() && gold.empty() ? 1.0 : 0.0;
  const size_t same = CommonTokenCount(prediction, gold);
  if (same == 0) return 0.0;
  // Same operations, in the same order, as evaluate-v2.0.py's compute_f1.
  const double precision = 1.0 * static_cast<double>(same) / static_cast<double>(prediction.size());
  const double recall = 1.0 * static_cast<double>(same) / static_cast<double>(gold.size());
  return (2 * precision * recall) / (precision + recall);
}

NormalizedGold NormalizeGold(const std::vector<std::string>& answers, NormalizationProfile profile,
                             std::string_view lang) {
  NormalizedGold gold;
  gold.answers.reserve(answers.size());
  for (const std::string& answer : answers) {
    std::vector<std::string> tokens = NormalizeTokens(answer, profile, lang);
    if (!tokens.empty()) gold.answers.push_back(std::move(tokens));
  }
  return gold;
}

AnswerScores ScoreAnswer(const std::optional<std::string>& answer, const NormalizedGold& gold,
                         NormalizationProfile profile, std::string_view lang) {
  AnswerScores scores;
  if (!answer.has_value()) {
    scores.abstained = true;
    if (gold.answers.empty()) scores.exact_match = scores.token_f1 = 1;
    return scores;
  }
  const std::vector<std::string> tokens = NormalizeTokens(*answer, profile, lang);
  scores.abstained = tokens.empty();
  if (gold.answers.empty()) {
    if (tokens.empty()) scores.exact_match = scores.token_f1 = 1;
    return scores;
  }
  for (const std::vector<std::string>& gold_tokens : gold.answers) {
    scores.exact_match = std::max(scores.exact_match, tokens == gold_tokens ? 1.0 : 0.0);
    scores.token_f1 = std::max(scores.token_f1, TokenF1(tokens, gold_tokens));
  }
  return scores;
}

}  // namespace plumb::metrics
