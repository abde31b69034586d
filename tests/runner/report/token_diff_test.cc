// Token diff of an answer against its closest gold answer. Tokens are those of the SQuAD v1.1
// evaluation script's normalize_answer (lower-case, ASCII punctuation removed, articles a/an/the
// removed, split on whitespace), so each expected token list below is worked by hand from that
// definition; F1 values are SQuAD's multiset token F1 (evaluate-v2.0.py, compute_f1), worked by
// hand as 2PR / (P + R) with P = common / answer tokens and R = common / gold tokens.

#include "runner/report/token_diff.h"

#include <catch2/catch.hpp>
#include <string>
#include <vector>

using plumb::AnswerDiff;
using plumb::DiffAgainstClosestGold;
using plumb::DiffToken;
using plumb::DiffTokens;
using Kind = plumb::DiffToken::Kind;
using plumb::metrics::NormalizationProfile;

namespace {

// "ok:ten", "miss:20", "extra:30" for readable comparisons.
std::vector<std::string> Show(const std::vector<DiffToken>& tokens) {
  std::vector<std::string> out;
  for (const DiffToken& t : tokens) {
    const char* kind = t.kind == Kind::kMatched   ? "ok:"
                       : t.kind == Kind::kMissing ? "miss:"
                                                  : "extra:";
    out.push_back(kind + t.text);
  }
  return out;
}

AnswerDiff Squad(const std::string& answer, const std::vector<std::string>& gold) {
  return DiffAgainstClosestGold(&answer, gold, NormalizationProfile::kSquad, "en");
}

}  // namespace

TEST_CASE("token diff: a normalized exact match is all matched", "[token_diff]") {
  // "The ten minutes before departure." -> the, '.' dropped -> ten minutes before departure
  const AnswerDiff d = Squad("The ten minutes before departure.", {"ten minutes before departure"});
  CHECK(d.gold_index == 0);
  CHECK(d.token_f1 == 1.0);
  CHECK(Show(d.tokens) ==
        std::vector<std::string>{"ok:ten", "ok:minutes", "ok:before", "ok:departure"});
}

TEST_CASE("token diff: one wrong number shows as extra then missing", "[token_diff]") {
  // Common prefix "at least", common suffix "minutes before departure"; 30 vs 20 in between.
  // common = 5 of 6 answer tokens and 5 of 6 gold tokens: P = R = 5/6, F1 = 5/6.
  const AnswerDiff d =
      Squad("at least 30 minutes before departure", {"at least 20 minutes before departure"});
  CHECK(d.token_f1 == Approx(5.0 / 6.0));
  CHECK(Show(d.tokens) == std::vector<std::string>{"ok:at", "ok:least", "extra:30", "miss:20",
                                                   "ok:minutes", "ok:before", "ok:departure"});
}

TEST_CASE("token diff: nothing in common lists the answer, then the gold", "[token_diff]") {
  // LCS is empty; at every tie an answer token is dropped first (the documented rule).
  CHECK(Show(DiffTokens({"40", "knots"}, {"12", "crew"})) ==
        std::vector<std::string>{"extra:40", "extra:knots", "miss:12", "miss:crew"});
}

TEST_CASE("token diff: reordered tokens count as matched, as token F1 counts them",
          "[token_diff]") {
  // LCS of [minutes ten] and [ten minutes] has length 1; F1 is 1 (bag of tokens), so the
  // crossing pair minutes/minutes is matched too and nothing is left missing or extra.
  const AnswerDiff d = Squad("minutes, ten", {"ten minutes"});
  CHECK(d.token_f1 == 1.0);
  CHECK(Show(d.tokens) == std::vector<std::string>{"ok:minutes", "ok:ten"});
}

TEST_CASE("token diff: repeated tokens are matched as a multiset", "[token_diff]") {
  // answer {ten:2, minutes:1}, gold {ten:1, minutes:2}: common = min(2,1) + min(1,2) = 2.
  const std::vector<DiffToken> d =
      DiffTokens({"ten", "ten", "minutes"}, {"ten", "minutes", "minutes"});
  CHECK(Show(d) == std::vector<std::string>{"ok:ten", "extra:ten", "miss:minutes", "ok:minutes"});
}

