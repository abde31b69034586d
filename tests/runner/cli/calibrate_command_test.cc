// Grader calibration end to end, as a user runs it: the real plumb executable, the real
// demo-grader (fixtures/demo-grader) as the grader, echo-pipeline as the pipeline under test,
// human labels in a JSONL file, the record calibration/NAME.json beside the suite, and the
// fail-closed gate that reads it (plumb run, check and drift refuse to gate on a grade whose
// grader is not calibrated).
#include <catch2/catch.hpp>
#include <cstdio>
#include <fstream>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "tests/support/plumb_process.h"

using namespace plumb_test;

namespace {

// Four cases; the echo pipeline answers each with its question (see grading_test.cc):
// grade.correctness is 1 on hit and unknown, 0 on miss and negated.
const char kCases[] =
    "cases:\n"
    "  - {id: hit, question: 'Boarding closes ten minutes before departure', answers: [10 "
    "minutes]}\n"
    "  - {id: miss, question: 'Boarding closes at noon', answers: [10 minutes]}\n"
    "  - {id: negated, question: 'Boarding does not close ten minutes early', answers: [10 "
    "minutes]}\n"
    "  - {id: unknown, question: \"I don't know\", answers: []}\n";

std::string Suite(const std::string& dir, const std::string& top = "",
                  const std::string& grader_extra = "") {
  return "plumb: 1\nname: calibrated\n" + top +
         "graders:\n  correctness: {pipeline: judge, rubric: rubric.md" + grader_extra +
         "}\n"
         "pipelines:\n"
         "  echo: {command: [" +
         kFixtures + "echo-pipeline]}\n  judge: {command: [" + kFixtures + "demo-grader, --log, " +
         dir + "/grader.log], timeout: 10s}\n" + kCases;
}

// `agree` answers per verdict that the demo grader judges as the person does, then `pass_but`
// answers the person passes and the grader fails, and `fail_but` answers the person fails and
// the grader passes. All are answers to case "hit" (gold "10 minutes"): an answer with "10
// minutes" passes the grader, one with "noon" fails it.
std::string Labels(int agree, int pass_but, int fail_but) {
  std::string out = "# test labels (invented)\n";
  auto line = [&](const std::string& answer, const char* label) {
    out += nlohmann::json({{"id", "hit"}, {"answer", answer}, {"label", label}, {"by", "tester"}})
               .dump() +
           "\n";
  };
  for (int i = 0; i < agree; ++i) {
    line("Boarding closes 10 minutes before departure (" + std::to_string(i) + ")", "pass");
    line("Boarding closes at noon (" + std::to_string(i) + ")", "fail");
  }
  for (int i = 0; i < pass_but; ++i) line("At noon, or so (" + std::to_string(i) + ")", "pass");
  for (int i = 0; i < fail_but; ++i) {
    line("10 minutes after noon (" + std::to_string(i) + ")", "fail");
  }
  return out;
}

size_t LogLines(const std::string& path) {
  std::ifstream in(path);
  size_t n = 0;
  for (std::string line; std::getline(in, line);) ++n;
  return n;
}

}  // namespace

