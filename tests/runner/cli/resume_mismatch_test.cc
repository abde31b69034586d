// Issue 17 item 4: `--resume` continued whatever journal its directory held. An interrupted run
// of pipeline A resumed with `--pipeline B` exited 0 with a run.json that said B over a journal
// that held both. A resume whose pipeline, pipeline config, suite or corpus differs from the
// directory's run is refused (exit 2, naming what differs) and changes nothing; an explicit
// --out over a finished run is refused without --overwrite. Real plumb, real pipelines.
#include <signal.h>
#include <sys/stat.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <chrono>
#include <string>
#include <thread>
#include <vector>

#include "tests/support/plumb_process.h"

using namespace plumb_test;

namespace {

bool Exists(const std::string& path) { return ::access(path.c_str(), F_OK) == 0; }

/// Ten cases; c3 makes the hang pipeline stop answering, so the run can be interrupted there.
std::string Cases() {
  std::string yaml = "cases:\n";
  for (int i = 0; i < 10; ++i) {
    const std::string q = i == 3 ? "please hang" : "question " + std::to_string(i);
    yaml += "  - {id: c" + std::to_string(i) + ", question: \"" + q + "\", answers: [\"" + q +
            "\"], sources: [{doc: a.md, quote: Boarding}]}\n";
  }
  return yaml;
}

std::string Pipelines(const std::string& dir) {
  return "pipelines:\n"
         "  a: {command: [" +
         kFixtures + "hang-pipeline, --ready-file, " + dir +
         "/ready], timeout: 60s}\n"
         "  b: {command: [" +
         kFixtures + "echo-pipeline], timeout: 5s}\n";
}

/// Runs pipeline a until it hangs at c3, then interrupts it: c0..c2 journaled, no run.json.
void InterruptedRunOfA(const std::string& dir) {
  Process p = Start({"run", dir + "/s.yaml", "--pipeline", "a", "--out", dir + "/out"}, dir);
  for (int i = 0; i < 400 && !Exists(dir + "/ready"); ++i) {
    std::this_thread::sleep_for(std::chrono::milliseconds(25));
  }
  REQUIRE(Exists(dir + "/ready"));
  REQUIRE(kill(p.pid, SIGINT) == 0);
  REQUIRE(Wait(p) == 130);
  REQUIRE(ReadJournal(dir + "/out/cases.jsonl").size() == 3);
  REQUIRE_FALSE(Exists(dir + "/out/run.json"));
}

}  // namespace

TEST_CASE("resume with another pipeline is refused, naming both, and the journal is untouched") {
  const std::string dir = MakeTempDir();
  ::mkdir((dir + "/docs").c_str(), 0755);
  WriteFile(dir + "/docs/a.md", "Boarding closes ten minutes before departure.\n");
  WriteFile(dir + "/s.yaml", "plumb: 1\nname: mix\ncorpus: docs\n" + Pipelines(dir) + Cases());
  InterruptedRunOfA(dir);
  const std::string journal = ReadFile(dir + "/out/cases.jsonl");

  SECTION("another pipeline") {
    const Result r =
        Plumb({"run", dir + "/s.yaml", "--pipeline", "b", "--out", dir + "/out", "--resume"}, dir);
    CHECK(r.code == 2);
    CHECK(r.err.find("--resume: " + dir +
                     "/out holds a run of another setting: pipeline 'a' "
                     "(this run: 'b')") != std::string::npos);
  }
  SECTION("the same pipeline name with another config") {
    WriteFile(dir + "/other.yaml",
              "pipelines:\n  a: {command: [" + kFixtures + "echo-pipeline], timeout: 5s}\n");
    const Result r = Plumb({"run", dir + "/s.yaml", "--pipelines", dir + "/other.yaml", "--out",
                            dir + "/out", "--resume"},
                           dir);
    CHECK(r.code == 2);
    CHECK(r.err.find("pipeline 'a' with another config ('command', 'timeout' differ)") !=
          std::string::npos);
  }
  SECTION("an edited suite") {
    WriteFile(dir + "/s.yaml", "plumb: 1\nname: mix\ncorpus: docs\nfloors: {correct: 0.5}\n" +
                                   Pipelines(dir) + Cases());
    const Result r =
        Plumb({"run", dir + "/s.yaml", "--pipeline", "a", "--out", dir + "/out", "--resume"}, dir);
    CHECK(r.code == 2);
    CHECK(r.err.find("holds a run of another setting: suite hash ") != std::string::npos);
  }
  SECTION("an edited corpus") {
    WriteFile(dir + "/docs/b.md", "A new document.\n");
    const Result r =
        Plumb({"run", dir + "/s.yaml", "--pipeline", "a", "--out", dir + "/out", "--resume"}, dir);
    CHECK(r.code == 2);
    CHECK(r.err.find("holds a run of another setting: corpus fingerprint ") != std::string::npos);
  }
  // Nothing ran: the journal is byte for byte the interrupted run's, and no run.json claims it.
  CHECK(ReadFile(dir + "/out/cases.jsonl") == journal);
  CHECK_FALSE(Exists(dir + "/out/run.json"));
}

