// `plumb compare` end to end on the recorded runs of fixtures/runs/ (make_runs.py there says
// what each predictions file changes), scored at test time with `plumb score`. The verdicts are
// drift's (tests/runner/cli/drift_command_test.cc works them by hand for the same files); here
// the command must put them side by side, draw the front and refuse what it cannot compare.
#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>
#include <functional>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "tests/support/plumb_process.h"
#include "tests/support/temp_dir.h"

using namespace plumb_test;

namespace {

const std::string kRuns = PLUMB_SOURCE_DIR "/fixtures/runs/";

std::string Score(const std::string& dir, const std::string& name, const std::string& predictions) {
  const Result r =
      Plumb({"score", kRuns + "suite.yaml", kRuns + predictions, "--out", dir + "/" + name}, dir);
  INFO(r.err);
  REQUIRE((r.code == 0 || r.code == 1));
  return dir + "/" + name;
}

/// Rewrites one member of dir/run.json (a run recorded by another pipeline or suite).
void EditRecord(const std::string& dir, const std::function<void(nlohmann::json*)>& edit) {
  nlohmann::json record;
  {
    std::ifstream in(dir + "/run.json");
    in >> record;
  }
  edit(&record);
  std::ofstream(dir + "/run.json") << record.dump(2);
}

std::string Copy(const std::string& from, const std::string& to) {
  std::filesystem::copy(from, to, std::filesystem::copy_options::recursive);
  return to;
}

}  // namespace

TEST_CASE("compare puts three runs side by side with drift's verdicts against the first") {
  TempDir tmp;
  const std::string base = Score(tmp.path(), "base", "base.jsonl");
  const std::string broken = Score(tmp.path(), "broken20", "cand-broken20.jsonl");
  const std::string same = Copy(base, tmp.Path("same"));
  EditRecord(base, [](nlohmann::json* r) { (*r)["pipeline"]["name"] = "baseline"; });
  EditRecord(broken, [](nlohmann::json* r) { (*r)["pipeline"]["name"] = "broken"; });
  EditRecord(same, [](nlohmann::json* r) { (*r)["pipeline"]["name"] = "again"; });
  const Result r = Plumb({"compare", base, broken, same, "--json"}, tmp.path());
  INFO(r.err);
  // cand-broken20 regresses on correct and token_f1 (drift_command_test): exit 1.
  REQUIRE(r.code == 1);
  const nlohmann::json c = nlohmann::json::parse(r.out);
  REQUIRE(c["runs"].size() == 3);
  CHECK(c["runs"][0]["name"] == "baseline");
  CHECK(c["runs"][0]["cases"] == 400);
  CHECK(c["runs"][0]["metrics"]["correct"]["n"] == 400);
  REQUIRE(c["against_first"].size() == 2);
  CHECK(c["against_first"][0]["run"] == "broken");
  CHECK(c["against_first"][0]["metrics"]["correct"]["verdict"] == "regressed");
  CHECK(c["against_first"][0]["regressed"] == nlohmann::json::array({"correct", "token_f1"}));
  CHECK(c["against_first"][1]["metrics"]["correct"]["verdict"] == "steady");
  CHECK(c["against_first"][1]["metrics"]["correct"]["delta"] == 0.0);
  CHECK(c["gate"]["exit_code"] == 1);
  // Scored predictions carry latency_ms; the copy equals the base exactly, so the two are not
  // beaten by each other and both sit on the front unless the broken run beats them.
  const double base_correct = c["runs"][0]["metrics"]["correct"]["mean"];
  const double broken_correct = c["runs"][1]["metrics"]["correct"]["mean"];
  CHECK(broken_correct < base_correct);
  CHECK(c["runs"][0]["on_front"] == true);
  CHECK(c["runs"][2]["on_front"] == true);
  // Nothing streamed and nothing was priced.
  CHECK(c["runs"][0]["ttft_ms"].is_null());
  CHECK(c["runs"][0]["cost_per_1000_cases"].is_null());

  const Result table = Plumb({"compare", base, same, "--color", "never"}, tmp.path());
  CHECK(table.code == 0);
  CHECK(table.out.find("again against baseline (400 paired cases)") != std::string::npos);
  CHECK(table.out.find("exit 0: no run regressed against baseline") != std::string::npos);
  CHECK(table.out.find("ttft p50") != std::string::npos);
}