TEST_CASE("plumb calibrate reports kappa with the base rate and writes a record") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/rubric.md", "Pass an answer that states a gold answer.\n");
  WriteFile(dir + "/s.yaml", Suite(dir));
  // 28 + 3 human passes, 2 + 27 human fails; the grader passes 28 + 2.
  WriteFile(
      dir + "/labels.jsonl",
      Labels(27, 3, 2) + "{\"id\": \"hit\", \"answer\": \"10 minutes\", \"label\": \"pass\"}\n");
  const Result r =
      Plumb({"calibrate", dir + "/s.yaml", "--grader", "correctness", "--labels",
             dir + "/labels.jsonl", "--repeat", "2", "--json", "--grade-cache", dir + "/g.sqlite"},
            dir);
  INFO(r.err);
  REQUIRE(r.code == 0);
  const nlohmann::json out = nlohmann::json::parse(r.out);
  CHECK(out["n"] == 60);
  CHECK(out["table"]["pass_pass"] == 28);
  CHECK(out["table"]["pass_fail"] == 3);
  CHECK(out["table"]["fail_pass"] == 2);
  CHECK(out["table"]["fail_fail"] == 27);
  CHECK(out["base_rate"].get<double>() == Approx(31.0 / 60));
  CHECK(out["grader_pass_rate"].get<double>() == Approx(30.0 / 60));
  // sklearn.metrics.cohen_kappa_score on these 60 pairs (python3-sklearn 1.2.1):
  // 0.8333333333333334.
  CHECK(out["kappa"]["value"].get<double>() == Approx(0.8333333333333334).epsilon(1e-12));
  CHECK(out["kappa"]["interval"][0].get<double>() < 0.8333);
  CHECK(out["kappa"]["interval"][1].get<double>() > 0.8333);
  CHECK(out["sensitivity"]["value"].get<double>() == Approx(28.0 / 31));
  CHECK(out["specificity"]["value"].get<double>() == Approx(27.0 / 29));
  // The demo grader is deterministic: both repeats agree on every answer.
  CHECK(out["self_consistency"]["value"] == 1.0);
  CHECK(out["self_consistency"]["repeats"] == 2);
  // Repeats are real calls: 60 answers x 2.
  CHECK(LogLines(dir + "/grader.log") == 120);
  // Every disagreement, a wrong answer let through first.
  REQUIRE(out["disagreements"].size() == 5);
  CHECK(out["disagreements"][0]["label"] == "fail");
  CHECK(out["disagreements"][1]["label"] == "fail");
  CHECK(out["disagreements"][2]["label"] == "pass");
  CHECK(out["disagreements"][2]["reason"].get<std::string>().find("closest gold") !=
        std::string::npos);
  // The record beside the suite is bound to the grader's identity.
  const nlohmann::json record =
      nlohmann::json::parse(ReadFile(dir + "/calibration/correctness.json"));
  CHECK(record["identity"].get<std::string>().size() == 64);
  CHECK(record["n"] == 60);
  // The terminal form names kappa with the base rate, sensitivity, specificity and consistency.
  const Result text = Plumb({"calibrate", dir + "/s.yaml", "--grader", "correctness", "--labels",
                             dir + "/labels.jsonl", "--grade-cache", dir + "/g.sqlite"},
                            dir);
  CHECK(text.code == 0);
  for (const char* word : {"Cohen's kappa", "with base rate 0.517", "sensitivity", "specificity",
                           "self-consistency", "5 disagreements, worst first"}) {
    INFO(word);
    CHECK(text.out.find(word) != std::string::npos);
  }
  // The second run asked the cache, not the grader.
  CHECK(LogLines(dir + "/grader.log") == 120);
}

TEST_CASE("a grade in case_pass is refused without a calibration record, naming the fix") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/rubric.md", "Pass an answer that states a gold answer.\n");
  WriteFile(dir + "/s.yaml", Suite(dir, "case_pass: {grade.correctness: 1}\n"));
  const Result run = Plumb({"run", dir + "/s.yaml", "--out", dir + "/out"}, dir);
  CHECK(run.code == 2);
  CHECK(run.err.find("grade.correctness stands in case_pass") != std::string::npos);
  CHECK(run.err.find("has no calibration record") != std::string::npos);
  CHECK(run.err.find("plumb calibrate " + dir + "/s.yaml --grader correctness") !=
        std::string::npos);
  CHECK(LogLines(dir + "/grader.log") == 0);  // nothing ran
  const Result check = Plumb({"check", dir + "/s.yaml"}, dir);
  CHECK(check.code == 2);
  CHECK(check.err.find("plumb calibrate") != std::string::npos);
  for (const char* top :
       {"floors: {grade.correctness: 0.5}\n", "correct_from: [exact_match, grade.correctness]\n"}) {
    WriteFile(dir + "/s.yaml", Suite(dir, top));
    const Result refused = Plumb({"run", dir + "/s.yaml", "--out", dir + "/out"}, dir);
    INFO(top);
    CHECK(refused.code == 2);
    CHECK(refused.err.find("plumb calibrate") != std::string::npos);
  }
}

