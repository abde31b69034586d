#include "metrics/answer_metrics.h"

#include <algorithm>
#include <cstdint>
#include <cstring>
#include <unordered_map>

namespace plumb::metrics {

namespace {

// Token equality with a first-byte check before memcmp: most unequal tokens differ there.
bool SameToken(std::string_view a, std::string_view b) {
  return a.size() == b.size() &&
         (a.empty() || (a[0] == b[0] && std::memcmp(a.data(), b.data(), a.size()) == 0));
}

// Works on std::vector<std::string> and TokenViews alike.
template <typename A, typename B>
bool SameTokens(const A& a, const B& b) {
  if (a.size() != b.size()) return false;
  for (size_t i = 0; i < a.size(); ++i) {
    if (!SameToken(a[i], b[i])) return false;
  }
  return true;
}

// Size of collections.Counter(a) & collections.Counter(b): the multiset intersection.
template <typename A, typename B>
size_t CommonTokenCount(const A& a, const B& b) {
  // Answers are short (SQuAD's average a few tokens): pairwise matching with a bit per gold
  // token beats hashing there.
  if (b.size() <= 64) {
    uint64_t used = 0;
    size_t common = 0;
    for (size_t i = 0; i < a.size(); ++i) {
      const std::string_view token = a[i];
      for (size_t j = 0; j < b.size(); ++j) {
        const uint64_t bit = uint64_t{1} << j;
        if ((used & bit) == 0 && SameToken(b[j], token)) {
          used |= bit;
          ++common;
          break;
        }
      }
    }
    return common;
  }
  std::unordered_map<std::string_view, size_t> counts;
  counts.reserve(b.size());
  for (size_t j = 0; j < b.size(); ++j) ++counts[std::string_view(b[j])];
  size_t common = 0;
  for (size_t i = 0; i < a.size(); ++i) {
    auto it = counts.find(std::string_view(a[i]));
    if (it != counts.end() && it->second > 0) {
      --it->second;
      ++common;
    }
  }
  return common;
}

template <typename A, typename B>
double F1(const A& prediction, const B& gold) {
  if (prediction.empty() || gold.empty()) return prediction.empty() && gold.empty() ? 1.0 : 0.0;
  const size_t same = CommonTokenCount(prediction, gold);
  if (same == 0) return 0.0;
  // Same operations, in the same order, as evaluate-v2.0.py's compute_f1.
  const double precision = 1.0 * static_cast<double>(same) / static_cast<double>(prediction.size());
  const double recall = 1.0 * static_cast<double>(same) / static_cast<double>(gold.size());
  return (2 * precision * recall) / (precision + recall);
}

// The scores of a non-abstaining answer's tokens against a case's gold answers.
template <typename Tokens>
AnswerScores ScoreTokens(const Tokens& tokens, const NormalizedGold& gold) {
  AnswerScores scores;
  scores.abstained = tokens.empty();
  if (gold.answers.empty()) {
    if (tokens.empty()) scores.exact_match = scores.token_f1 = 1;
    return scores;
  }
  for (const std::vector<std::string>& gold_tokens : gold.answers) {
    if (SameTokens(tokens, gold_tokens)) {
      // Equal non-empty lists have F1 exactly 1 (precision = recall = 1.0): both maxima are
      // reached, so the remaining gold answers cannot change them.
      scores.exact_match = scores.token_f1 = 1;
      break;
    }
    scores.token_f1 = std::max(scores.token_f1, F1(tokens, gold_tokens));
  }
  return scores;
}

}  // namespace

double TokenF1(const std::vector<std::string>& prediction, const std::vector<std::string>& gold) {
  return F1(prediction, gold);
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
  if (!answer.has_value()) {
    AnswerScores scores;
    scores.abstained = true;
    if (gold.answers.empty()) scores.exact_match = scores.token_f1 = 1;
    return scores;
  }
  if (profile == NormalizationProfile::kSquad) {
    TokenViews tokens;
    NormalizeSquadTokens(*answer, &tokens);
    return ScoreTokens(tokens, gold);
  }
  return ScoreTokens(NormalizeTokens(*answer, profile, lang), gold);
}

}  // namespace plumb::metrics
