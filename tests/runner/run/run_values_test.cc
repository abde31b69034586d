// RunValues (runner/run/run_values.h): the streamed reading of a run directory gives exactly the
// values that folding the fully loaded run gives, and a run it cannot take quickly (a torn last
// line, a corrupt line, no run.json) is read by LoadRun, with LoadRun's warnings and sentences.
#include "runner/run/run_values.h"

#include <catch2/catch.hpp>
#include <cmath>
#include <string>

#include "tests/support/temp_dir.h"

namespace {

// Three listed cases (c, a, b), tags with a repeat and a number among them, a second gold_hash
// member (the last wins, as in nlohmann), and a case whose gold is not an object.
const char* kRunJson = R"({
  "plumb_run": 1,
  "suite": {"name": "s", "hash": "h"},
  "pipeline": {"name": "p", "config": {"k": [1, 2]}},
  "cases": {
    "c": {"gold_hash": "x", "tags": ["zeta", "alpha", "zeta", 3], "gold_hash": "g-c"},
    "a": {"question": "q\u00e9 \"quoted\"", "gold_hash": "g-a", "tags": []},
    "b": 7
  },
  "repeat": 2
})";

// Repeats out of order, an errored repeat (its latency left out), a record of a case run.json
// does not list, a reply whose answer holds braces and escapes, scores in another order.
const char* kJournal =
    R"({"id":"a","repeat":1,"request":{"q":"{["},"latency_ms":20,"answer":"x \"}\\","error":null,"scores":{"token_f1":0.5,"correct":1.0},"pass":true})"
    "\n"
    R"({"id":"a","repeat":0,"latency_ms":1e1,"answer":null,"error":null,"scores":{"correct":0,"token_f1":0.25},"pass":false})"
    "\n"
    R"({"id":"c","repeat":0,"latency_ms":5000,"error":{"reason":"timeout","stdout":""},"scores":{"correct":0},"pass":false})"
    "\n"
    R"({"id":"zz","repeat":0,"latency_ms":1,"answer":"y","error":null,"scores":{"mrr":1},"pass":true})"
    "\n";

void RequireSameValues(const plumb::RunValues& got, const plumb::RunValues& want) {
  REQUIRE(got.rows() == want.rows());
  CHECK(got.record == want.record);
  CHECK(got.warnings == want.warnings);
  for (uint32_t r = 0; r < want.rows(); ++r) {
    // Rows may come in another order (file order against nlohmann's sorted keys): match by id.
    uint32_t g = 0;
    while (g < got.rows() && got.ids[g] != want.ids[r]) ++g;
    REQUIRE(g < got.rows());
    INFO("case " << want.ids[r]);
    CHECK(got.gold_hashes[g] == want.gold_hashes[r]);
    std::vector<std::string> got_tags, want_tags;
    for (uint32_t k = got.tag_begin[g]; k < got.tag_begin[g + 1]; ++k) {
      got_tags.push_back(got.tag_names[got.tag_ids[k]]);
    }
    for (uint32_t k = want.tag_begin[r]; k < want.tag_begin[r + 1]; ++k) {
      want_tags.push_back(want.tag_names[want.tag_ids[k]]);
    }
    CHECK(got_tags == want_tags);
    CHECK(got.repeats[g] == want.repeats[r]);
    CHECK(got.passes[g] == want.passes[r]);
    CHECK(got.latency_sum[g] == want.latency_sum[r]);
    CHECK(got.latency_count[g] == want.latency_count[r]);
    for (size_t m = 0; m < want.metrics.size(); ++m) {
      size_t k = 0;
      while (k < got.metrics.size() && got.metrics[k] != want.metrics[m]) ++k;
      REQUIRE(k < got.metrics.size());
      const double a = got.Value(g, k), b = want.Value(r, m);
      CHECK(((std::isnan(a) && std::isnan(b)) || a == b));
    }
  }
  CHECK(got.metrics.size() == want.metrics.size());
}

}  // namespace

