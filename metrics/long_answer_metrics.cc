#include "metrics/long_answer_metrics.h"

#include <algorithm>
#include <string_view>
#include <unordered_map>
#include <unordered_set>

namespace plumb::metrics {

double TokenRecall(const std::vector<std::string>& answer, const std::vector<std::string>& gold) {
  if (gold.empty()) return 0;
  std::unordered_map<std::string_view, size_t> available;
  available.reserve(answer.size());
  for (const std::string& token : answer) ++available[token];
  size_t found = 0;
  for (const std::string& token : gold) {
    auto it = available.find(token);
    if (it != available.end() && it->second > 0) {
      --it->second;
      ++found;
    }
  }
  return static_cast<double>(found) / static_cast<double>(gold.size());
}

bool ContainsRun(const std::vector<std::string>& answer, const std::vector<std::string>& gold) {
  if (gold.empty() || gold.size() > answer.size()) return false;
  return std::search(answer.begin(), answer.end(), gold.begin(), gold.end()) != answer.end();
}

LongAnswerScores ScoreLongAnswer(const std::vector<std::string>& answer_tokens,
                                 const NormalizedGold& gold) {
  LongAnswerScores scores;
  if (gold.answers.empty()) {
    if (answer_tokens.empty()) scores.token_recall = scores.covers_gold = 1;
    return scores;
  }
  if (answer_tokens.empty()) return scores;
  for (const std::vector<std::string>& gold_tokens : gold.answers) {
    scores.token_recall = std::max(scores.token_recall, TokenRecall(answer_tokens, gold_tokens));
    if (scores.covers_gold == 0 && ContainsRun(answer_tokens, gold_tokens)) scores.covers_gold = 1;
  }
  return scores;
}

std::optional<double> KnowledgeF1(const std::vector<std::string>& answer_tokens,
                                  const std::vector<std::string>& knowledge_tokens) {
  if (knowledge_tokens.empty()) return std::nullopt;
  return TokenF1(answer_tokens, knowledge_tokens);
}

std::vector<std::string> JoinedTokens(const std::vector<std::string>& texts,
                                      NormalizationProfile profile, std::string_view lang) {
  std::string joined;
  for (const std::string& text : texts) {
    if (!joined.empty()) joined.push_back(' ');
    joined += text;
  }
  return NormalizeTokens(joined, profile, lang);
}

std::optional<double> CitedSupport(const std::vector<std::string>& answer_tokens,
                                   const std::vector<std::string>& cited_tokens) {
  if (answer_tokens.empty() || cited_tokens.empty()) return std::nullopt;
  const std::unordered_set<std::string_view> cited(cited_tokens.begin(), cited_tokens.end());
  size_t supported = 0;
  for (const std::string& token : answer_tokens) supported += cited.count(token);
  return static_cast<double>(supported) / static_cast<double>(answer_tokens.size());
}

}  // namespace plumb::metrics