TEST_CASE("resume with the run's own settings continues it") {
  const std::string dir = MakeTempDir();
  ::mkdir((dir + "/docs").c_str(), 0755);
  WriteFile(dir + "/docs/a.md", "Boarding closes ten minutes before departure.\n");
  // The command comes from a variable: the config as written is the same (the value is not
  // compared, as for a rotated token), and the resumed run answers c3 instead of hanging.
  setenv("PLUMB_TEST_RESUME_PIPELINE", (kFixtures + "hang-pipeline").c_str(), 1);
  WriteFile(dir + "/s.yaml",
            "plumb: 1\nname: same\ncorpus: docs\npipelines:\n"
            "  a: {command: [\"${PLUMB_TEST_RESUME_PIPELINE}\", --ready-file, " +
                dir + "/ready], timeout: 60s}\n" + Cases());
  InterruptedRunOfA(dir);
  setenv("PLUMB_TEST_RESUME_PIPELINE", (kFixtures + "echo-pipeline").c_str(), 1);
  const Result r = Plumb({"run", dir + "/s.yaml", "--out", dir + "/out", "--resume"}, dir);
  INFO(r.err);
  CHECK(r.code == 0);
  CHECK(ReadJournal(dir + "/out/cases.jsonl").size() == 10);
  CHECK(Exists(dir + "/out/run.json"));
}

TEST_CASE("An --out over a finished run is refused unless --overwrite") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/s.yaml", "plumb: 1\nname: twice\npipelines:\n  b: {command: [" + kFixtures +
                                 "echo-pipeline], timeout: 5s}\n"
                                 "cases:\n  - {id: c1, question: q, answers: [q]}\n");
  Result r = Plumb({"run", dir + "/s.yaml", "--out", dir + "/out"}, dir);
  REQUIRE(r.code == 0);
  const std::string record = ReadFile(dir + "/out/run.json");

  r = Plumb({"run", dir + "/s.yaml", "--out", dir + "/out"}, dir);
  CHECK(r.code == 2);
  CHECK(r.err.find("--out: " + dir +
                   "/out holds a finished run (run.json); pass --overwrite to replace it, "
                   "--resume to continue it, or choose another --out") != std::string::npos);
  CHECK(ReadFile(dir + "/out/run.json") == record);

  r = Plumb({"run", dir + "/s.yaml", "--out", dir + "/out", "--overwrite"}, dir);
  CHECK(r.code == 0);
  CHECK(ReadJournal(dir + "/out/cases.jsonl").size() == 1);

  // A finished run resumed with its own settings has nothing left to send.
  r = Plumb({"run", dir + "/s.yaml", "--out", dir + "/out", "--resume"}, dir);
  CHECK(r.code == 0);
  CHECK(ReadJournal(dir + "/out/cases.jsonl").size() == 1);

  r = Plumb({"run", dir + "/s.yaml", "--out", dir + "/out", "--resume", "--overwrite"}, dir);
  CHECK(r.code == 2);  // the two contradict each other
}