TEST_CASE("a calibrated grade gates until its rubric changes, then the record is stale") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/rubric.md", "Pass an answer that states a gold answer.\n");
  WriteFile(dir + "/s.yaml", Suite(dir, "case_pass: {grade.correctness: 1}\n"));
  WriteFile(dir + "/labels.jsonl", Labels(30, 0, 0));
  const Result calibrated = Plumb(
      {"calibrate", dir + "/s.yaml", "--grader", "correctness", "--labels", dir + "/labels.jsonl"},
      dir);
  INFO(calibrated.err);
  REQUIRE(calibrated.code == 0);
  CHECK(calibrated.out.find("grade.correctness may gate") != std::string::npos);
  const Result run = Plumb({"run", dir + "/s.yaml", "--out", dir + "/out", "--json"}, dir);
  INFO(run.err);
  CHECK(run.code == 0);
  const nlohmann::json record = nlohmann::json::parse(run.out);
  const nlohmann::json c = record["grading"]["graders"]["correctness"]["calibration"];
  CHECK(c["status"] == "calibrated");
  CHECK(c["gate"] == true);
  CHECK(c["kappa"] == 1.0);
  CHECK(c["base_rate"] == 0.5);
  CHECK(c["n"] == 60);

  // A new rubric is a new grader: the record no longer speaks for it.
  WriteFile(dir + "/rubric.md", "Pass an answer that states a gold answer in other words too.\n");
  const Result stale = Plumb({"run", dir + "/s.yaml", "--out", dir + "/out2"}, dir);
  CHECK(stale.code == 2);
  CHECK(stale.err.find("stale calibration record") != std::string::npos);
  CHECK(stale.err.find("plumb calibrate") != std::string::npos);
}

TEST_CASE("too few labels or too little agreement keep a grade from gating") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/rubric.md", "Pass an answer that states a gold answer.\n");
  WriteFile(dir + "/labels.jsonl", Labels(30, 0, 0));
  WriteFile(dir + "/s.yaml",
            Suite(dir, "case_pass: {grade.correctness: 1}\n", ", min_labels: 100"));
  REQUIRE(Plumb({"calibrate", dir + "/s.yaml", "--grader", "correctness", "--labels",
                 dir + "/labels.jsonl"},
                dir)
              .code == 0);
  const Result few = Plumb({"run", dir + "/s.yaml", "--out", dir + "/out"}, dir);
  CHECK(few.code == 2);
  CHECK(few.err.find("was calibrated on 60 labelled answers, fewer than min_labels 100") !=
        std::string::npos);
  // Half the labels disagree: kappa 0, far below min_kappa.
  WriteFile(dir + "/labels.jsonl", Labels(15, 15, 15));
  WriteFile(dir + "/s.yaml", Suite(dir, "case_pass: {grade.correctness: 1}\n"));
  const Result low = Plumb(
      {"calibrate", dir + "/s.yaml", "--grader", "correctness", "--labels", dir + "/labels.jsonl"},
      dir);
  CHECK(low.code == 0);
  CHECK(low.out.find("grade.correctness may not gate") != std::string::npos);
  const Result refused = Plumb({"run", dir + "/s.yaml", "--out", dir + "/out"}, dir);
  CHECK(refused.code == 2);
  CHECK(refused.err.find("below min_kappa 0.60") != std::string::npos);
}

TEST_CASE("an uncalibrated grade is shown as such and cannot gate a drift") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/rubric.md", "Pass an answer that states a gold answer.\n");
  WriteFile(dir + "/s.yaml", Suite(dir));
  const Result base = Plumb({"run", dir + "/s.yaml", "--pipeline", "echo", "--out", dir + "/a",
                             "--markdown", dir + "/a.md", "--html", dir + "/a.html"},
                            dir);
  INFO(base.err);
  REQUIRE(base.code == 0);
  size_t row = base.out.find("grade.correctness");
  REQUIRE(row != std::string::npos);
  CHECK(base.out.substr(row, base.out.find('\n', row) - row).find("uncalibrated") !=
        std::string::npos);
  CHECK(ReadFile(dir + "/a.md").find("`grade.correctness` (uncalibrated)") != std::string::npos);
  CHECK(ReadFile(dir + "/a.html").find("uncalibrated (not checked against human labels") !=
        std::string::npos);
  REQUIRE(Plumb({"run", dir + "/s.yaml", "--out", dir + "/b"}, dir).code == 0);
  const Result drift =
      Plumb({"drift", dir + "/a", dir + "/b", "--gate", "correct,grade.correctness"}, dir);
  CHECK(drift.code == 2);
  CHECK(drift.err.find("--gate grade.correctness") != std::string::npos);
  CHECK(drift.err.find("plumb calibrate " + dir + "/s.yaml --grader correctness") !=
        std::string::npos);
  // Without the grade in the gate the drift runs.
  CHECK(Plumb({"drift", dir + "/a", dir + "/b", "--gate", "correct"}, dir).code == 0);

  // Once calibrated, `plumb report` and the summary show kappa and the base rate beside it.
  WriteFile(dir + "/labels.jsonl", Labels(30, 0, 0));
  REQUIRE(Plumb({"calibrate", dir + "/s.yaml", "--grader", "correctness", "--labels",
                 dir + "/labels.jsonl"},
                dir)
              .code == 0);
  const Result graded = Plumb({"run", dir + "/s.yaml", "--out", dir + "/c"}, dir);
  row = graded.out.find("grade.correctness");
  REQUIRE(row != std::string::npos);
  CHECK(graded.out.substr(row, graded.out.find('\n', row) - row)
            .find("kappa 1.00 [1.00, 1.00], base rate 0.50, n 60") != std::string::npos);
  CHECK(Plumb({"drift", dir + "/a", dir + "/c", "--gate", "grade.correctness"}, dir).code == 0);
}

