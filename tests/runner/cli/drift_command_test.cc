// `plumb drift`, `plumb run --baseline` and `plumb report` end to end, on the recorded runs of
// fixtures/runs/ (see make_runs.py there for what each predictions file changes). The run
// directories are built at test time with `plumb score`, so they always have the current
// run.json format. Expected values are worked by hand below from the fixture's design and the
// definitions of SPEC §7 and runner/compare/drift.h; tests/reference/drift_reference.py checks the
// same reports number by number against scipy and statsmodels.
#include <unistd.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "tests/support/plumb_process.h"

using namespace plumb_test;

namespace {

const std::string kRuns = PLUMB_SOURCE_DIR "/fixtures/runs/";

/// Scores `predictions` (a file of fixtures/runs/) into dir/name and returns the run directory.
std::string Score(const std::string& dir, const std::string& name, const std::string& predictions,
                  const std::string& suite = "suite.yaml") {
  const Result r =
      Plumb({"score", kRuns + suite, kRuns + predictions, "--out", dir + "/" + name}, dir);
  INFO(r.err);
  REQUIRE((r.code == 0 || r.code == 1));
  return dir + "/" + name;
}

nlohmann::json DriftJson(const std::string& dir, const std::string& base, const std::string& cand,
                         int* code, std::vector<std::string> extra = {}) {
  std::vector<std::string> args = {"drift", base, cand, "--json"};
  args.insert(args.end(), extra.begin(), extra.end());
  const Result r = Plumb(args, dir);
  INFO(r.err);
  *code = r.code;
  REQUIRE((r.code == 0 || r.code == 1));
  return nlohmann::json::parse(r.out);
}

const nlohmann::json& MetricRow(const nlohmann::json& rows, const std::string& metric) {
  for (const nlohmann::json& row : rows) {
    if (row["metric"] == metric) return row;
  }
  FAIL("no row for " << metric);
  return rows[0];
}

std::string LastLine(const std::string& text) {
  std::string t = text;
  while (!t.empty() && t.back() == '\n') t.pop_back();
  const size_t nl = t.rfind('\n');
  return nl == std::string::npos ? t : t.substr(nl + 1);
}

void CheckSteadyEverywhere(const nlohmann::json& d) {
  for (const nlohmann::json& m : d["metrics"]) {
    INFO(m.dump());
    CHECK(m["verdict"] == "steady");
    CHECK(m["delta"] == 0.0);
    CHECK(m["interval"] == nlohmann::json::array({0.0, 0.0}));
  }
  for (const nlohmann::json& t : d["tags"]) {
    // A tag with fewer than six cases gets no verdict at all.
    for (const nlohmann::json& m : t["metrics"]) {
      CHECK((m["verdict"] == "steady" || m["verdict"] == "too few cases"));
    }
  }
  CHECK(d["lost"].empty());
  CHECK(d["gained"].empty());
  CHECK(d["gate"]["regressed"].empty());
}

}  // namespace

TEST_CASE("two runs of the same recorded predictions are steady everywhere") {
  const std::string dir = MakeTempDir();
  const std::string base = Score(dir, "base", "base.jsonl");
  const std::string again = Score(dir, "again", "base.jsonl");
  int code = -1;
  const nlohmann::json d = DriftJson(dir, base, again, &code);
  CHECK(code == 0);
  CHECK(d["plumb_drift"] == 1);
  CHECK(d["paired_cases"].size() == 400);
  CHECK(d["only_in_base"].empty());
  CHECK(d["gold_changed"].empty());
  CHECK(d["changed"] ==
        nlohmann::json({{"suite", false}, {"corpus", false}, {"pipeline_config", false}}));
  CheckSteadyEverywhere(d);
  // Identical latencies: every resample's percentile ratio is exactly 1.
  CHECK(d["latency"]["p50"]["ratio"] == 1.0);
  CHECK(d["latency"]["p95"]["interval"] == nlohmann::json::array({1.0, 1.0}));
  // make_runs.py: 350 of 400 right.
  CHECK(MetricRow(d["metrics"], "correct")["base_mean"] == 0.875);
  // No pair differs. correct: the drop the gate catches with power 0.8, tested at 0.05 / 3 (the
  // default family of three metrics), with the noise taken as half a flip in 400 (0.5 / 400,
  // half each way) and the drop added as lost cases. The exact power, summed with
  // scipy.stats.binom and critical values from scipy.stats.binomtest, reaches 0.8
  // (scipy.optimize.brentq) at 0.024603781039757484; with no noise at all it would be the root
  // of scipy.stats.binom.sf(6, 400, d) = 0.8, 0.0226 (7 lost are the fewest with 2 / 2^7 <=
  // 0.0167).
  // A continuous metric has no spread to estimate a detectable effect from.
  CHECK(d["min_detectable_effect"]["correct"].get<double>() ==
        Approx(0.024603781039757484).margin(2e-6));
  CHECK(d["min_detectable_effect"]["token_f1"].is_null());
}

