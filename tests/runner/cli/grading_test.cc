// Graders end to end, as a user runs them: the real plumb executable, the real demo-grader
// (fixtures/demo-grader) in both subprocess modes as the grader, echo-pipeline as the pipeline
// under test (it answers each question with the question itself), the verdict cache in a real
// SQLite file, and the misbehaving fixture pipelines as graders that crash, hang or answer
// garbage. The demo grader's request log counts the calls it received.
#include <signal.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <cstdio>
#include <fstream>
#include <map>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "tests/support/plumb_process.h"

using namespace plumb_test;

namespace {

// Four cases. The echo pipeline answers with the question, so:
//   hit:     "Boarding closes ten minutes before departure" vs gold "10 minutes": every gold
//            word present (ten read as 10): pass.
//   miss:    "Boarding closes at noon" vs "10 minutes": fail.
//   negated: "Boarding does not close ten minutes early" vs "10 minutes": negated: fail.
//   unknown: "I don't know" on an abstention case (answers: []): pass.
// So grade.correctness = 1, 0, 0, 1; mean 0.5.
const char kCases[] =
    "cases:\n"
    "  - {id: hit, question: 'Boarding closes ten minutes before departure', answers: [10 "
    "minutes]}\n"
    "  - {id: miss, question: 'Boarding closes at noon', answers: [10 minutes]}\n"
    "  - {id: negated, question: 'Boarding does not close ten minutes early', answers: [10 "
    "minutes]}\n"
    "  - {id: unknown, question: \"I don't know\", answers: []}\n";

std::string Suite(const std::string& dir, const std::string& mode, const std::string& extra = "") {
  WriteFile(dir + "/rubric.md", "Pass an answer that states a gold answer.\n");
  return "plumb: 1\nname: graded\n"
         "graders:\n  correctness: {pipeline: judge, rubric: rubric.md" +
         extra +
         "}\n"
         "pipelines:\n"
         "  echo: {command: [" +
         kFixtures + "echo-pipeline]}\n  judge: {command: [" + kFixtures + "demo-grader, --log, " +
         dir + "/grader.log], mode: " + mode + ", timeout: 10s}\n" + kCases;
}

size_t LogLines(const std::string& path) {
  std::ifstream in(path);
  size_t n = 0;
  for (std::string line; std::getline(in, line);) ++n;
  return n;
}

nlohmann::json RunJson(const std::string& dir, const std::vector<std::string>& args, int* code) {
  const Result r = Plumb(args, dir);
  INFO(r.err);
  *code = r.code;
  REQUIRE(!r.out.empty());
  return nlohmann::json::parse(r.out);
}

}  // namespace

TEST_CASE("the demo grader grades every answer in both subprocess modes, then from the cache") {
  for (const std::string mode : {"persistent", "per-case"}) {
    INFO(mode);
    const std::string dir = MakeTempDir();
    WriteFile(dir + "/s.yaml", Suite(dir, mode));
    const std::vector<std::string> args = {"run",           dir + "/s.yaml",  "--out",
                                           dir + "/out",    "--overwrite",    "--json",
                                           "--grade-cache", dir + "/g.sqlite"};
    int code = -1;
    const nlohmann::json run = RunJson(dir, args, &code);
    CHECK(code == 0);  // no floors; no case errored
    CHECK(run["aggregates"]["metrics"]["grade.correctness"]["mean"] == 0.5);
    CHECK(run["aggregates"]["metrics"]["grade.correctness"]["n"] == 4);
    CHECK(run["grading"]["requested"] == 4);
    CHECK(run["grading"]["from_cache"] == 0);
    CHECK(run["grading"]["graders"]["correctness"]["graded"] == 4);
    CHECK(run["grading"]["graders"]["correctness"]["identity"].get<std::string>().size() == 64);
    CHECK(LogLines(dir + "/grader.log") == 4);
    const auto journal = ReadJournal(dir + "/out/cases.jsonl");
    REQUIRE(journal.size() == 4);
    std::map<std::string, nlohmann::json> by_id;
    for (const auto& record : journal) by_id[record["id"]] = record;
    CHECK(by_id["hit"]["scores"]["grade.correctness"] == 1.0);
    CHECK(by_id["miss"]["scores"]["grade.correctness"] == 0.0);
    CHECK(by_id["negated"]["scores"]["grade.correctness"] == 0.0);
    CHECK(by_id["unknown"]["scores"]["grade.correctness"] == 1.0);
    CHECK(by_id["negated"]["grades"]["correctness"]["reason"].get<std::string>().find("negates") !=
          std::string::npos);

    // Unchanged answers: the second run asks the grader nothing (its own log says so).
    const nlohmann::json again = RunJson(dir, args, &code);
    CHECK(again["grading"]["requested"] == 0);
    CHECK(again["grading"]["from_cache"] == 4);
    CHECK(again["aggregates"]["metrics"]["grade.correctness"]["mean"] == 0.5);
    CHECK(LogLines(dir + "/grader.log") == 4);
  }
}

