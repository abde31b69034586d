// Gating latency against a baseline (issue 21 item 2): `--gate latency_p95` fails the gate when
// the 95% interval of the candidate's p95 ratio lies wholly above 1 + --max-slowdown. The real
// plumb runs paced-pipeline (which replies after a fixed sleep) at 20 ms and at 60 ms per reply:
// three times slower is caught, the same speed is not, and a max-slowdown of 5 lets the slower
// run through.

#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>
#include <string>

#include "tests/support/plumb_process.h"

using nlohmann::json;

namespace {

std::string Suite(int reply_ms) {
  std::string suite = "plumb: 1\nname: paced\npipelines:\n  p:\n    command: [" +
                      plumb_test::kFixtures + "paced-pipeline, --ready, --reply-ms, \"" +
                      std::to_string(reply_ms) + "\"]\n    ready: line\n    jobs: 4\ncases:\n";
  for (int i = 0; i < 24; ++i) {
    suite += "  - {id: c" + std::to_string(i) + ", question: \"question " + std::to_string(i) +
             "\", answers: [\"question " + std::to_string(i) + "\"]}\n";
  }
  return suite;
}

std::string RunAt(const std::string& dir, const std::string& name, int reply_ms) {
  plumb_test::WriteFile(dir + "/" + name + ".yaml", Suite(reply_ms));
  const plumb_test::Result run =
      plumb_test::Plumb({"run", dir + "/" + name + ".yaml", "--out", dir + "/" + name}, dir);
  INFO(run.out << run.err);
  REQUIRE(run.code == 0);
  return dir + "/" + name;
}

}  // namespace

TEST_CASE("gating latency_p95 fails a p95 surely more than max-slowdown slower, and only that") {
  const std::string dir = plumb_test::MakeTempDir();
  const std::string base = RunAt(dir, "base", 20);
  const std::string same = RunAt(dir, "same", 20);
  const std::string slow = RunAt(dir, "slow", 60);

  const plumb_test::Result regressed =
      plumb_test::Plumb({"drift", base, slow, "--gate", "correct,latency_p95", "--json"}, dir);
  INFO(regressed.out << regressed.err);
  CHECK(regressed.code == 1);
  const json d = json::parse(regressed.out);
  CHECK(d["gate"]["regressed"] == json::array({"latency_p95"}));
  CHECK(d["gate"]["latency_p95"]["regressed"] == true);
  CHECK(d["gate"]["latency_p95"]["limit"] == Approx(1.10));
  // Replies take 20 and 60 ms plus the same overhead: the ratio is well above 1.1 (under 3).
  CHECK(d["latency"]["p95"]["interval"][0].get<double>() > 1.10);
  CHECK(d["gate"]["reason"].get<std::string>().rfind("latency_p95 regressed (p95 ", 0) == 0);

  const plumb_test::Result allowed = plumb_test::Plumb(
      {"drift", base, slow, "--gate", "latency_p95", "--max-slowdown", "5", "--json"}, dir);
  CHECK(allowed.code == 0);
  CHECK(json::parse(allowed.out)["gate"]["latency_p95"]["limit"] == Approx(6.0));

  const plumb_test::Result steady =
      plumb_test::Plumb({"drift", base, same, "--gate", "latency_p95"}, dir);
  INFO(steady.out << steady.err);
  CHECK(steady.code == 0);
  CHECK(steady.out.find("latency_p95 steady") != std::string::npos);

  // The same gate after a run, with --baseline.
  const plumb_test::Result run =
      plumb_test::Plumb({"run", dir + "/slow.yaml", "--out", dir + "/again", "--baseline", base,
                         "--gate", "latency_p95", "--junit", dir + "/junit.xml", "--markdown",
                         dir + "/drift.md", "--html", dir + "/drift.html"},
                        dir);
  INFO(run.out << run.err);
  CHECK(run.code == 1);
  CHECK(run.out.find("latency_p95 regressed") != std::string::npos);
  const std::string junit = plumb_test::ReadFile(dir + "/junit.xml");
  CHECK(junit.find("name=\"no regression in latency_p95\"") != std::string::npos);
  CHECK(junit.find("plumb.regressed") != std::string::npos);
  CHECK(plumb_test::ReadFile(dir + "/drift.md").find("latency_p95") != std::string::npos);
  CHECK(plumb_test::ReadFile(dir + "/drift.html").find("latency_p95") != std::string::npos);

  const plumb_test::Result bad = plumb_test::Plumb(
      {"drift", base, slow, "--gate", "latency_p95", "--max-slowdown", "-1"}, dir);
  CHECK(bad.code == 2);
  CHECK(bad.err.find("--max-slowdown must be a number at or above 0") != std::string::npos);
}