TEST_CASE("two runs of the demo pipeline, which is deterministic, are steady everywhere") {
  const std::string dir = MakeTempDir();
  // The suite's pipelines and its grader's name build/fixtures/...; this test does not run
  // from the repository root, so the file gives both with absolute paths.
  WriteFile(dir + "/pipelines.yaml", "pipelines:\n  retrieve:\n    command: [" + kFixtures +
                                         "demo-pipeline, --docs, " PLUMB_SOURCE_DIR
                                         "/fixtures/ferry/docs, --top-k, \"3\"]\n"
                                         "  grader:\n    command: [" +
                                         kFixtures + "demo-grader]\n");
  for (const char* name : {"first", "second"}) {
    const Result r =
        Plumb({"run", PLUMB_SOURCE_DIR "/suites/ferry.yaml", "--pipelines", dir + "/pipelines.yaml",
               "--out", dir + "/" + name, "--grade-cache", dir + "/grades.sqlite"},
              dir);
    INFO(r.err);
    REQUIRE((r.code == 0 || r.code == 1));  // the demo's own floors may hold or not
  }
  int code = -1;
  const nlohmann::json d = DriftJson(dir, dir + "/first", dir + "/second", &code);
  CheckSteadyEverywhere(d);
  CHECK_FALSE(d["changed"]["pipeline_config"]);
  // Nothing regressed, so the gate fails only when the candidate's own floors broke.
  CHECK(code == (d["gate"]["broken_floors"].empty() ? 0 : 1));
}

TEST_CASE("a candidate that breaks 20 of 400 cases regresses on correct") {
  const std::string dir = MakeTempDir();
  const std::string base = Score(dir, "base", "base.jsonl");
  const std::string cand = Score(dir, "broken20", "cand-broken20.jsonl");
  int code = -1;
  const nlohmann::json d = DriftJson(dir, base, cand, &code);
  CHECK(code == 1);
  const nlohmann::json& correct = MetricRow(d["metrics"], "correct");
  // 20 pass -> fail, none back: delta = -20/400; exact McNemar p = 2 * 2^-20.
  CHECK(correct["delta"] == -0.05);
  CHECK(correct["cand_mean"] == 0.825);
  CHECK(correct["test"] == "mcnemar");
  CHECK(correct["discordant"] == nlohmann::json({{"lost", 20}, {"gained", 0}}));
  CHECK(correct["p_value"] == 1.9073486328125e-06);
  CHECK(correct["interval"][1].get<double>() < 0);
  CHECK(correct["verdict"] == "regressed");
  CHECK(correct["gated"] == true);
  // Only answers changed; citations are the base pipeline's.
  CHECK(MetricRow(d["metrics"], "citation_recall")["verdict"] == "steady");
  CHECK(d["gate"]["regressed"] == nlohmann::json::array({"correct", "token_f1"}));
  // The lost cases are sailings 2, 22, ..., 382 (i % 20 == 2).
  REQUIRE(d["lost"].size() == 20);
  std::vector<std::string> lost;
  for (const nlohmann::json& c : d["lost"]) lost.push_back(c["id"]);
  std::sort(lost.begin(), lost.end());
  CHECK(lost.front() == "sailing-002");
  CHECK(lost.back() == "sailing-382");
  CHECK(d["lost"][0]["deltas"]["correct"] == -1.0);
  CHECK(d["lost"][0]["base_answer"].is_string());
  CHECK(d["gained"].empty());
  // All 20 are on the island route: that tag regresses, with Holm's p = 6 tags * 2 * 2^-20;
  // the other five tags do not change.
  for (const nlohmann::json& t : d["tags"]) {
    const nlohmann::json& m = MetricRow(t["metrics"], "correct");
    INFO(t["tag"]);
    if (t["tag"] == "island") {
      CHECK(m["p_holm"] == 6 * 1.9073486328125e-06);
      CHECK(m["verdict"] == "regressed");
    } else {
      CHECK(m["verdict"] == "steady");
    }
  }
  // Every candidate latency is 1.25 times the base one, so every resample's ratio is 1.25
  // (up to rounding in the interpolation).
  CHECK(d["latency"]["p50"]["ratio"].get<double>() == Approx(1.25).epsilon(1e-14));
  CHECK(d["latency"]["p95"]["interval"][0].get<double>() == Approx(1.25).epsilon(1e-14));
  // Detectable effect (runner/compare/drift.h): 20 of 400 discordant, taken as 20.5 / 400, half
  // of it flipping each way as noise, and the drop added as lost cases; exact McNemar at
  // 0.05 / 3 with min_effect 0.005. The exact power, summed with scipy.stats.binom and critical
  // values from scipy.stats.binomtest, reaches 0.8 (scipy.optimize.brentq) at
  // 0.052879974016392356.
  CHECK(d["min_detectable_effect"]["correct"].get<double>() ==
        Approx(0.052879974016392356).margin(2e-6));
  CHECK(d["changed"]["pipeline_config"] == true);  // another predictions file
}

