// exact_match, token_f1 and the abstention rules of SPEC §6.2 against the official SQuAD
// evaluation. From memory, evaluate-v2.0.py (Rajpurkar, Jia, Liang 2018, "Know What You Don't
// Know: Unanswerable Questions for SQuAD") defines
//   compute_exact(gold, pred) = normalize_answer(gold) == normalize_answer(pred)
//   compute_f1: common = Counter(gold_toks) & Counter(pred_toks); if either list is empty,
//     int(gold_toks == pred_toks); if no common token, 0; else precision = same / len(pred),
//     recall = same / len(gold), f1 = 2 * precision * recall / (precision + recall)
//   get_raw_scores: gold answers that normalize to "" are dropped, [''] if none is left (an
//     unanswerable question), and each score is the max over the gold answers.
// The token-overlap F1 itself is from Rajpurkar et al. (2016), "SQuAD: 100,000+ Questions for
// Machine Comprehension of Text", §6 (from memory). Values below are worked by hand.

#include "metrics/answer_metrics.h"

#include <catch2/catch.hpp>
#include <optional>
#include <string>
#include <vector>

using plumb::metrics::NormalizationProfile;
using plumb::metrics::NormalizedGold;
using plumb::metrics::NormalizeGold;
using plumb::metrics::ScoreAnswer;
using plumb::metrics::TokenF1;
using Tokens = std::vector<std::string>;

namespace {

plumb::metrics::AnswerScores Squad(const std::optional<std::string>& answer,
                                   const std::vector<std::string>& gold) {
  return ScoreAnswer(answer, NormalizeGold(gold, NormalizationProfile::kSquad, "en"),
                     NormalizationProfile::kSquad, "en");
}

}  // namespace

TEST_CASE("Token F1 worked by hand", "[answer_metrics]") {
  // "the cat sat" -> [cat, sat]; "a cat sat down" -> [cat, sat, down]. Common: 2.
  // precision = 2/2 = 1, recall = 2/3, F1 = 2 * 1 * (2/3) / (1 + 2/3) = (4/3) / (5/3) = 0.8.
  CHECK(TokenF1({"cat", "sat"}, {"cat", "sat", "down"}) == Approx(0.8));
  const auto scores = Squad(std::string("the cat sat"), {"a cat sat down"});
  CHECK(scores.token_f1 == Approx(0.8));
  CHECK(scores.exact_match == 0);
  // Multiset counts: [cat, cat, cat] vs [cat, sat] share min(3, 1) = 1 token.
  // precision = 1/3, recall = 1/2, F1 = 2 * (1/6) / (5/6) = 0.4.
  CHECK(TokenF1({"cat", "cat", "cat"}, {"cat", "sat"}) == Approx(0.4));
  // Order does not matter; no common token gives 0.
  CHECK(TokenF1({"sat", "cat"}, {"cat", "sat"}) == 1.0);
  CHECK(TokenF1({"dog"}, {"cat"}) == 0.0);
}

TEST_CASE("Token F1 of empty token lists follows the SQuAD v2.0 rule", "[answer_metrics]") {
  CHECK(TokenF1({}, {}) == 1.0);
  CHECK(TokenF1({}, {"cat"}) == 0.0);
  CHECK(TokenF1({"cat"}, {}) == 0.0);
}

TEST_CASE("Exact match and F1 take the max over gold answers", "[answer_metrics]") {
  // "Ten minutes." -> [ten, minutes], equal to the first gold answer.
  auto scores = Squad(std::string("Ten minutes."), {"ten minutes", "10 minutes"});
  CHECK(scores.exact_match == 1);
  CHECK(scores.token_f1 == 1);
  // "About 10 minutes before departure" -> [about, 10, minutes, before, departure].
  // vs [10, minutes]: 2 common, p = 2/5, r = 1, F1 = 0.8 / 1.4 = 4/7.
  // vs [ten, minutes]: 1 common, p = 1/5, r = 1/2, F1 = 0.2 / 0.7 = 2/7. Max: 4/7.
  scores = Squad(std::string("About 10 minutes before departure"), {"ten minutes", "10 minutes"});
  CHECK(scores.exact_match == 0);
  CHECK(scores.token_f1 == Approx(4.0 / 7.0));
}

