// Warm-up (issue 21 item 1): a pipeline's start-up is reported as such and kept out of case
// latency. The real plumb runs paced-pipeline, which sleeps 2 s when it starts (a cache being
// built) and then answers each request after 20 ms. With `ready: line` each worker's 2 s goes
// to its warmup_ms; without a ready signal each worker's first call goes to first_call_ms; either
// way the p95 no longer depends on --jobs (before, each worker's first case carried 2 s, and
// with --jobs 4 that was 4 of 16 cases: the p95). A restarted worker's warm-up is recorded too,
// and a worker that never writes its ready line fails its cases with the reason.
//
// Tolerances: the pipeline's start-up is a sleep of 2000 ms, so every warm-up is at least that;
// a case's latency is its 20 ms sleep plus scheduling, so a p95 below 1000 ms (half the start-up)
// shows the start-up is not in it, and p95s within 500 ms of each other are "the same".

#include <algorithm>
#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "tests/support/plumb_process.h"

using nlohmann::json;

namespace {

// `cases` cases; those in `hang` ask a question paced-pipeline never answers. `arguments` are
// added to the pipeline's command, `keys` to its config.
std::string Suite(const std::string& dir, const std::string& arguments, const std::string& keys,
                  int cases, const std::vector<int>& hang = {}) {
  std::string suite = "plumb: 1\nname: warm\nmax_error_rate: 0.5\npipelines:\n  p: {command: [" +
                      plumb_test::kFixtures + "paced-pipeline, --startup-ms, \"2000\"" + arguments +
                      "], cwd: " + dir + keys + "}\ncases:\n";
  for (int i = 0; i < cases; ++i) {
    const bool hangs = std::find(hang.begin(), hang.end(), i) != hang.end();
    const std::string q = (hangs ? "please hang " : "question ") + std::to_string(i);
    suite +=
        "  - {id: c" + std::to_string(i) + ", question: \"" + q + "\", answers: [\"" + q + "\"]}\n";
  }
  return suite;
}

struct Run {
  plumb_test::Result result;
  json record;                // run.json
  std::vector<json> journal;  // cases.jsonl
};

Run RunSuite(const std::string& dir, const std::string& suite, int jobs) {
  plumb_test::WriteFile(dir + "/suite.yaml", suite);
  Run run;
  run.result = plumb_test::Plumb({"run", dir + "/suite.yaml", "--out", dir + "/out", "--jobs",
                                  std::to_string(jobs), "--markdown", dir + "/summary.md"},
                                 dir);
  const std::string record = plumb_test::ReadFile(dir + "/out/run.json");
  if (!record.empty()) run.record = json::parse(record);
  run.journal = plumb_test::ReadJournal(dir + "/out/cases.jsonl");
  return run;
}

}  // namespace

TEST_CASE("with a ready line, start-up is warm-up and the p95 does not depend on --jobs") {
  std::vector<double> p95s;
  for (int jobs : {1, 2, 4}) {
    INFO("--jobs " << jobs);
    const std::string dir = plumb_test::MakeTempDir();
    const Run run =
        RunSuite(dir, Suite(dir, ", --ready, --reply-ms, \"20\"", ", ready: line", 16), jobs);
    INFO(run.result.out << run.result.err);
    REQUIRE(run.result.code == 0);
    const json& warmup = run.record["aggregates"]["warmup"];
    CHECK(warmup["signal"] == "ready_line");
    CHECK(warmup["n"] == jobs);  // one per worker
    CHECK(warmup["restarts"] == 0);
    REQUIRE(warmup["workers"].size() == static_cast<size_t>(jobs));
    for (const json& worker : warmup["workers"]) {
      CHECK(worker["signal"] == "ready_line");
      CHECK(worker["warmup_ms"].get<double>() >= 2000);
      // The ready line's other members are kept.
      CHECK(worker["ready"] == json{{"chunks_indexed", 42}});
    }
    CHECK(warmup["max_ms"].get<double>() >= 2000);
    const json& latency = run.record["aggregates"]["latency_ms"];
    CHECK(latency["n"] == 16);  // every case is a case latency: the start-up was before them
    p95s.push_back(latency["p95"].get<double>());
    CHECK(p95s.back() < 1000);
    for (const json& record : run.journal) CHECK_FALSE(record.contains("first_call"));
    CHECK(run.result.out.find("warm-up              " + std::to_string(jobs) + " worker") !=
          std::string::npos);
    CHECK(run.result.out.find("ready (ready line): mean ") != std::string::npos);
  }
  CHECK(*std::max_element(p95s.begin(), p95s.end()) - *std::min_element(p95s.begin(), p95s.end()) <
        500);
}

