// token_recall, covers_gold, knowledge_f1 and cited_support (metrics/long_answer_metrics.h),
// each checked on examples worked by hand from its definition.
// Sources:
//  - token_recall is the recall half of SQuAD's token F1 (Rajpurkar et al. 2016, "SQuAD:
//    100,000+ Questions for Machine Comprehension of Text", §6; evaluate-v2.0.py's compute_f1:
//    recall = num_same / len(gold_toks), num_same from Counter(gold) & Counter(pred); from
//    memory). Scoring verbose answers by recall alone is common practice.
//  - knowledge_f1 is the "Knowledge F1" of Shuster, Poff, Chen, Kiela, Weston (2021),
//    "Retrieval Augmentation Reduces Hallucination in Conversation", §4 (from memory): the
//    unigram F1 of the model's response against the gold knowledge passage, computed like
//    SQuAD's F1 (so TokenF1 here).
//  - covers_gold and cited_support are this project's definitions (README, "Metrics for long
//    answers"); their values are worked by hand.
// tests/reference/long_answer_reference.py checks all four against a stdlib-only Python
// transcription on thousands of generated cases.

#include "metrics/long_answer_metrics.h"

#include <catch2/catch.hpp>
#include <optional>
#include <string>
#include <vector>

using plumb::metrics::CitedSupport;
using plumb::metrics::ContainsRun;
using plumb::metrics::JoinedTokens;
using plumb::metrics::KnowledgeF1;
using plumb::metrics::NormalizationProfile;
using plumb::metrics::NormalizeGold;
using plumb::metrics::NormalizeTokens;
using plumb::metrics::ScoreLongAnswer;
using plumb::metrics::TokenRecall;
using Tokens = std::vector<std::string>;

namespace {

Tokens Squad(const std::string& text) {
  return NormalizeTokens(text, NormalizationProfile::kSquad, "en");
}

plumb::metrics::LongAnswerScores Long(const std::optional<std::string>& answer,
                                      const std::vector<std::string>& gold) {
  return ScoreLongAnswer(answer ? Squad(*answer) : Tokens(),
                         NormalizeGold(gold, NormalizationProfile::kSquad, "en"));
}

}  // namespace

TEST_CASE("token_recall of a sentence that contains the gold answer", "[long_answer]") {
  // The issue's own case: "...a loan can be renewed once..." against the gold "once".
  // Gold [once] is found in the answer: recall 1/1 = 1, though token F1 is low
  // (precision 1/7 -> F1 = 2 * (1/7) * 1 / (1/7 + 1) = 0.25).
  const auto scores = Long(std::string("A loan can be renewed once, at the desk."), {"once"});
  CHECK(scores.token_recall == 1.0);
  CHECK(scores.covers_gold == 1.0);
  // "Boarding closes ten minutes before departure." -> [boarding, closes, ten, minutes,
  // before, departure]; gold "10 minutes" -> [10, minutes]: 1 of 2 found, 0.5, not covered;
  // gold "ten minutes" -> [ten, minutes]: 2 of 2 and a contiguous run. The max is 1.
  const auto two =
      Long(std::string("Boarding closes ten minutes before departure."), {"10 minutes"});
  CHECK(two.token_recall == 0.5);
  CHECK(two.covers_gold == 0.0);
  const auto both = Long(std::string("Boarding closes ten minutes before departure."),
                         {"10 minutes", "ten minutes"});
  CHECK(both.token_recall == 1.0);
  CHECK(both.covers_gold == 1.0);
}

TEST_CASE("token_recall counts gold tokens as a multiset", "[long_answer]") {
  // Gold [deck, deck, 3] against answer [deck, 3]: Counter(gold) & Counter(answer) =
  // {deck: 1, 3: 1}, 2 of 3 gold tokens: 2/3.
  CHECK(TokenRecall({"deck", "3"}, {"deck", "deck", "3"}) == Approx(2.0 / 3.0));
  // Repeating a gold token in the answer does not count it twice: [deck, deck] vs [deck, 3].
  CHECK(TokenRecall({"deck", "deck"}, {"deck", "3"}) == 0.5);
  CHECK(TokenRecall({"a"}, {}) == 0.0);
}