TEST_CASE("plumb label writes a blind sheet, stratified by verdict, in a seeded order") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/rubric.md", "Pass an answer that states a gold answer.\n");
  WriteFile(dir + "/s.yaml", Suite(dir));
  REQUIRE(Plumb({"run", dir + "/s.yaml", "--out", dir + "/out"}, dir).code == 0);
  const Result r = Plumb(
      {"label", dir + "/out", "--out", dir + "/sheet.jsonl", "--sample", "2", "--seed", "5"}, dir);
  INFO(r.err);
  REQUIRE(r.code == 0);
  const std::vector<nlohmann::json> lines = ReadJournal(dir + "/sheet.jsonl");
  REQUIRE(lines.size() == 2);
  int graded_pass = 0;
  for (const nlohmann::json& line : lines) {
    CHECK(line["label"] == "");
    CHECK(line["by"] == "");
    CHECK(line.count("grade") == 0);
    CHECK(line.count("grades") == 0);
    CHECK(line.count("reason") == 0);
    CHECK(line["question"].is_string());
    CHECK(line["gold"].is_array());
    const std::string id = line["id"];
    graded_pass += id == "hit" || id == "unknown" ? 1 : 0;
  }
  // Two strata (grader pass: hit, unknown; grader fail: miss, negated): one answer from each.
  CHECK(graded_pass == 1);
  // The same seed draws the same sheet; an existing file (it may hold labels) is refused.
  const std::string first = ReadFile(dir + "/sheet.jsonl");
  const Result again = Plumb(
      {"label", dir + "/out", "--out", dir + "/sheet.jsonl", "--sample", "2", "--seed", "5"}, dir);
  CHECK(again.code == 2);
  CHECK(again.err.find("already exists") != std::string::npos);
  REQUIRE(
      Plumb({"label", dir + "/out", "--out", dir + "/sheet2.jsonl", "--sample", "2", "--seed", "5"},
            dir)
          .code == 0);
  CHECK(ReadFile(dir + "/sheet2.jsonl") == first);
  // Without --sample every answer is on the sheet.
  REQUIRE(Plumb({"label", dir + "/out", "--out", dir + "/all.jsonl"}, dir).code == 0);
  CHECK(ReadJournal(dir + "/all.jsonl").size() == 4);
}

TEST_CASE("a labels file with a bad line is refused at its line, nothing graded") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/rubric.md", "Pass an answer that states a gold answer.\n");
  WriteFile(dir + "/s.yaml", Suite(dir));
  WriteFile(dir + "/labels.jsonl",
            "{\"id\": \"hit\", \"answer\": \"10 minutes\", \"label\": \"pass\"}\n"
            "{\"id\": \"nope\", \"answer\": \"10 minutes\", \"label\": \"pass\"}\n"
            "{\"id\": \"hit\", \"answer\": \"x\", \"label\": \"maybe\"}\n");
  const Result r = Plumb(
      {"calibrate", dir + "/s.yaml", "--grader", "correctness", "--labels", dir + "/labels.jsonl"},
      dir);
  CHECK(r.code == 2);
  CHECK(r.err.find(dir + "/labels.jsonl:2:1: error: case 'nope' is not in") != std::string::npos);
  CHECK(r.err.find(dir + "/labels.jsonl:3:1: error: label 'maybe' is neither") !=
        std::string::npos);
  CHECK(LogLines(dir + "/grader.log") == 0);
}