TEST_CASE("a run directory streamed gives the values of the run loaded in full") {
  plumb_test::TempDir dir;
  dir.Write("run.json", kRunJson);
  dir.Write("cases.jsonl", kJournal);
  plumb::RunValues quick, full;
  plumb::LoadedRun run;
  std::string error;
  REQUIRE(plumb::LoadRunValues(dir.path(), &quick, &error));
  CHECK(quick.loaded == nullptr);  // read quickly, not through LoadRun
  REQUIRE(plumb::LoadRun(dir.path(), &run, &error));
  plumb::RunValuesOf(run, &full);
  RequireSameValues(quick, full);

  // The values themselves, worked by hand from the files above.
  uint32_t a = 0;
  while (quick.ids[a] != "a") ++a;
  size_t correct = 0, f1 = 0;
  while (quick.metrics[correct] != "correct") ++correct;
  while (quick.metrics[f1] != "token_f1") ++f1;
  CHECK(quick.Value(a, correct) == 0.5);  // (1 + 0) / 2 repeats
  CHECK(quick.Value(a, f1) == 0.375);     // (0.5 + 0.25) / 2
  CHECK(quick.latency_sum[a] == 30);      // 20 + 1e1
  CHECK(quick.passes[a] == 1);
  CHECK(quick.metrics.size() == 2);  // mrr only on the unlisted case zz
  uint32_t c = 0;
  while (quick.ids[c] != "c") ++c;
  CHECK(quick.gold_hashes[c] == "g-c");
  CHECK(quick.latency_count[c] == 0);  // its one repeat errored
  CHECK(quick.record["pipeline"]["config"]["k"][1] == 2);
  CHECK_FALSE(quick.record.contains("cases"));

  // The lowest repeat's record, read back from the journal by its offset.
  plumb::CaseRecord first;
  REQUIRE(quick.FirstRecord(a, &first, &error));
  CHECK(first.repeat == 0);
  CHECK_FALSE(first.parsed.answer.has_value());
  REQUIRE(quick.FirstRecord(c, &first, &error));
  CHECK(first.error == "timeout");

  // The lowest failed repeat (classified as LoadRun classifies a journal without causes) and
  // the gold, read back from the files, equal the loaded run's.
  uint32_t full_a = 0;
  while (full.ids[full_a] != "a") ++full_a;
  plumb::CaseRecord quick_failed, full_failed;
  REQUIRE(quick.HasFailedRecord(a));
  REQUIRE(quick.FirstFailedRecord(a, &quick_failed, &error));
  REQUIRE(full.FirstFailedRecord(full_a, &full_failed, &error));
  CHECK(quick_failed.repeat == 0);
  CHECK(quick_failed.scores.cause == full_failed.scores.cause);
  CHECK(quick_failed.scores.cause != plumb::FailureCause::kNone);
  nlohmann::json quick_gold, full_gold;
  REQUIRE(quick.Gold(a, &quick_gold, &error));
  REQUIRE(full.Gold(full_a, &full_gold, &error));
  CHECK(quick_gold == full_gold);
  CHECK(quick_gold["question"] == "q\u00e9 \"quoted\"");
  uint32_t b = 0;
  while (quick.ids[b] != "b") ++b;
  REQUIRE(quick.Gold(b, &quick_gold, &error));
  CHECK(quick_gold == 7);
}

TEST_CASE("a torn last journal line is read by LoadRun, with its warning") {
  plumb_test::TempDir dir;
  dir.Write("run.json", kRunJson);
  dir.Write("cases.jsonl", std::string(kJournal) + R"({"id":"b","repeat":0,"lat)");
  plumb::RunValues quick, full;
  plumb::LoadedRun run;
  std::string error;
  REQUIRE(plumb::LoadRunValues(dir.path(), &quick, &error));
  CHECK(quick.loaded != nullptr);
  REQUIRE(plumb::LoadRun(dir.path(), &run, &error));
  plumb::RunValuesOf(run, &full);
  REQUIRE(quick.warnings.size() == 1);
  RequireSameValues(quick, full);
}

TEST_CASE("a corrupt journal line or a missing run.json gets LoadRun's sentence") {
  plumb_test::TempDir dir;
  dir.Write("cases.jsonl", std::string("{\"id\": nope}\n") + kJournal);
  plumb::RunValues quick;
  plumb::LoadedRun run;
  std::string quick_error, full_error;
  CHECK_FALSE(plumb::LoadRunValues(dir.path(), &quick, &quick_error));
  CHECK_FALSE(plumb::LoadRun(dir.path(), &run, &full_error));
  CHECK(quick_error == full_error);
  CHECK(quick_error.find("run.json") != std::string::npos);

  dir.Write("run.json", kRunJson);
  CHECK_FALSE(plumb::LoadRunValues(dir.path(), &quick, &quick_error));
  CHECK_FALSE(plumb::LoadRun(dir.path(), &run, &full_error));
  CHECK(quick_error == full_error);
  CHECK(quick_error.find("corrupt") != std::string::npos);
}
