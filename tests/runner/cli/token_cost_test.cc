// Token usage and cost (issue 21 item 4): a subprocess pipeline's `usage` object gives each
// reply's tokens, the pipeline's `price:` turns them into money, and run.json, the journal and
// the summary carry per-case cost, the run's total and the mean per case with its interval.
// Every figure is computed by hand in the comments from the token counts the questions name
// (fixtures/test-pipelines/usage_pipeline.cc answers with them).

#include <catch2/catch.hpp>
#include <map>
#include <nlohmann/json.hpp>
#include <string>

#include "tests/support/plumb_process.h"

using nlohmann::json;

namespace {

std::string Suite(const std::string& price) {
  return "plumb: 1\nname: priced\npipelines:\n  p:\n    command: [" + plumb_test::kFixtures +
         "usage-pipeline]\n" + price +
         "cases:\n"
         "  - {id: a, question: \"in=812 out=24\", answers: [\"in=812 out=24\"]}\n"
         "  - {id: b, question: \"in=1000 out=200\", answers: [\"in=1000 out=200\"]}\n"
         "  - {id: c, question: \"in=2000 out=1000\", answers: [\"in=2000 out=1000\"]}\n"
         "  - {id: d, question: \"no usage here\", answers: [\"no usage here\"]}\n";
}

}  // namespace

TEST_CASE("per-case cost, the run's total and the mean per case match the hand-computed values") {
  const std::string dir = plumb_test::MakeTempDir();
  plumb_test::WriteFile(dir + "/suite.yaml",
                        Suite("    price: {input: 0.50, output: 1.50, per: 1M, currency: EUR}\n"));
  const plumb_test::Result run =
      plumb_test::Plumb({"run", dir + "/suite.yaml", "--out", dir + "/out"}, dir);
  INFO(run.out << run.err);
  REQUIRE(run.code == 0);
  std::map<std::string, json> by_id;
  for (const json& r : plumb_test::ReadJournal(dir + "/out/cases.jsonl")) by_id[r["id"]] = r;
  // (812 * 0.50 + 24 * 1.50) / 1e6 = (406 + 36) / 1e6 = 0.000442
  CHECK(by_id["a"]["cost"].get<double>() == Approx(0.000442).epsilon(1e-12));
  // (1000 * 0.50 + 200 * 1.50) / 1e6 = (500 + 300) / 1e6 = 0.0008
  CHECK(by_id["b"]["cost"].get<double>() == Approx(0.0008).epsilon(1e-12));
  // (2000 * 0.50 + 1000 * 1.50) / 1e6 = (1000 + 1500) / 1e6 = 0.0025
  CHECK(by_id["c"]["cost"].get<double>() == Approx(0.0025).epsilon(1e-12));
  // No usage object: no cost (not a cost of 0).
  CHECK_FALSE(by_id["d"].contains("cost"));

  const json a = json::parse(plumb_test::ReadFile(dir + "/out/run.json"))["aggregates"];
  CHECK(a["usage"]["input_tokens"] == 3812);   // 812 + 1000 + 2000
  CHECK(a["usage"]["output_tokens"] == 1224);  // 24 + 200 + 1000
  CHECK(a["usage"]["items"] == 3);
  const json cost = a["cost"];
  CHECK(cost["currency"] == "EUR");
  CHECK(cost["per"] == 1e6);
  CHECK(cost["items"] == 3);
  CHECK(cost["n"] == 3);
  // 0.000442 + 0.0008 + 0.0025 = 0.003742, over 3 cases 0.0012473333...
  CHECK(cost["total"].get<double>() == Approx(0.003742).epsilon(1e-12));
  CHECK(cost["mean"].get<double>() == Approx(0.003742 / 3).epsilon(1e-12));
  CHECK(cost["per_1000_cases"].get<double>() == Approx(0.003742 / 3 * 1000).epsilon(1e-12));
  // The bootstrap interval of a mean of three values lies between the smallest and largest.
  CHECK(cost["interval"][0].get<double>() >= 0.000442 - 1e-15);
  CHECK(cost["interval"][1].get<double>() <= 0.0025 + 1e-15);
  CHECK(run.out.find("cost") != std::string::npos);
  CHECK(run.out.find("0.003742 EUR in all over 3 replies") != std::string::npos);

  // plumb report shows the same line from run.json alone.
  const plumb_test::Result report = plumb_test::Plumb({"report", dir + "/out"}, dir);
  CHECK(report.out.find("0.003742 EUR in all over 3 replies") != std::string::npos);
}

TEST_CASE("drift compares cost and tokens per case as ratios with intervals") {
  const std::string dir = plumb_test::MakeTempDir();
  plumb_test::WriteFile(dir + "/base.yaml",
                        Suite("    price: {input: 0.50, output: 1.50, per: 1M, currency: EUR}\n"));
  // Twice the price per token, same tokens: every case costs exactly twice as much.
  plumb_test::WriteFile(dir + "/cand.yaml",
                        Suite("    price: {input: 1, output: 3, per: 1000000, currency: EUR}\n"));
  for (const char* name : {"base", "cand"}) {
    const plumb_test::Result run =
        plumb_test::Plumb({"run", dir + "/" + name + ".yaml", "--out", dir + "/" + name}, dir);
    REQUIRE(run.code == 0);
  }
  const plumb_test::Result drift =
      plumb_test::Plumb({"drift", dir + "/base", dir + "/cand", "--json"}, dir);
  INFO(drift.out << drift.err);
  REQUIRE(drift.code == 0);
  const json d = json::parse(drift.out);
  // Three cases have a cost in both runs (d has no usage): mean 0.003742 / 3 -> 0.007484 / 3.
  CHECK(d["cost"]["n"] == 3);
  CHECK(d["cost"]["currency"] == "EUR");
  CHECK(d["cost"]["base_mean"].get<double>() == Approx(0.003742 / 3).epsilon(1e-12));
  CHECK(d["cost"]["ratio"].get<double>() == Approx(2.0).epsilon(1e-12));
  CHECK(d["cost"]["interval"][0].get<double>() == Approx(2.0).epsilon(1e-12));
  CHECK(d["cost"]["interval"][1].get<double>() == Approx(2.0).epsilon(1e-12));
  // Tokens did not change: in 3812 / 3 per case, out 1224 / 3, ratios 1.
  CHECK(d["usage"]["input_tokens"]["base_mean"].get<double>() == Approx(3812.0 / 3));
  CHECK(d["usage"]["input_tokens"]["ratio"] == 1.0);
  CHECK(d["usage"]["output_tokens"]["cand_mean"].get<double>() == Approx(1224.0 / 3));
  CHECK(d["usage"]["output_tokens"]["interval"] == json::array({1.0, 1.0}));

  const plumb_test::Result table = plumb_test::Plumb({"drift", dir + "/base", dir + "/cand"}, dir);
  CHECK(table.out.find("cost per case") != std::string::npos);
}

TEST_CASE("a price is checked where it is written") {
  const std::string dir = plumb_test::MakeTempDir();
  plumb_test::WriteFile(dir + "/suite.yaml",
                        Suite("    price: {input: 0.50, ouput: 1.50, per: 1G}\n"));
  const plumb_test::Result check = plumb_test::Plumb({"check", dir + "/suite.yaml"}, dir);
  INFO(check.out << check.err);
  CHECK(check.code == 2);
  CHECK(check.err.find("unknown key 'ouput'") != std::string::npos);
  CHECK(check.err.find("did you mean 'output'") != std::string::npos);
  CHECK(check.err.find("invalid 'per' '1G'") != std::string::npos);
}