TEST_CASE("token diff: the closest gold answer is the one with the best F1", "[token_diff]") {
  // vs "fifty pounds": no common token, F1 0. vs "50 per car": common {50, per}: P = R = 2/3.
  const AnswerDiff d = Squad("50 per vehicle", {"fifty pounds", "50 per car"});
  CHECK(d.gold_index == 1);
  CHECK(d.token_f1 == Approx(2.0 / 3.0));
  CHECK(Show(d.tokens) == std::vector<std::string>{"ok:50", "ok:per", "extra:vehicle", "miss:car"});
}

TEST_CASE("token diff: equal F1 picks the first gold answer", "[token_diff]") {
  // "ten" vs "ten minutes" and vs "ten mins": P = 1, R = 1/2, F1 = 2/3 for both.
  const AnswerDiff d = Squad("ten", {"ten minutes", "ten mins"});
  CHECK(d.gold_index == 0);
  CHECK(d.token_f1 == Approx(2.0 / 3.0));
  CHECK(Show(d.tokens) == std::vector<std::string>{"ok:ten", "miss:minutes"});
}

TEST_CASE("token diff: gold answers with no tokens are skipped", "[token_diff]") {
  // "The" normalizes to nothing (an article), as the SQuAD evaluation drops such gold answers.
  const AnswerDiff d = Squad("ten", {"The", "ten"});
  CHECK(d.gold_index == 1);
  CHECK(d.token_f1 == 1.0);
}

TEST_CASE("token diff: an answer on an abstention case is all extra", "[token_diff]") {
  // "The fare is £5": '£' is not ASCII punctuation, so "£5" stays one token.
  const AnswerDiff d = Squad(
      "The fare is \xC2\xA3"
      "5",
      {});
  CHECK(d.gold_index == -1);
  CHECK(Show(d.tokens) == std::vector<std::string>{"extra:fare", "extra:is",
                                                   "extra:\xC2\xA3"
                                                   "5"});
}

TEST_CASE("token diff: an abstention leaves every gold token missing", "[token_diff]") {
  const std::vector<std::string> gold = {"ten minutes"};
  const AnswerDiff d = DiffAgainstClosestGold(nullptr, gold, NormalizationProfile::kSquad, "en");
  CHECK(d.gold_index == 0);
  CHECK(d.token_f1 == 0.0);
  CHECK(Show(d.tokens) == std::vector<std::string>{"miss:ten", "miss:minutes"});
}

TEST_CASE("token diff: the unicode profile splits ideographs into single tokens", "[token_diff]") {
  // SPEC §6.1: ideographs are single-character tokens. 十分前 (ten minutes before) vs 十分.
  const std::string answer = "\xE5\x8D\x81\xE5\x88\x86\xE5\x89\x8D";
  const std::vector<std::string> gold = {"\xE5\x8D\x81\xE5\x88\x86"};
  const AnswerDiff d = DiffAgainstClosestGold(&answer, gold, NormalizationProfile::kUnicode, "ja");
  CHECK(Show(d.tokens) ==
        std::vector<std::string>{"ok:\xE5\x8D\x81", "ok:\xE5\x88\x86", "extra:\xE5\x89\x8D"});
}

TEST_CASE("token diff: past the table bound the pairing alone decides matches", "[token_diff]") {
  // 3000 x 2000 tokens with nothing common at either end: 3001 * 2001 cells > kMaxDiffCells.
  std::vector<std::string> answer, gold;
  for (int i = 0; i < 3000; ++i) answer.push_back("w" + std::to_string(i));
  for (int i = 0; i < 1999; ++i) gold.push_back("v" + std::to_string(i));
  gold.push_back("w7");
  REQUIRE(3001u * 2001u > plumb::kMaxDiffCells);
  const std::vector<DiffToken> d = DiffTokens(answer, gold);
  size_t matched = 0, missing = 0, extra = 0;
  for (const DiffToken& t : d) {
    matched += t.kind == Kind::kMatched;
    missing += t.kind == Kind::kMissing;
    extra += t.kind == Kind::kExtra;
  }
  CHECK(matched == 1);  // w7, the one token the two lists share
  CHECK(extra == 2999);
  CHECK(missing == 1999);
  CHECK(d[7].kind == Kind::kMatched);
  CHECK(d[7].text == "w7");
}