TEST_CASE("a candidate that flips 2 of 400 cases is steady") {
  const std::string dir = MakeTempDir();
  const std::string base = Score(dir, "base", "base.jsonl");
  SECTION("one lost, one gained") {
    int code = -1;
    const nlohmann::json d =
        DriftJson(dir, base, Score(dir, "mixed", "cand-flip2-mixed.jsonl"), &code);
    CHECK(code == 0);
    const nlohmann::json& correct = MetricRow(d["metrics"], "correct");
    CHECK(correct["delta"] == 0.0);
    CHECK(correct["p_value"] == 1.0);  // b = c = 1: min(1, 2 * P(X <= 1)), X ~ Bin(2, 1/2)
    CHECK(correct["verdict"] == "steady");
    CHECK(d["lost"][0]["id"] == "sailing-002");
    CHECK(d["gained"][0]["id"] == "sailing-003");
  }
  SECTION("two lost") {
    int code = -1;
    const nlohmann::json d =
        DriftJson(dir, base, Score(dir, "lost", "cand-flip2-lost.jsonl"), &code);
    CHECK(code == 0);
    const nlohmann::json& correct = MetricRow(d["metrics"], "correct");
    // delta = -2/400 = -0.005: exactly -min_effect, which the rule's "delta <= -min_effect"
    // admits. What keeps the verdict steady is the interval: a resample draws neither lost case
    // with probability (398/400)^400 = 0.1347 > 0.025, so at least 2.5% of the resampled deltas
    // are 0 and the upper end (the 97.5th percentile) is 0, which does not lie below 0.
    CHECK(correct["delta"].get<double>() == -2.0 / 400);
    CHECK(correct["delta"].get<double>() <= -0.005);
    CHECK(correct["interval"][1] == 0.0);
    // The lower end: the draws of the two cases are Binomial(400, 1/200), about Poisson(2), and
    // P(X >= 6) = 0.017 < 0.025 < P(X >= 5) = 0.053, so it lies between -6/400 and -5/400.
    CHECK(correct["interval"][0].get<double>() >= -6.0 / 400);
    CHECK(correct["interval"][0].get<double>() <= -5.0 / 400);
    CHECK(correct["p_value"] == 0.5);  // min(1, 2 * 2^-2)
    CHECK(correct["verdict"] == "steady");
    for (const nlohmann::json& m : d["metrics"]) CHECK(m["verdict"] == "steady");
    CHECK(d["lost"].size() == 2);
  }
}