TEST_CASE("covers_gold needs the gold tokens in order and adjacent", "[long_answer]") {
  CHECK(ContainsRun({"closes", "ten", "minutes", "before"}, {"ten", "minutes"}));
  CHECK_FALSE(ContainsRun({"minutes", "ten"}, {"ten", "minutes"}));
  CHECK_FALSE(ContainsRun({"ten", "long", "minutes"}, {"ten", "minutes"}));
  CHECK_FALSE(ContainsRun({"ten"}, {"ten", "minutes"}));
  CHECK_FALSE(ContainsRun({"ten"}, {}));
  // Articles and punctuation go before comparing (squad profile): "the 7:40 ferry" is [740,
  // ferry], and "The 7:40 ferry leaves." contains it.
  CHECK(Long(std::string("The 7:40 ferry leaves."), {"the 7:40 ferry"}).covers_gold == 1.0);
}

TEST_CASE("abstention cases score as exact_match does", "[long_answer]") {
  // answers: [] and the pipeline abstained (or answered nothing): 1; any words: 0.
  CHECK(Long(std::nullopt, {}).token_recall == 1.0);
  CHECK(Long(std::nullopt, {}).covers_gold == 1.0);
  CHECK(Long(std::string("..."), {}).covers_gold == 1.0);
  CHECK(Long(std::string("The handbook does not say."), {}).token_recall == 0.0);
  CHECK(Long(std::string("The handbook does not say."), {}).covers_gold == 0.0);
  // A question with a gold answer, answered by abstaining: 0.
  CHECK(Long(std::nullopt, {"once"}).token_recall == 0.0);
  CHECK(Long(std::nullopt, {"once"}).covers_gold == 0.0);
}

TEST_CASE("knowledge_f1 against the gold spans' text", "[long_answer]") {
  // Gold span text "Boarding closes ten minutes before departure." -> 6 tokens
  // [boarding, closes, ten, minutes, before, departure]. Answer "Ten minutes before departure."
  // -> 4 tokens, all in the span: precision 4/4 = 1, recall 4/6, F1 = 2 * (2/3) / (5/3) = 0.8.
  const Tokens knowledge = JoinedTokens({"Boarding closes ten minutes before departure."},
                                        NormalizationProfile::kSquad, "en");
  REQUIRE(knowledge.size() == 6);
  CHECK(*KnowledgeF1(Squad("Ten minutes before departure."), knowledge) == Approx(0.8));
  // Two spans are joined: "Gates open at 7." + "Boarding closes at 7:50." -> [gates, open, at,
  // 7, boarding, closes, at, 750] (8 tokens). Answer "Gates open at 7." -> [gates, open, at, 7]:
  // common 4, precision 1, recall 4/8, F1 = 2 * 0.5 / 1.5 = 2/3.
  const Tokens two = JoinedTokens({"Gates open at 7.", "Boarding closes at 7:50."},
                                  NormalizationProfile::kSquad, "en");
  REQUIRE(two.size() == 8);
  CHECK(*KnowledgeF1(Squad("Gates open at 7."), two) == Approx(2.0 / 3.0));
  // An abstention (no tokens) against knowledge: 0. No knowledge: undefined.
  CHECK(*KnowledgeF1({}, knowledge) == 0.0);
  CHECK_FALSE(KnowledgeF1(Squad("anything"), {}).has_value());
}

TEST_CASE("cited_support: answer tokens found in the cited text", "[long_answer]") {
  // Answer "Boarding closes ten minutes early." -> [boarding, closes, ten, minutes, early];
  // cited span "Boarding closes ten minutes before departure." holds 4 of the 5: 0.8.
  const Tokens cited = JoinedTokens({"Boarding closes ten minutes before departure."},
                                    NormalizationProfile::kSquad, "en");
  CHECK(*CitedSupport(Squad("Boarding closes ten minutes early."), cited) == Approx(0.8));
  // Each occurrence counts: [ten, ten, goats] -> 2 of 3 found.
  CHECK(*CitedSupport({"ten", "ten", "goats"}, cited) == Approx(2.0 / 3.0));
  // Undefined without a token on either side (no cited text, or an empty answer).
  CHECK_FALSE(CitedSupport({"ten"}, {}).has_value());
  CHECK_FALSE(CitedSupport({}, cited).has_value());
}
