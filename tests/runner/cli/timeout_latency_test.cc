// Honest latency (issue 21 item 2): a case that times out took at least its timeout, so it
// enters the latency distribution at the timeout, marked as a lower bound, instead of being
// left out (which gave a pipeline that hangs a better p95 than one that answers slowly). The
// real plumb runs paced-pipeline, which hangs on the questions that contain "hang", in
// persistent and per-case mode; the journal, run.json, the summary, the Markdown and the HTML
// report say which values are lower bounds, and a p95 ceiling the timeouts break fails the run.

#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "tests/support/plumb_process.h"

using nlohmann::json;

namespace {

// 20 cases, 2 of them (c3 and c11) hanging; the pipeline's timeout is 1s. `ceiling` adds
// ceilings: {latency_p95_ms: 500}.
std::string Suite(const std::string& dir, const char* mode, bool ceiling) {
  std::string suite = "plumb: 1\nname: hangs\nmax_error_rate: 0.2\n";
  if (ceiling) suite += "ceilings: {latency_p95_ms: 500}\n";
  suite += "pipelines:\n  p: {command: [" + plumb_test::kFixtures +
           "paced-pipeline], mode: " + mode + ", timeout: 1s, cwd: " + dir + "}\ncases:\n";
  for (int i = 0; i < 20; ++i) {
    const std::string q =
        i == 3 || i == 11 ? "please hang " + std::to_string(i) : "question " + std::to_string(i);
    suite +=
        "  - {id: c" + std::to_string(i) + ", question: \"" + q + "\", answers: [\"" + q + "\"]}\n";
  }
  return suite;
}

}  // namespace

TEST_CASE("timed-out cases enter the latency at their timeout, as lower bounds") {
  for (const char* mode : {"persistent", "per-case"}) {
    INFO(mode << " mode");
    const std::string dir = plumb_test::MakeTempDir();
    plumb_test::WriteFile(dir + "/suite.yaml", Suite(dir, mode, /*ceiling=*/false));
    const plumb_test::Result run =
        plumb_test::Plumb({"run", dir + "/suite.yaml", "--out", dir + "/out", "--markdown",
                           dir + "/summary.md", "--html", dir + "/report.html"},
                          dir);
    INFO(run.out << run.err);
    CHECK(run.code == 0);  // 2 errors in 20 is within max_error_rate 0.2, and no ceiling

    // The journal: each hung case errored, at the timeout, marked; no other case is marked.
    const std::vector<json> records = plumb_test::ReadJournal(dir + "/out/cases.jsonl");
    REQUIRE(records.size() == 20);
    for (const json& record : records) {
      INFO(record.dump());
      const bool hung = record["id"] == "c3" || record["id"] == "c11";
      CHECK(record["error"].is_null() == !hung);
      if (hung) {
        CHECK(record["error"]["reason"] == "timed out after 1s");
        CHECK(record["latency_ms"] == 1000.0);
        CHECK(record["latency_lower_bound"] == true);
      } else {
        CHECK_FALSE(record.contains("latency_lower_bound"));
        CHECK(record["latency_ms"].get<double>() < 1000.0);
      }
    }

    // run.json: measured values below 1000 ms and 2 lower bounds at 1000 ms. Per-case mode
    // measures all 18 replies. Persistent mode keeps three first calls out (c0, and c4 and c12
    // after the hung workers were replaced: their start-up is in them, see warmup_test), so 15.
    // Definition 7 over 20 values (h = 19 p / 100): p50 (h 9.5) uses the 10th and 11th values,
    // measured; p90 (h 17.1) weighs the 19th, the first lower bound, by 0.1; p95 (h 18.05) and
    // p99 (h 18.81) lie between the two lower bounds, so both are exactly 1000. Over 17 values
    // (h = 16 p / 100): p50 (h 8) is the 9th value, measured; p90 (h 14.4) weighs the 16th, the
    // first lower bound, by 0.4; p95 (h 15.2) and p99 (h 15.84) lie between the lower bounds.
    const bool persistent = std::string(mode) == "persistent";
    const int measured = persistent ? 15 : 18;
    const json latency =
        json::parse(plumb_test::ReadFile(dir + "/out/run.json"))["aggregates"]["latency_ms"];
    CHECK(latency["n"] == measured + 2);
    CHECK(latency["lower_bounds"] == 2);
    CHECK(latency["at_least"] == json::array({"p90", "p95", "p99", "mean", "max"}));
    CHECK(latency["p95"] == 1000.0);
    CHECK(latency["p99"] == 1000.0);
    CHECK(latency["max"] == 1000.0);
    CHECK(latency["p50"].get<double>() < 1000.0);

    // The summary and the reports say which values are lower bounds, and how many timed out.
    CHECK(run.out.find("p95 at least 1000.00") != std::string::npos);
    CHECK(run.out.find("p50 at least") == std::string::npos);
    const std::string n = std::to_string(measured + 2);
    CHECK(run.out.find("timed out            2 of " + n +
                       ", counted at their timeout as lower bounds") != std::string::npos);
    const std::string markdown = plumb_test::ReadFile(dir + "/summary.md");
    CHECK(markdown.find("p95 at least 1000.0 ms (n " + n +
                        ", 2 timed out, counted at their timeout)") != std::string::npos);
    const std::string html = plumb_test::ReadFile(dir + "/report.html");
    CHECK(html.find("Latency over " + std::to_string(measured) +
                    " replies that did not error and 2 timed out (counted at their timeout, as "
                    "lower bounds)") != std::string::npos);
    CHECK(html.find("p95 at least 1000 ms") != std::string::npos);
    CHECK(html.find("latency at least 1000 ms (timed out)") != std::string::npos);

    // `plumb report` reads the lower bounds back from run.json.
    const plumb_test::Result report = plumb_test::Plumb({"report", dir + "/out"}, dir);
    CHECK(report.out.find("p95 at least 1000.00") != std::string::npos);
  }
}

TEST_CASE("a p95 ceiling that only the timeouts break fails the run") {
  // Left out, the two timeouts would leave a p95 of a few milliseconds; counted, p95 is 1000 ms.
  const std::string dir = plumb_test::MakeTempDir();
  plumb_test::WriteFile(dir + "/suite.yaml", Suite(dir, "persistent", /*ceiling=*/true));
  const plumb_test::Result run =
      plumb_test::Plumb({"run", dir + "/suite.yaml", "--out", dir + "/out"}, dir);
  INFO(run.out << run.err);
  CHECK(run.code == 1);
  const json thresholds = json::parse(plumb_test::ReadFile(dir + "/out/run.json"))["thresholds"];
  REQUIRE(thresholds.size() == 1);
  CHECK(thresholds[0]["metric"] == "latency_p95_ms");
  CHECK(thresholds[0]["value"] == 1000.0);
  CHECK(thresholds[0]["held"] == false);
}