TEST_CASE("a candidate that lacks the cases it would have lost fails unless --allow-missing") {
  // The candidate is cand-broken20.jsonl scored on a copy of the suite without the twenty cases
  // it breaks (sailing-002, 022, ..., 382): on the 380 it has, it equals the base.
  const std::string dir = MakeTempDir();
  const std::string base = Score(dir, "base", "base.jsonl");
  auto keep = [](const std::string& line) {
    const size_t at = line.find("\"sailing-");
    if (at == std::string::npos) return true;
    const int number = std::stoi(line.substr(at + 9, 3));
    return number % 20 != 2;
  };
  for (const char* name : {"cases.jsonl", "cand-broken20.jsonl"}) {
    std::istringstream in(ReadFile(kRuns + name));
    std::string kept, line;
    while (std::getline(in, line)) {
      if (keep(line)) kept += line + "\n";
    }
    WriteFile(dir + "/" + name, kept);
  }
  std::istringstream suite(ReadFile(kRuns + "suite.yaml"));
  std::string copy, line;
  while (std::getline(suite, line)) {
    if (line.rfind("corpus:", 0) == 0) line = "corpus: " + kRuns + "docs";
    copy += line + "\n";
  }
  WriteFile(dir + "/suite.yaml", copy);
  const Result scored = Plumb(
      {"score", dir + "/suite.yaml", dir + "/cand-broken20.jsonl", "--out", dir + "/lacking"}, dir);
  INFO(scored.err);
  REQUIRE((scored.code == 0 || scored.code == 1));

  int code = -1;
  const nlohmann::json d = DriftJson(dir, base, dir + "/lacking", &code);
  CHECK(code == 1);
  CHECK(d["only_in_base"].size() == 20);
  CHECK(d["missing_counted_as_lost"] == true);
  const nlohmann::json& correct = MetricRow(d["metrics"], "correct");
  CHECK(correct["discordant"] == nlohmann::json({{"lost", 20}, {"gained", 0}}));
  CHECK(correct["verdict"] == "regressed");
  CHECK(d["lost"].size() == 20);
  const Result table = Plumb({"drift", base, dir + "/lacking"}, dir);
  CHECK(table.out.find("missing from the candidate: 20 case(s), counted as lost") !=
        std::string::npos);

  const nlohmann::json allowed = DriftJson(dir, base, dir + "/lacking", &code, {"--allow-missing"});
  CHECK(code == 0);
  CHECK(allowed["missing_counted_as_lost"] == false);
  CHECK(allowed["paired_cases"].size() == 380);
  CheckSteadyEverywhere(allowed);
}

TEST_CASE("the candidate's floors still gate") {
  const std::string dir = MakeTempDir();
  const std::string base = Score(dir, "base", "base.jsonl");
  // The same predictions under suite-strict.yaml: same name and cases, a floor of correct 0.95
  // that 0.875 breaks.
  const std::string strict = Score(dir, "strict", "base.jsonl", "suite-strict.yaml");
  int code = -1;
  const nlohmann::json d = DriftJson(dir, base, strict, &code);
  CHECK(code == 1);
  CHECK(d["changed"]["suite"] == true);
  CheckSteadyEverywhere(d);
  CHECK(d["gate"]["broken_floors"] == nlohmann::json::array({"correct 0.875 < 0.95"}));
  CHECK(d["gate"]["reason"] == "candidate floor broken: correct 0.875 < 0.95");
}

TEST_CASE("the terminal summary ends with the exit code and its reason") {
  const std::string dir = MakeTempDir();
  const Result r =
      Plumb({"drift", Score(dir, "base", "base.jsonl"),
             Score(dir, "broken20", "cand-broken20.jsonl"), "--markdown", dir + "/drift.md"},
            dir);
  CHECK(r.code == 1);
  CHECK(LastLine(r.out).rfind("exit 1: correct, token_f1 regressed (correct 0.8750 -> 0.8250", 0) ==
        0);
  const std::string markdown = ReadFile(dir + "/drift.md");
  CHECK(markdown.rfind("### plumb drift: `drift-fixture` — exit 1\n", 0) == 0);
  // The first lost case (all twenty lose 1 on correct and token_f1; ties go by id): sailing 2
  // leaves at 05:00 + 2 * 35 min = 06:10 (make_runs.py departure()); the candidate says
  // 05:00 + (70 + 510 + 5) min = 14:45 (wrong_time()). Its row gives the cause, the change in
  // correct, the gold, both answers and the reason.
  CHECK(markdown.find("| `sailing-002` | reading miss | -1.0000 | 06:10 | 06:10 | 14:45 | wrong "
                      "answer \\(token\\_f1 0\\); a gold span was retrieved at rank 1 |") !=
        std::string::npos);
}

TEST_CASE("the gate option picks the metrics whose regression fails the command") {
  const std::string dir = MakeTempDir();
  const std::string base = Score(dir, "base", "base.jsonl");
  const std::string cand = Score(dir, "broken20", "cand-broken20.jsonl");
  int code = -1;
  DriftJson(dir, base, cand, &code, {"--gate", "citation_recall,mrr"});
  CHECK(code == 0);
  DriftJson(dir, base, cand, &code, {"--gate", "exact_match"});
  CHECK(code == 1);
  const Result typo = Plumb({"drift", base, cand, "--gate", "corect"}, dir);
  CHECK(typo.code == 2);
  CHECK(typo.err.find("did you mean 'correct'?") != std::string::npos);
  // A bigger min_effect than the drop: the verdict stays steady.
  DriftJson(dir, base, cand, &code, {"--min-effect", "0.06"});
  CHECK(code == 0);
}