TEST_CASE("plumb grade grades a stored run without calling the pipeline, resumably, from cache") {
  const std::string dir = MakeTempDir();
  // First a run of a suite without graders (the pipeline is called here, and only here).
  std::string plain = Suite(dir, "persistent");
  plain.erase(plain.find("graders:"), plain.find("pipelines:") - plain.find("graders:"));
  WriteFile(dir + "/s.yaml", plain);
  int code = -1;
  RunJson(dir, {"run", dir + "/s.yaml", "--out", dir + "/out", "--json"}, &code);
  REQUIRE(code == 0);
  const std::string before = ReadFile(dir + "/out/cases.jsonl");
  CHECK(before.find("grade.correctness") == std::string::npos);
  // Then graders are added to the suite and the stored run is graded.
  WriteFile(dir + "/s.yaml", Suite(dir, "persistent"));
  const std::vector<std::string> grade = {"grade", dir + "/out", "--json", "--grade-cache",
                                          dir + "/g.sqlite"};
  nlohmann::json run = RunJson(dir, grade, &code);
  CHECK(code == 0);
  CHECK(run["aggregates"]["metrics"]["grade.correctness"]["mean"] == 0.5);
  CHECK(run["grading"]["requested"] == 4);
  CHECK(LogLines(dir + "/grader.log") == 4);
  const auto journal = ReadJournal(dir + "/out/cases.jsonl");
  REQUIRE(journal.size() == 4);
  for (const auto& record : journal) CHECK(record["scores"].count("grade.correctness") == 1);
  // The answers and latencies are the pipeline's, untouched.
  CHECK(nlohmann::json::parse(before.substr(0, before.find('\n')))["latency_ms"] ==
        journal[0]["latency_ms"]);
  CHECK(ReadFile(dir + "/out/run.json").find("\"grade.correctness\"") != std::string::npos);
  // Warm cache: zero grader calls.
  run = RunJson(dir, grade, &code);
  CHECK(run["grading"]["requested"] == 0);
  CHECK(run["grading"]["from_cache"] == 4);
  CHECK(LogLines(dir + "/grader.log") == 4);
  // An unknown --grader is a usage error naming the graders there are.
  const Result unknown = Plumb({"grade", dir + "/out", "--grader", "nope"}, dir);
  CHECK(unknown.code == 2);
  CHECK(unknown.err.find("(it has: correctness)") != std::string::npos);
}

TEST_CASE("a grader that crashes, hangs or answers garbage costs that grade only") {
  const std::string dir = MakeTempDir();
  // The fault pipelines misbehave on a trigger word in the question, which the grader request
  // carries; elsewhere they answer {"answer": ...}, which is no grade either.
  WriteFile(dir + "/s.yaml",
            "plumb: 1\nname: faults\n"
            "graders:\n"
            "  crash: {pipeline: crash}\n  hang: {pipeline: hang}\n  garbage: {pipeline: garbage}\n"
            "pipelines:\n"
            "  echo: {command: [" +
                kFixtures + "echo-pipeline]}\n  crash: {command: [" + kFixtures +
                "crash-pipeline], timeout: 5s}\n  hang: {command: [" + kFixtures +
                "hang-pipeline], timeout: 500ms}\n  garbage: {command: [" + kFixtures +
                "garbage-pipeline], timeout: 5s}\n"
                "cases:\n"
                "  - {id: c1, question: please crash, answers: [please crash]}\n"
                "  - {id: c2, question: please hang, answers: [please hang]}\n"
                "  - {id: c3, question: garbage please, answers: [garbage please]}\n");
  int code = -1;
  const nlohmann::json run = RunJson(
      dir, {"run", dir + "/s.yaml", "--out", dir + "/out", "--json", "--no-grade-cache"}, &code);
  // The pipeline under test answered every case: no case error, exit 0.
  CHECK(code == 0);
  CHECK(run["aggregates"]["errored"] == 0);
  CHECK(run["aggregates"]["metrics"]["exact_match"]["mean"] == 1.0);
  for (const char* grader : {"crash", "hang", "garbage"}) {
    INFO(grader);
    CHECK(run["aggregates"]["metrics"].count(std::string("grade.") + grader) == 0);
    CHECK(run["grading"]["graders"][grader]["failed"] == 3);
  }
  CHECK(run["grading"]["cache"].is_null());
  const auto journal = ReadJournal(dir + "/out/cases.jsonl");
  REQUIRE(journal.size() == 3);
  CHECK(journal[1]["grades"]["hang"]["error"].get<std::string>().find("timed out") !=
        std::string::npos);
  CHECK(journal[2]["grades"]["garbage"]["error"].get<std::string>().find("not a JSON object") !=
        std::string::npos);
  CHECK(journal[0]["grades"]["crash"]["error"].get<std::string>().find("grader call failed") !=
        std::string::npos);
}