TEST_CASE("Abstention cases score 1 only when the pipeline abstains", "[answer_metrics]") {
  const std::vector<std::string> none;
  CHECK(Squad(std::nullopt, none).exact_match == 1);
  CHECK(Squad(std::nullopt, none).token_f1 == 1);
  // An answer that normalizes to no tokens counts as abstaining (SQuAD scores "" vs [""] as 1).
  CHECK(Squad(std::string(""), none).token_f1 == 1);
  CHECK(Squad(std::string("The."), none).exact_match == 1);
  CHECK(Squad(std::string("Ten minutes"), none).exact_match == 0);
  CHECK(Squad(std::string("Ten minutes"), none).token_f1 == 0);
  // "The." normalizes to no tokens ("the" is an article, "." punctuation): an abstention.
  CHECK(Squad(std::nullopt, none).abstained);
  CHECK(Squad(std::string("The."), none).abstained);
  CHECK_FALSE(Squad(std::string("Ten minutes"), none).abstained);
}

TEST_CASE("Abstaining on an answerable case scores 0", "[answer_metrics]") {
  CHECK(Squad(std::nullopt, {"ten minutes"}).exact_match == 0);
  CHECK(Squad(std::nullopt, {"ten minutes"}).token_f1 == 0);
  CHECK(Squad(std::string("?"), {"ten minutes"}).token_f1 == 0);
}

TEST_CASE("Gold answers that normalize to nothing are dropped, as get_raw_scores does",
          "[answer_metrics]") {
  const NormalizedGold gold = NormalizeGold({"The", "Cat!"}, NormalizationProfile::kSquad, "en");
  REQUIRE(gold.answers.size() == 1);
  CHECK(gold.answers[0] == Tokens{"cat"});
  // With only "!!!" left nothing remains: the case becomes an abstention case ([''] in SQuAD).
  CHECK(NormalizeGold({"!!!"}, NormalizationProfile::kSquad, "en").answers.empty());
  CHECK(Squad(std::nullopt, {"!!!"}).token_f1 == 1);
  CHECK(Squad(std::string("cat"), {"!!!"}).token_f1 == 0);
}

TEST_CASE("ScoreAnswer on pure-ASCII answers matches TokenF1 on the token lists",
          "[answer_metrics]") {
  // compute_f1 of evaluate-v2.0.py by hand: pred "ferry closes ten" vs gold "ferry boarding
  // closes ten minutes": num_same 3, precision 3/3, recall 3/5, F1 = 2 * 1 * 0.6 / 1.6, which
  // in doubles is 0.7499999999999999 (/usr/bin/python3: p=1.0*3/3; r=1.0*3/5; (2*p*r)/(p+r)).
  const NormalizedGold gold = NormalizeGold({"The ferry boarding closes ten minutes.", "ten"},
                                            NormalizationProfile::kSquad, "en");
  const auto scores =
      ScoreAnswer(std::string("Ferry closes TEN"), gold, NormalizationProfile::kSquad, "en");
  CHECK(scores.exact_match == 0);
  CHECK(scores.token_f1 ==
        TokenF1({"ferry", "closes", "ten"}, {"ferry", "boarding", "closes", "ten", "minutes"}));
  CHECK(scores.token_f1 == 0.7499999999999999);
  // Counter intersection: the repeated "ten" counts once against the one gold "ten";
  // precision 1/2, recall 1/1, F1 = 2 * 0.5 * 1 / 1.5.
  const auto repeated =
      ScoreAnswer(std::string("ten ten"), gold, NormalizationProfile::kSquad, "en");
  CHECK(repeated.token_f1 == (2 * 0.5 * 1.0) / (0.5 + 1.0));
  CHECK(ScoreAnswer(std::string("a TEN!"), gold, NormalizationProfile::kSquad, "en").exact_match ==
        1);
}