TEST_CASE("unreadable runs and runs of different suites exit 2") {
  const std::string dir = MakeTempDir();
  const std::string base = Score(dir, "base", "base.jsonl");
  const Result missing = Plumb({"drift", base, dir + "/nowhere"}, dir);
  CHECK(missing.code == 2);
  CHECK(missing.err.find(dir + "/nowhere/run.json") != std::string::npos);

  const std::string other = Score(dir, "other", "base.jsonl");
  nlohmann::json record = nlohmann::json::parse(ReadFile(other + "/run.json"));
  record["suite"]["name"] = "harbour-handbook";
  WriteFile(other + "/run.json", record.dump());
  const Result different = Plumb({"drift", base, other}, dir);
  CHECK(different.code == 2);
  CHECK(different.err.find("'harbour-handbook'") != std::string::npos);
}

TEST_CASE("plumb run --baseline computes the drift and gates on it") {
  const std::string dir = MakeTempDir();
  // Echo answers each question with itself (all right); `wrong` answers "no idea" to everything.
  std::string yaml = "plumb: 1\nname: echo-drift\npipelines:\n  echo: {command: [" + kFixtures +
                     "echo-pipeline]}\n  wrong: {command: [/bin/sh, -c, 'cat >/dev/null; echo "
                     "\"{\\\"answer\\\": \\\"no idea\\\"}\"'], mode: per-case}\ncases:\n";
  for (int i = 0; i < 12; ++i) {
    yaml += "  - {id: q" + std::to_string(i) + ", question: \"question " + std::to_string(i) +
            "\", answers: [\"question " + std::to_string(i) + "\"]}\n";
  }
  WriteFile(dir + "/suite.yaml", yaml);
  const Result base =
      Plumb({"run", dir + "/suite.yaml", "--pipeline", "echo", "--out", dir + "/main-run"}, dir);
  INFO(base.err);
  REQUIRE(base.code == 0);

  const Result same = Plumb({"run", dir + "/suite.yaml", "--pipeline", "echo", "--out",
                             dir + "/pr-same", "--baseline", dir + "/main-run"},
                            dir);
  INFO(same.err);
  CHECK(same.code == 0);
  CHECK(same.out.find("drift echo-drift: 12 paired cases") != std::string::npos);
  CHECK(LastLine(same.out).rfind("exit 0: no gated metric regressed", 0) == 0);
  // One exit line, the last: the run's own verdict and the drift table print none of their own.
  CHECK(same.out.find("\nexit ") == same.out.rfind("\nexit "));
  CHECK(same.out.find("run written to " + dir + "/pr-same") < same.out.rfind("\nexit "));

  const Result worse = Plumb({"run", dir + "/suite.yaml", "--pipeline", "wrong", "--out",
                              dir + "/pr-worse", "--baseline", dir + "/main-run", "--json",
                              "--markdown", dir + "/comment.md", "--junit", dir + "/cases.xml"},
                             dir);
  INFO(worse.err);
  // 12 of 12 lost: delta -1, McNemar p = 2 * 2^-12.
  CHECK(worse.code == 1);
  const nlohmann::json record = nlohmann::json::parse(worse.out);
  CHECK(record["drift"]["gate"]["exit_code"] == 1);
  CHECK(MetricRow(record["drift"]["metrics"], "correct")["p_value"] == 2.0 / 4096);
  CHECK(ReadFile(dir + "/comment.md").find("**FAIL** (exit 1)") != std::string::npos);
  // JUnit: 12 cases, marked lost, and the 3 gated metrics: correct and token_f1 regressed,
  // citation_recall (no gold spans here) is skipped.
  const std::string junit = ReadFile(dir + "/cases.xml");
  CHECK(junit.find("tests=\"15\" failures=\"14\" errors=\"0\" skipped=\"1\"") != std::string::npos);
  CHECK(junit.find("name=\"no regression in correct\" time=\"0.000\">\n      <failure "
                   "type=\"plumb.regressed\"") != std::string::npos);
  // The gate is recorded where CI reads it: run.json's verdict is the process's exit code (the
  // run alone broke no floor), its "baseline" says why, drift.json holds the comparison, and
  // `plumb report` of the run exits as the run did.
  CHECK(record["verdict"]["exit_code"] == 1);
  const nlohmann::json stored = nlohmann::json::parse(ReadFile(dir + "/pr-worse/run.json"));
  CHECK(stored["verdict"]["exit_code"] == 1);
  CHECK(stored["verdict"]["reason"].get<std::string>().find(
            "regressed (correct 1.0000 -> 0.0000") != std::string::npos);
  CHECK(stored["baseline"]["exit_code"] == 1);
  CHECK(stored["baseline"]["drift"] == "drift.json");
  CHECK(nlohmann::json::parse(ReadFile(dir + "/pr-worse/drift.json"))["gate"]["exit_code"] == 1);
  const Result reported = Plumb({"report", dir + "/pr-worse"}, dir);
  CHECK(reported.code == 1);
  CHECK(LastLine(reported.out) == "exit 1: " + stored["verdict"]["reason"].get<std::string>());

  const Result no_baseline = Plumb({"run", dir + "/suite.yaml", "--pipeline", "echo", "--out",
                                    dir + "/pr-lost", "--baseline", dir + "/missing"},
                                   dir);
  CHECK(no_baseline.code == 2);
  CHECK(access((dir + "/pr-lost").c_str(), F_OK) != 0);  // nothing ran
}