TEST_CASE("without a ready signal each worker's first call is measured apart") {
  const std::string dir = plumb_test::MakeTempDir();
  const Run run = RunSuite(dir, Suite(dir, ", --reply-ms, \"20\"", "", 16), 4);
  INFO(run.result.out << run.result.err);
  REQUIRE(run.result.code == 0);
  const json& warmup = run.record["aggregates"]["warmup"];
  CHECK(warmup["signal"] == "first_call");
  CHECK(warmup["n"] == 4);
  for (const json& worker : warmup["workers"]) {
    CHECK(worker["signal"] == "first_call");
    CHECK(worker["first_call_ms"].get<double>() >= 2000);  // start-up included
  }
  // Four journal records, one per worker, are first calls; they are scored but stay out of the
  // latency distribution.
  int first_calls = 0;
  for (const json& record : run.journal) {
    if (!record.value("first_call", false)) continue;
    ++first_calls;
    CHECK(record["latency_ms"].get<double>() >= 2000);
    CHECK(record["scores"]["exact_match"] == 1.0);
  }
  CHECK(first_calls == 4);
  const json& latency = run.record["aggregates"]["latency_ms"];
  CHECK(latency["n"] == 12);
  CHECK(latency["p95"].get<double>() < 1000);
  CHECK(run.result.out.find("4 first calls (start-up included, kept out of the latency)") !=
        std::string::npos);
}

TEST_CASE("a restarted worker's warm-up is recorded") {
  // One worker; case c1 hangs until its 1 s timeout, so the worker is replaced for c2 and warms
  // up again.
  const std::string dir = plumb_test::MakeTempDir();
  const Run run = RunSuite(dir, Suite(dir, ", --ready", ", ready: line, timeout: 1s", 3, {1}), 1);
  INFO(run.result.out << run.result.err);
  const json& workers = run.record["aggregates"]["warmup"]["workers"];
  REQUIRE(workers.size() == 2);
  CHECK(workers[0]["restart"] == false);
  CHECK(workers[1]["restart"] == true);
  CHECK(workers[1]["warmup_ms"].get<double>() >= 2000);
  CHECK(run.record["aggregates"]["warmup"]["restarts"] == 1);
  CHECK(run.result.out.find(", 1 restart") != std::string::npos);
}

TEST_CASE("a worker that writes no ready line within startup_timeout fails its cases") {
  // `ready: line` for a pipeline that never writes one: after startup_timeout the first case
  // fails with the reason, and the others fail at once with the same (no second wait).
  const std::string dir = plumb_test::MakeTempDir();
  const Run run = RunSuite(dir, Suite(dir, "", ", ready: line, startup_timeout: 500ms", 3), 1);
  INFO(run.result.out << run.result.err);
  CHECK(run.result.code == 3);  // every case errored
  REQUIRE(run.journal.size() == 3);
  for (const json& record : run.journal) {
    CHECK(record["error"]["reason"] ==
          "no ready line within the startup_timeout of 500ms (ready: line); raise "
          "startup_timeout if its start-up takes longer");
  }
  CHECK(run.record["aggregates"]["warmup"]["n"] == 0);
}
