#include "runner/report/token_diff.h"

#include <cstdint>
#include <map>

#include "metrics/answer_metrics.h"

namespace plumb {
namespace {

using Kind = DiffToken::Kind;

// Aligns a[a_begin, a_end) with g[g_begin, g_end) by LCS, appending to *out.
void AlignByLcs(const std::vector<std::string>& a, size_t a_begin, size_t a_end,
                const std::vector<std::string>& g, size_t g_begin, size_t g_end,
                std::vector<DiffToken>* out) {
  const size_t n = a_end - a_begin;
  const size_t m = g_end - g_begin;
  // lcs[i][j]: LCS length of a[a_begin + i, a_end) and g[g_begin + j, g_end).
  std::vector<int32_t> lcs((n + 1) * (m + 1), 0);
  auto at = [&](size_t i, size_t j) -> int32_t& { return lcs[i * (m + 1) + j]; };
  for (size_t i = n; i-- > 0;) {
    for (size_t j = m; j-- > 0;) {
      at(i, j) = a[a_begin + i] == g[g_begin + j] ? at(i + 1, j + 1) + 1
                                                  : std::max(at(i + 1, j), at(i, j + 1));
    }
  }
  size_t i = 0, j = 0;
  while (i < n || j < m) {
    if (i < n && j < m && a[a_begin + i] == g[g_begin + j]) {
      out->push_back({Kind::kMatched, a[a_begin + i]});
      ++i;
      ++j;
    } else if (i < n && (j == m || at(i + 1, j) >= at(i, j + 1))) {
      out->push_back({Kind::kExtra, a[a_begin + i]});
      ++i;
    } else {
      out->push_back({Kind::kMissing, g[g_begin + j]});
      ++j;
    }
  }
}

}  // namespace

std::vector<DiffToken> DiffTokens(const std::vector<std::string>& answer,
                                  const std::vector<std::string>& gold) {
  std::vector<DiffToken> out;
  out.reserve(answer.size() + gold.size());
  size_t prefix = 0;
  while (prefix < answer.size() && prefix < gold.size() && answer[prefix] == gold[prefix]) {
    ++prefix;
  }
  size_t suffix = 0;
  while (suffix < answer.size() - prefix && suffix < gold.size() - prefix &&
         answer[answer.size() - 1 - suffix] == gold[gold.size() - 1 - suffix]) {
    ++suffix;
  }
  for (size_t i = 0; i < prefix; ++i) out.push_back({Kind::kMatched, answer[i]});
  const size_t a_end = answer.size() - suffix;
  const size_t g_end = gold.size() - suffix;
  const size_t cells = (a_end - prefix + 1) * (g_end - prefix + 1);
  if (cells <= kMaxDiffCells) {
    AlignByLcs(answer, prefix, a_end, gold, prefix, g_end, &out);
  } else {
    for (size_t i = prefix; i < a_end; ++i) out.push_back({Kind::kExtra, answer[i]});
    for (size_t j = prefix; j < g_end; ++j) out.push_back({Kind::kMissing, gold[j]});
  }
  for (size_t i = a_end; i < answer.size(); ++i) out.push_back({Kind::kMatched, answer[i]});

  // Pair leftover extra and missing tokens of equal text, in order of appearance.
  std::map<std::string, int64_t> unpaired_missing;
  for (const DiffToken& t : out) {
    if (t.kind == Kind::kMissing) unpaired_missing[t.text] += 1;
  }
  std::map<std::string, int64_t> paired;
  for (DiffToken& t : out) {
    if (t.kind != Kind::kExtra) continue;
    auto it = unpaired_missing.find(t.text);
    if (it == unpaired_missing.end() || it->second == 0) continue;
    it->second -= 1;
    paired[t.text] += 1;
    t.kind = Kind::kMatched;
  }
  std::vector<DiffToken> result;
  result.reserve(out.size());
  for (DiffToken& t : out) {
    if (t.kind == Kind::kMissing) {
      auto it = paired.find(t.text);
      if (it != paired.end() && it->second > 0) {
        it->second -= 1;  // this gold token is now shown matched in the answer
        continue;
      }
    }
    result.push_back(std::move(t));
  }
  return result;
}

AnswerDiff DiffAgainstClosestGold(const std::string* answer,
                                  const std::vector<std::string>& gold_answers,
                                  metrics::NormalizationProfile profile, std::string_view lang) {
  const std::vector<std::string> answer_tokens =
      answer == nullptr ? std::vector<std::string>()
                        : metrics::NormalizeTokens(*answer, profile, lang);
  AnswerDiff best;
  std::vector<std::string> best_gold;
  for (size_t i = 0; i < gold_answers.size(); ++i) {
    std::vector<std::string> gold = metrics::NormalizeTokens(gold_answers[i], profile, lang);
    if (gold.empty()) continue;
    const double f1 = metrics::TokenF1(answer_tokens, gold);
    if (best.gold_index < 0 || f1 > best.token_f1) {
      best.gold_index = static_cast<int>(i);
      best.token_f1 = f1;
      best_gold = std::move(gold);
    }
  }
  best.tokens = DiffTokens(answer_tokens, best_gold);
  return best;
}

}  // namespace plumb