TEST_CASE("with several pipelines, --baseline and the report files follow --out's layout") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/suite.yaml",
            "plumb: 1\nname: two\npipelines:\n  echo: {command: [" + kFixtures +
                "echo-pipeline]}\n  again: {command: [" + kFixtures +
                "echo-pipeline]}\ncases:\n  - {id: q, question: \"hi\", answers: [\"hi\"]}\n");
  const std::vector<std::string> both = {"run",  dir + "/suite.yaml", "--pipeline",
                                         "echo", "--pipeline",        "again"};
  std::vector<std::string> main_run = both, pr_run = both;
  main_run.insert(main_run.end(), {"--out", dir + "/main"});
  REQUIRE(Plumb(main_run, dir).code == 0);
  pr_run.insert(pr_run.end(), {"--out", dir + "/pr", "--baseline", dir + "/main", "--markdown",
                               dir + "/comment.md"});
  const Result r = Plumb(pr_run, dir);
  INFO(r.err);
  CHECK(r.code == 0);
  // The baseline of pipeline P is main/P; "comment.md" becomes comment.P.md.
  CHECK(ReadFile(dir + "/comment.echo.md").rfind("### plumb drift: `two` — exit 0", 0) == 0);
  CHECK(ReadFile(dir + "/comment.again.md").rfind("### plumb drift: `two` — exit 0", 0) == 0);
  CHECK(r.out.find("(" + dir + "/main/again)") != std::string::npos);
}

TEST_CASE("plumb report re-renders a stored run without its pipeline") {
  const std::string dir = MakeTempDir();
  const Result scored =
      Plumb({"score", kRuns + "suite.yaml", kRuns + "base.jsonl", "--out", dir + "/base"}, dir);
  REQUIRE(scored.code == 0);
  const std::string run = dir + "/base";
  const Result r =
      Plumb({"report", run, "--junit", dir + "/r.xml", "--markdown", dir + "/r.md"}, dir);
  INFO(r.err);
  CHECK(r.code == 0);
  CHECK(LastLine(r.out) == "exit 0: all 2 floors held");
  // The re-rendered table is the one `plumb score` printed, from its metric rows to the verdict
  // (the header line holds the wall time, which only the live run knows).
  auto table = [](const std::string& text) {
    const size_t start = text.find("\n  metric");
    // score ends its table with "run written to DIR", then the exit line; report has no DIR.
    size_t end = text.find("\nrun written to ");
    if (end == std::string::npos) end = text.find("\nexit ");
    REQUIRE(start != std::string::npos);
    REQUIRE(end != std::string::npos);
    return text.substr(start, end - start);
  };
  CHECK(table(r.out) == table(scored.out));
  CHECK(ReadFile(dir + "/r.md").rfind("### plumb: `drift-fixture` / `predictions` — exit 0\n", 0) ==
        0);
  // 400 cases and the 2 floors, which held.
  CHECK(ReadFile(dir + "/r.xml").find("tests=\"402\" failures=\"50\" errors=\"0\"") !=
        std::string::npos);
  const Result json = Plumb({"report", run, "--json"}, dir);
  CHECK(nlohmann::json::parse(json.out)["suite"]["name"] == "drift-fixture");
  const Result missing = Plumb({"report", dir + "/nothing"}, dir);
  CHECK(missing.code == 2);
}