TEST_CASE("a corrupt cache file is a clear error, never a silent miss") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/s.yaml", Suite(dir, "persistent"));
  WriteFile(dir + "/g.sqlite", std::string(8192, 'x'));
  const Result r = Plumb(
      {"run", dir + "/s.yaml", "--out", dir + "/out", "--grade-cache", dir + "/g.sqlite"}, dir);
  CHECK(r.code == 2);
  CHECK(r.err.find("grade cache " + dir + "/g.sqlite") != std::string::npos);
  CHECK(r.err.find("not a usable SQLite database") != std::string::npos);
  CHECK(LogLines(dir + "/grader.log") == 0);
}

TEST_CASE("a grader that is the pipeline under test is refused unless allowed") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/s.yaml", Suite(dir, "persistent"));
  const Result r = Plumb(
      {"run", dir + "/s.yaml", "--pipeline", "judge", "--out", dir + "/out", "--no-grade-cache"},
      dir);
  CHECK(r.code == 2);
  CHECK(r.err.find("a model grading its own answers is a known bias") != std::string::npos);
  CHECK(r.err.find("same_as_pipeline: allowed") != std::string::npos);
  WriteFile(dir + "/s.yaml", Suite(dir, "persistent", ", same_as_pipeline: allowed"));
  const Result allowed = Plumb(
      {"run", dir + "/s.yaml", "--pipeline", "judge", "--out", dir + "/out", "--no-grade-cache"},
      dir);
  CHECK(allowed.code != 2);
}

TEST_CASE("two runs at once share one cache file") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/s.yaml", Suite(dir, "persistent"));
  const std::string a = MakeTempDir(), b = MakeTempDir();
  const Process first =
      Start({"run", dir + "/s.yaml", "--out", a + "/out", "--grade-cache", dir + "/g.sqlite"}, a);
  const Process second =
      Start({"run", dir + "/s.yaml", "--out", b + "/out", "--grade-cache", dir + "/g.sqlite"}, b);
  CHECK(Wait(first) == 0);
  CHECK(Wait(second) == 0);
  INFO(ReadFile(a + "/stderr.txt") + ReadFile(b + "/stderr.txt"));
  // Each answer was graded at most twice (both may have asked before either stored it); a third
  // run finds all four in the cache.
  CHECK(LogLines(dir + "/grader.log") <= 8);
  int code = -1;
  const nlohmann::json third = RunJson(
      dir,
      {"run", dir + "/s.yaml", "--out", dir + "/out", "--json", "--grade-cache", dir + "/g.sqlite"},
      &code);
  CHECK(third["grading"]["requested"] == 0);
  CHECK(third["grading"]["from_cache"] == 4);
}