TEST_CASE("time to first token and cost per 1,000 cases come from run.json, n/a without them") {
  TempDir tmp;
  const std::string base = Score(tmp.path(), "base", "base.jsonl");
  const std::string priced = Copy(base, tmp.Path("priced"));
  // What a streamed, priced run records (aggregates.ttft_ms and aggregates.cost): a mean cost of
  // 0.00042 EUR a case is 0.42 EUR per 1,000 cases, its interval [0.00040, 0.00044] scaled alike.
  EditRecord(priced, [](nlohmann::json* r) {
    (*r)["pipeline"]["name"] = "priced";
    (*r)["aggregates"]["ttft_ms"] = {{"n", 400}, {"p50", 210.0}, {"p95", 250.0}, {"mean", 220.0}};
    (*r)["aggregates"]["cost"] = {
        {"currency", "EUR"}, {"n", 400}, {"mean", 0.00042}, {"interval", {0.0004, 0.00044}}};
  });
  const Result r = Plumb({"compare", base, priced, "--json"}, tmp.path());
  INFO(r.err);
  REQUIRE(r.code == 0);
  const nlohmann::json c = nlohmann::json::parse(r.out);
  const nlohmann::json& cost = c["runs"][1]["cost_per_1000_cases"];
  CHECK(cost["value"].get<double>() == Approx(0.42));
  CHECK(cost["interval"][0].get<double>() == Approx(0.40));
  CHECK(cost["interval"][1].get<double>() == Approx(0.44));
  CHECK(cost["currency"] == "EUR");
  CHECK(c["runs"][1]["ttft_ms"]["p50"] == 210.0);
  CHECK(c["runs"][0]["cost_per_1000_cases"].is_null());
  const Result table = Plumb({"compare", base, priced, "--color", "never"}, tmp.path());
  CHECK(table.out.find("0.42 EUR [0.40, 0.44]") != std::string::npos);
  CHECK(table.out.find("210.0 ms") != std::string::npos);
}

TEST_CASE("a run with first calls starts up in its first call less its mean latency") {
  TempDir tmp;
  const std::string a = Score(tmp.path(), "a", "base.jsonl");
  const std::string b = Copy(a, tmp.Path("b"));
  auto warmup = [](const char* signal, const char* key, double ms) {
    return nlohmann::json{
        {"signal", signal},
        {"n", 1},
        {"restarts", 0},
        {"mean_ms", ms},
        {"max_ms", ms},
        {"workers",
         {{{"worker", 0}, {"restart", false}, {"signal", signal}, {key, ms}, {"ready", nullptr}}}}};
  };
  // a: no ready signal, a first call of 1100 ms and a mean latency of 100 ms: a start-up of
  // 1100 - 100 = 1000 ms. b: a ready line after 10 ms and 200 ms a case. (1000 - 10) / (200 -
  // 100) = 9.9, so a is the quicker in total from 10 cases on: 1000 + 10 * 100 = 2000 against
  // 10 + 10 * 200 = 2010 (and at 9: 1900 against 1810).
  EditRecord(a, [&](nlohmann::json* r) {
    (*r)["pipeline"]["name"] = "cold";
    (*r)["aggregates"]["warmup"] = warmup("first_call", "first_call_ms", 1100);
    (*r)["aggregates"]["latency_ms"]["mean"] = 100.0;
  });
  EditRecord(b, [&](nlohmann::json* r) {
    (*r)["pipeline"]["name"] = "warm";
    (*r)["aggregates"]["warmup"] = warmup("ready_line", "warmup_ms", 10);
    (*r)["aggregates"]["latency_ms"]["mean"] = 200.0;
  });
  const Result r = Plumb({"compare", a, b, "--json"}, tmp.path());
  INFO(r.err);
  REQUIRE(r.code == 0);
  const nlohmann::json c = nlohmann::json::parse(r.out);
  CHECK(c["runs"][0]["startup_ms"] == 1000.0);
  CHECK(c["runs"][1]["startup_ms"] == 10.0);
  REQUIRE(c["break_even"].size() == 1);
  CHECK(c["break_even"][0]["slow_start"] == "cold");
  CHECK(c["break_even"][0]["quick_start"] == "warm");
  CHECK(c["break_even"][0]["cases"] == 10);
  // The two runs are copies: case by case the latencies are equal, so the gap's interval is
  // [0, 0] and the break-even is stated as not established.
  CHECK(c["break_even"][0]["established"] == false);
  CHECK(c["break_even"][0]["per_case_gap_ms_interval"] == nlohmann::json::array({0.0, 0.0}));
  const Result table = Plumb({"compare", a, b, "--color", "never"}, tmp.path());
  CHECK(table.out.find("from 10 cases on") != std::string::npos);
  CHECK(table.out.find("the per-case times are not told apart") != std::string::npos);
}

