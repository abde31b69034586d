// The long-answer metrics (token_recall, covers_gold, knowledge_f1, cited_support) and the
// suite key correct_from, end to end through `plumb score`: the real executable on a small
// corpus, replies in full sentences as generative pipelines write them. Values are worked by
// hand from the definitions in metrics/long_answer_metrics.h (SQuAD normalization: Rajpurkar et
// al. 2016, evaluate-v2.0.py's normalize_answer, from memory).
#include <sys/stat.h>

#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>
#include <string>

#include "tests/support/plumb_process.h"

using namespace plumb_test;

namespace {

// docs/boarding.md: "Boarding closes ten minutes before departure. Loans renew once."
//                    0         1         2         3         4         5         6
//                    0123456789012345678901234567890123456789012345678901234567890123
// [0, 46) is the first sentence, [47, 63) the second.
std::string MakeCorpus(const std::string& dir) {
  ::mkdir((dir + "/docs").c_str(), 0755);
  WriteFile(dir + "/docs/boarding.md",
            "Boarding closes ten minutes before departure. Loans renew once.");
  return "corpus: docs\n";
}

const char kCases[] =
    "cases:\n"
    "  - {id: cutoff, question: 'When does boarding close?', answers: [ten minutes],\n"
    "     sources: [{doc: boarding.md, start: 0, end: 46}]}\n"
    "  - {id: renew, question: 'How often can a loan be renewed?', answers: [once],\n"
    "     sources: [{doc: boarding.md, start: 47, end: 63}]}\n"
    "  - {id: captain, question: 'Who is the captain?', answers: []}\n";

const char kReplies[] =
    // cutoff: [boarding, closes, ten, minutes, before, departure, sharp] against gold [ten,
    // minutes]: recall 2/2, covered; exact_match 0. knowledge: span [0, 46) is 6 tokens, all in
    // the answer: P = 6/7, R = 1, F1 = 2 * (6/7) / (13/7) = 12/13. Cites [0, 46): 6 of 7 answer
    // tokens are in it ("sharp" is not): cited_support 6/7.
    "{\"id\": \"cutoff\", \"answer\": \"Boarding closes ten minutes before departure, sharp.\","
    " \"citations\": [{\"doc\": \"boarding.md\", \"start\": 0, \"end\": 46}]}\n"
    // renew: [loan, can, be, renewed, once] vs gold [once]: recall 1, covered. knowledge [loans,
    // renew, once]: common {once} = 1, P = 1/5, R = 1/3, F1 = 2 * (1/15) / (8/15) = 0.25. Cites
    // nothing: cited_support undefined.
    "{\"id\": \"renew\", \"answer\": \"A loan can be renewed once.\"}\n"
    // captain: an abstention case answered with words: token_recall = covers_gold = 0, and no
    // gold spans, so no knowledge_f1.
    "{\"id\": \"captain\", \"answer\": \"The captain is on deck.\"}\n";

nlohmann::json ScoreRun(const std::string& dir, const std::string& extra, Result* result) {
  WriteFile(dir + "/s.yaml", "plumb: 1\nname: long\n" + MakeCorpus(dir) + extra + kCases);
  WriteFile(dir + "/pred.jsonl", kReplies);
  *result =
      Plumb({"score", dir + "/s.yaml", dir + "/pred.jsonl", "--out", dir + "/out", "--json"}, dir);
  INFO(result->err);
  REQUIRE(result->out.size() > 0);
  return nlohmann::json::parse(result->out);
}

}  // namespace

TEST_CASE("long-answer metrics per case and averaged, with correct as before by default") {
  const std::string dir = MakeTempDir();
  Result r;
  const nlohmann::json run = ScoreRun(dir, "", &r);
  const nlohmann::json& m = run["aggregates"]["metrics"];
  // token_recall: (1 + 1 + 0) / 3; covers_gold the same; knowledge_f1 (12/13 + 0.25) / 2 over
  // the two cases with gold spans; cited_support 6/7 on the one case that cites.
  CHECK(m["token_recall"]["mean"] == Approx(2.0 / 3));
  CHECK(m["covers_gold"]["mean"] == Approx(2.0 / 3));
  CHECK(m["knowledge_f1"]["n"] == 2);
  CHECK(m["knowledge_f1"]["mean"] == Approx((12.0 / 13 + 0.25) / 2));
  CHECK(m["cited_support"]["n"] == 1);
  CHECK(m["cited_support"]["mean"] == Approx(6.0 / 7));
  // The default correct_from is exact_match, pattern_match, number_match: nothing is exactly
  // right, so correct stays 0 and the run breaks no floor (it has none) but passes no case.
  CHECK(m["correct"]["mean"] == 0.0);
  CHECK(run["suite"]["correct_from"] ==
        nlohmann::json({"exact_match", "pattern_match", "number_match"}));
  const auto journal = ReadJournal(dir + "/out/cases.jsonl");
  REQUIRE(journal.size() == 3);
  CHECK(journal[0]["scores"]["cited_support"] == Approx(6.0 / 7));
  CHECK(journal[1]["scores"].count("cited_support") == 0);
  CHECK(journal[2]["scores"].count("knowledge_f1") == 0);
}

TEST_CASE("correct_from makes correct the best of the listed metrics") {
  const std::string dir = MakeTempDir();
  Result r;
  const nlohmann::json run = ScoreRun(dir, "correct_from: [covers_gold, number_match]\n", &r);
  // cutoff and renew are covered (1), captain is not (0): correct 2/3, two cases pass.
  CHECK(run["aggregates"]["metrics"]["correct"]["mean"] == Approx(2.0 / 3));
  CHECK(run["aggregates"]["passed"] == 2);
  CHECK(run["suite"]["correct_from"] == nlohmann::json({"covers_gold", "number_match"}));
}

TEST_CASE("correct_from refuses itself, unknown ids and run-level metrics at their position") {
  const std::string dir = MakeTempDir();
  MakeCorpus(dir);
  WriteFile(dir + "/s.yaml",
            "plumb: 1\nname: long\ncorpus: docs\n"
            "correct_from: [correct, covers_gld, pass_rate]\n" +
                std::string(kCases));
  const Result r = Plumb({"check", dir + "/s.yaml"}, dir);
  CHECK(r.code == 2);
  CHECK(r.err.find("s.yaml:4:16: error: 'correct' cannot be made from itself") !=
        std::string::npos);
  CHECK(r.err.find("s.yaml:4:25: error: unknown metric id 'covers_gld' in 'correct_from'; did "
                   "you mean 'covers_gold'?") != std::string::npos);
  CHECK(r.err.find("s.yaml:4:37: error: 'pass_rate' is a run-level metric") != std::string::npos);
}