TEST_CASE("a pipelines file replaces the pipelines under test and keeps the graders' pipelines") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/s.yaml", Suite(dir, "persistent"));
  // The file defines only the pipeline under test (echo under another name): the suite's judge
  // pipeline is kept, so the run is graded as without the file.
  WriteFile(dir + "/p.yaml",
            "pipelines:\n  echo-again: {command: [" + kFixtures + "echo-pipeline]}\n");
  int code = -1;
  const nlohmann::json run = RunJson(dir,
                                     {"run", dir + "/s.yaml", "--pipelines", dir + "/p.yaml",
                                      "--out", dir + "/out", "--json", "--no-grade-cache"},
                                     &code);
  CHECK(code == 0);
  CHECK(run["pipeline"]["name"] == "echo-again");  // the file's first pipeline is the default
  CHECK(run["aggregates"]["metrics"]["grade.correctness"]["mean"] == 0.5);
  CHECK(LogLines(dir + "/grader.log") == 4);
  // A pipeline of the grader's name in the file replaces the suite's: here one that answers
  // {"answer": ...} (garbage-pipeline without its trigger word), no grade, so every grade fails and
  // the log stays as it was.
  WriteFile(dir + "/p.yaml", "pipelines:\n  echo-again: {command: [" + kFixtures +
                                 "echo-pipeline]}\n  judge: {command: [" + kFixtures +
                                 "garbage-pipeline]}\n");
  const nlohmann::json replaced =
      RunJson(dir,
              {"run", dir + "/s.yaml", "--pipelines", dir + "/p.yaml", "--out", dir + "/out",
               "--overwrite", "--json", "--no-grade-cache"},
              &code);
  CHECK(code == 0);
  CHECK(replaced["grading"]["graders"]["correctness"]["failed"] == 4);
  CHECK(LogLines(dir + "/grader.log") == 4);
}

TEST_CASE("plumb run grades each answer while the pipeline is still answering the next cases") {
  const std::string dir = MakeTempDir();
  // The pipeline under test (one job, so the cases go in order) answers case "first" at once;
  // on case "last" it waits until the grader's log has a line, that is until the grader was
  // asked about "first", and says whether that happened within 10 s. Grading only after the
  // last case would leave the log empty the whole time.
  WriteFile(dir + "/slow.sh",
            "read -r line\n"
            "case \"$line\" in\n"
            "  *'\"id\":\"last\"'*)\n"
            "    i=0\n"
            "    while [ ! -s '" +
                dir +
                "/grader.log' ] && [ $i -lt 200 ]; do sleep 0.05; i=$((i+1)); done\n"
                "    if [ -s '" +
                dir +
                "/grader.log' ]; then a='graded meanwhile'; else a='not graded meanwhile'; fi ;;\n"
                "  *) a='Boarding closes ten minutes before departure' ;;\n"
                "esac\n"
                "printf '{\"answer\": \"%s\"}\\n' \"$a\"\n");
  WriteFile(dir + "/rubric.md", "Pass an answer that states a gold answer.\n");
  WriteFile(dir + "/s.yaml",
            "plumb: 1\nname: overlap\n"
            "graders:\n  correctness: {pipeline: judge, rubric: rubric.md}\n"
            "pipelines:\n"
            "  slow: {command: [/bin/sh, " +
                dir +
                "/slow.sh], mode: per-case, jobs: 1, timeout: 30s}\n"
                "  judge: {command: [" +
                kFixtures + "demo-grader, --log, " + dir +
                "/grader.log], timeout: 10s}\n"
                "cases:\n"
                "  - {id: first, question: q1, answers: [10 minutes]}\n"
                "  - {id: last, question: q2, answers: [graded meanwhile]}\n");
  int code = -1;
  const nlohmann::json run = RunJson(
      dir, {"run", dir + "/s.yaml", "--out", dir + "/out", "--json", "--no-grade-cache"}, &code);
  CHECK(code == 0);
  std::map<std::string, nlohmann::json> by_id;
  for (const auto& record : ReadJournal(dir + "/out/cases.jsonl")) by_id[record["id"]] = record;
  CHECK(by_id["last"]["answer"] == "graded meanwhile");
  // Both answers were graded (demo-grader: every gold word present), once each.
  CHECK(by_id["first"]["scores"]["grade.correctness"] == 1.0);
  CHECK(by_id["last"]["scores"]["grade.correctness"] == 1.0);
  CHECK(LogLines(dir + "/grader.log") == 2);
  CHECK(run["grading"]["requested"] == 2);
}