TEST_CASE("a break-even with a per-case gap clear of 0 is stated with its range") {
  TempDir tmp;
  // cand-broken20's latencies are base's times 1.25 (make_runs.py): base's 100.5..299.5 ms
  // become 25..75 ms slower case by case, 50 ms on average (means 200 and 250 ms).
  const std::string slow = Score(tmp.path(), "slow", "base.jsonl");
  const std::string quick = Score(tmp.path(), "quick", "cand-broken20.jsonl");
  auto ready = [](double ms) {
    return nlohmann::json{{"signal", "ready_line"},
                          {"n", 1},
                          {"restarts", 0},
                          {"mean_ms", ms},
                          {"max_ms", ms},
                          {"workers",
                           {{{"worker", 0},
                             {"restart", false},
                             {"signal", "ready_line"},
                             {"warmup_ms", ms},
                             {"ready", nullptr}}}}};
  };
  EditRecord(slow, [&](nlohmann::json* r) { (*r)["aggregates"]["warmup"] = ready(1000); });
  EditRecord(quick, [&](nlohmann::json* r) { (*r)["aggregates"]["warmup"] = ready(10); });
  const Result r = Plumb({"compare", slow, quick, "--json"}, tmp.path());
  INFO(r.err);
  REQUIRE(r.code == 1);  // broken20 regresses on correct
  const nlohmann::json c = nlohmann::json::parse(r.out);
  REQUIRE(c["break_even"].size() == 1);
  const nlohmann::json& b = c["break_even"][0];
  // (1000 - 10) / (250 - 200) = 19.8: from 20 cases on (5000 against 5010 ms; at 19, 4800
  // against 4760).
  CHECK(b["cases"] == 20);
  CHECK(b["paired_cases"] == 400);
  CHECK(b["established"] == true);
  // The gap's interval lies around 50 ms (its cases' spread: sd about 14.4 ms over 400 cases,
  // so about +-1.4 ms); the range of the break-even follows from its two ends.
  CHECK(b["per_case_gap_ms_interval"][0].get<double>() > 47);
  CHECK(b["per_case_gap_ms_interval"][1].get<double>() < 53);
  CHECK(b["cases_interval"][0].get<int64_t>() <= 20);
  CHECK(b["cases_interval"][1].get<int64_t>() >= 20);
  CHECK(b["cases_interval"][1].get<int64_t>() - b["cases_interval"][0].get<int64_t>() <= 2);
}

TEST_CASE("compare refuses runs of different suites and fewer than two runs with exit 2") {
  TempDir tmp;
  const std::string base = Score(tmp.path(), "base", "base.jsonl");
  const std::string other = Copy(base, tmp.Path("other"));
  EditRecord(other, [](nlohmann::json* r) { (*r)["suite"]["name"] = "another-suite"; });
  const Result r = Plumb({"compare", base, other}, tmp.path());
  CHECK(r.code == 2);
  CHECK(r.out.empty());
  CHECK(r.err.find("a run of suite 'drift-fixture'") != std::string::npos);
  CHECK(r.err.find("a run of suite 'another-suite'; compare takes runs of one suite") !=
        std::string::npos);

  const Result one = Plumb({"compare", base}, tmp.path());
  CHECK(one.code == 2);
  CHECK(one.err.find("two or more run directories") != std::string::npos);
  const Result missing = Plumb({"compare", base, tmp.Path("nowhere")}, tmp.path());
  CHECK(missing.code == 2);
}

TEST_CASE("hostile pipeline names stay text in the table, the Markdown and the page") {
  TempDir tmp;
  const std::string base = Score(tmp.path(), "base", "base.jsonl");
  const std::string other = Copy(base, tmp.Path("other"));
  const std::string hostile = "<script>alert(1)</script>|**x**\x1b[31m";
  EditRecord(other, [&](nlohmann::json* r) { (*r)["pipeline"]["name"] = hostile; });
  const Result r = Plumb({"compare", base, other, "--html", tmp.Path("c.html"), "--markdown",
                          tmp.Path("c.md"), "--color", "never"},
                         tmp.path());
  INFO(r.err);
  REQUIRE(r.code == 0);
  CHECK(r.out.find('\x1b') == std::string::npos);
  std::ifstream html_in(tmp.Path("c.html")), md_in(tmp.Path("c.md"));
  const std::string html((std::istreambuf_iterator<char>(html_in)), {});
  const std::string md((std::istreambuf_iterator<char>(md_in)), {});
  CHECK(html.find("<script>alert") == std::string::npos);
  CHECK(html.find("&lt;script&gt;alert(1)&lt;/script&gt;") != std::string::npos);
  CHECK(html.find("certify") != std::string::npos);
  CHECK(md.find("<script>") == std::string::npos);
  CHECK(md.find("\\|\\*\\*x\\*\\*") != std::string::npos);
}