TEST_CASE("merging graded shards keeps the grades and sums the grading counts") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/s.yaml", Suite(dir, "persistent"));
  int code = -1;
  const nlohmann::json whole = RunJson(dir,
                                       {"run", dir + "/s.yaml", "--out", dir + "/whole", "--json",
                                        "--grade-cache", dir + "/g.sqlite"},
                                       &code);
  REQUIRE(code == 0);
  // The shards grade from a cache of their own, so each asks the grader for its cases.
  for (const char* shard : {"1/2", "2/2"}) {
    const std::string out = dir + "/shard" + std::string(1, shard[0]);
    RunJson(dir,
            {"run", dir + "/s.yaml", "--shard", shard, "--out", out, "--json", "--grade-cache",
             dir + "/shards.sqlite"},
            &code);
    REQUIRE(code == 0);
  }
  const nlohmann::json merged = RunJson(
      dir, {"merge", dir + "/shard1", dir + "/shard2", "--out", dir + "/merged", "--json"}, &code);
  CHECK(code == 0);
  CHECK(merged["aggregates"]["metrics"]["grade.correctness"] ==
        whole["aggregates"]["metrics"]["grade.correctness"]);
  CHECK(merged["grading"]["requested"] == 4);
  CHECK(merged["grading"]["from_cache"] == 0);
  CHECK(merged["grading"]["cache"] == dir + "/shards.sqlite");
  CHECK(merged["grading"]["graders"]["correctness"]["graded"] == 4);
  CHECK(merged["grading"]["graders"]["correctness"]["identity"] ==
        whole["grading"]["graders"]["correctness"]["identity"]);
}

TEST_CASE("an interrupted plumb grade leaves the run as it was and resumes from the cache") {
  const std::string dir = MakeTempDir();
  // A grader (a shell script, one process per answer, four at once) that logs each request and
  // passes every answer at once, except the answer to case "miss" while the file 'hold'
  // exists: then it waits.
  WriteFile(dir + "/grader.sh",
            "read -r line\n"
            "printf '%s\\n' \"$line\" >> '" +
                dir +
                "/asked.log'\n"
                "case \"$line\" in *'\"id\":\"miss\"'*)\n"
                "  while [ -e '" +
                dir +
                "/hold' ]; do sleep 0.05; done ;;\n"
                "esac\n"
                "echo '{\"verdict\": \"pass\"}'\n"
                "printf '%s\\n' answered >> '" +
                dir + "/answered.log'\n");
  WriteFile(dir + "/rubric.md", "Pass an answer that states a gold answer.\n");
  WriteFile(dir + "/s.yaml",
            "plumb: 1\nname: graded\n"
            "graders:\n  correctness: {pipeline: judge, rubric: rubric.md}\n"
            "pipelines:\n  echo: {command: [" +
                kFixtures + "echo-pipeline]}\n  judge: {command: [/bin/sh, " + dir +
                "/grader.sh], mode: per-case, jobs: 4, timeout: 60s}\n" + kCases);
  int code = -1;
  // A run first, with the grader answering everything, and a cache of its own.
  RunJson(dir,
          {"run", dir + "/s.yaml", "--out", dir + "/out", "--json", "--grade-cache",
           dir + "/run.sqlite"},
          &code);
  REQUIRE(code == 0);
  const std::string journal = ReadFile(dir + "/out/cases.jsonl");
  const std::string record = ReadFile(dir + "/out/run.json");
  // Then plumb grade with a fresh cache, stopped while the grader holds one answer.
  WriteFile(dir + "/hold", "");
  WriteFile(dir + "/asked.log", "");
  WriteFile(dir + "/answered.log", "");
  const std::string work = MakeTempDir();
  const Process grade =
      Start({"grade", dir + "/out", "--json", "--grade-cache", dir + "/grade.sqlite"}, work);
  for (int i = 0; i < 400 && LogLines(dir + "/asked.log") < 4; ++i) usleep(50000);
  REQUIRE(LogLines(dir + "/asked.log") == 4);  // three answered, "miss" held
  // The three replies were written; give plumb a moment past their exit to take them in, so
  // the interrupt finds three grades given (a grade still in flight would be asked again).
  for (int i = 0; i < 400 && LogLines(dir + "/answered.log") < 3; ++i) usleep(50000);
  REQUIRE(LogLines(dir + "/answered.log") == 3);
  usleep(500000);
  kill(grade.pid, SIGINT);
  CHECK(Wait(grade) == 130);
  CHECK(ReadFile(dir + "/out/cases.jsonl") == journal);
  CHECK(ReadFile(dir + "/out/run.json") == record);
  // Resumed: the three grades given are in the cache; only "miss" is asked again.
  std::remove((dir + "/hold").c_str());
  const nlohmann::json again = RunJson(
      dir, {"grade", dir + "/out", "--json", "--grade-cache", dir + "/grade.sqlite"}, &code);
  CHECK(code == 0);
  CHECK(again["grading"]["from_cache"] == 3);
  CHECK(again["grading"]["requested"] == 1);
  CHECK(LogLines(dir + "/asked.log") == 5);
  CHECK(again["aggregates"]["metrics"]["grade.correctness"]["mean"] == 1.0);
}
