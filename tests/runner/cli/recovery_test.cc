// Recovery after plumb is killed (issue 17 items 8 and 12), with the real plumb and real
// pipelines:
//  - temporary files a killed plumb left in the run directory (run.json.tmp.PID, a report's
//    NAME.tmp.PID, cases.jsonl.pending.PID) are removed by the next run in that directory when
//    their process is gone, and kept while it runs;
//  - random SIGKILL and --resume: plumb is killed at a random moment of its run again and again
//    (at least 30 kills in persistent mode and 10 in per-case mode; PLUMB_KILL_ROUNDS=N raises
//    the persistent count to N and the per-case one to N/3, PLUMB_KILL_SEED repeats a sequence),
//    each time resumed, and every run that completes must hold every case exactly once, score as
//    an uninterrupted run of the same suite does, and leave no temporary file.

#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <map>
#include <nlohmann/json.hpp>
#include <random>
#include <string>
#include <thread>

#include "tests/support/plumb_process.h"

using nlohmann::json;
namespace fs = std::filesystem;

namespace {

// A pid that belonged to a process which has exited and been reaped.
pid_t DeadPid() {
  const pid_t pid = fork();
  REQUIRE(pid >= 0);
  if (pid == 0) _exit(0);
  REQUIRE(waitpid(pid, nullptr, 0) == pid);
  return pid;
}

std::vector<std::string> TempFiles(const std::string& dir) {
  std::vector<std::string> found;
  for (const fs::directory_entry& entry : fs::directory_iterator(dir)) {
    const std::string name = entry.path().filename().string();
    if (name.find(".tmp.") != std::string::npos || name.find(".pending.") != std::string::npos) {
      found.push_back(name);
    }
  }
  std::sort(found.begin(), found.end());
  return found;
}

// `cases` cases answered by echo-pipeline (answer = question), every third one wrongly; no
// floors, so a finished run exits 0.
std::string WriteSuite(const std::string& dir, int cases, const std::string& mode) {
  std::string text = "plumb: 1\nname: recovery\npipelines:\n  echo:\n    command: [" +
                     plumb_test::kFixtures + "echo-pipeline]\n    mode: " + mode +
                     "\n    timeout: 5s\ncases:\n";
  for (int i = 0; i < cases; ++i) {
    const std::string q = "question " + std::to_string(i);
    text += "  - {id: c" + std::to_string(i) + ", question: " + q + ", answers: [\"" +
            (i % 3 == 0 ? "other" : q) + "\"]}\n";
  }
  plumb_test::WriteFile(dir + "/suite.yaml", text);
  return dir + "/suite.yaml";
}

int Rounds() {
  const char* raw = std::getenv("PLUMB_KILL_ROUNDS");
  return raw != nullptr && std::atoi(raw) > 0 ? std::atoi(raw) : 30;
}

}  // namespace

TEST_CASE("temporary files of dead plumb processes are removed from the run directory") {
  const std::string dir = plumb_test::MakeTempDir();
  const std::string suite = WriteSuite(dir, 4, "persistent");
  const std::string out = dir + "/out";
  fs::create_directories(out);
  const std::string dead = std::to_string(DeadPid());
  const std::string alive = std::to_string(getpid());  // this test: alive, not plumb's own pid
  for (const std::string& name : {"run.json.tmp." + dead, "report.html.tmp." + dead,
                                  "cases.jsonl.pending." + dead, "run.json.tmp." + alive}) {
    plumb_test::WriteFile(out + "/" + name, "{\"half\": ");
  }
  plumb_test::WriteFile(out + "/run.json.tmp.draft", "not ours");  // no pid: never touched

  const plumb_test::Result run = plumb_test::Plumb({"run", suite, "--out", out, "--resume"}, dir);
  INFO(run.err);
  CHECK(run.code == 0);
  CHECK(fs::exists(out + "/run.json"));
  CHECK(TempFiles(out) == std::vector<std::string>{"run.json.tmp." + alive, "run.json.tmp.draft"});
  CHECK(fs::exists(out + "/run.json.tmp.draft"));
  CHECK(run.err.find("removed " + out + "/run.json.tmp." + dead) != std::string::npos);

  // plumb score's run directory gets the same care.
  plumb_test::WriteFile(out + "/cases.jsonl.pending." + dead, "{");
  plumb_test::WriteFile(dir + "/replies.jsonl", "{\"id\": \"c1\", \"answer\": \"question 1\"}\n");
  const plumb_test::Result score =
      plumb_test::Plumb({"score", suite, dir + "/replies.jsonl", "--out", out}, dir);
  INFO(score.err);
  CHECK(TempFiles(out) == std::vector<std::string>{"run.json.tmp." + alive, "run.json.tmp.draft"});
}

TEST_CASE("random SIGKILL and --resume: every case exactly once, scores as without kills") {
  for (const std::string& mode : {std::string("persistent"), std::string("per-case")}) {
    const std::string dir = plumb_test::MakeTempDir();
    const int cases = mode == "persistent" ? 300 : 60;
    const std::string suite = WriteSuite(dir, cases, mode);

    // The uninterrupted run: the scores to match and the time a run takes here.
    const auto t0 = std::chrono::steady_clock::now();
    const plumb_test::Result reference =
        plumb_test::Plumb({"run", suite, "--out", dir + "/reference", "--json"}, dir);
    const double full_ms =
        std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - t0).count();
    INFO(reference.err);
    REQUIRE(reference.code == 0);
    const json expected = json::parse(reference.out);

    unsigned seed = static_cast<unsigned>(std::random_device{}());
    if (const char* raw = std::getenv("PLUMB_KILL_SEED"))
      seed = static_cast<unsigned>(std::stoul(raw));
    std::mt19937 random(seed);
    INFO("mode " << mode << ", PLUMB_KILL_SEED=" << seed << ", full run " << full_ms << " ms");
    // Kill anywhere from plumb's start to a little past a whole run's time, so some kills land
    // while loading, some between cases, some while run.json is written, some after the end.
    std::uniform_real_distribution<double> when(0.0, 1.2 * full_ms);

    // Episodes: a fresh run, then --resume after every kill until a round finishes by itself;
    // then the finished run is checked and the next episode starts afresh, until enough kills.
    const std::string out = dir + "/killed";
    const int wanted = mode == "persistent" ? Rounds() : std::max(1, Rounds() / 3);
    int kills = 0, episodes = 0;
    while (kills < wanted) {
      ++episodes;
      for (bool resume = false;; resume = true) {
        std::vector<std::string> args = {"run", suite, "--out", out};
        // A fresh episode starts over the last one's finished run: --overwrite says so.
        args.push_back(resume ? "--resume" : "--overwrite");
        const plumb_test::Process p = plumb_test::Start(args, dir);
        std::this_thread::sleep_for(
            std::chrono::microseconds(static_cast<long>(1000 * when(random))));
        kill(p.pid, SIGKILL);
        int status = 0;
        REQUIRE(waitpid(p.pid, &status, 0) == p.pid);
        // Each complete journal line is one case, never a second record of one case.
        std::map<std::string, int> seen;
        for (const json& record : plumb_test::ReadJournal(out + "/cases.jsonl")) {
          CHECK(++seen[record["id"].get<std::string>()] == 1);
        }
        if (WIFSIGNALED(status)) {
          ++kills;
          continue;
        }
        INFO(plumb_test::ReadFile(p.err_path));
        REQUIRE(WEXITSTATUS(status) == 0);
        break;  // the round ended before its kill: the run is finished
      }
      INFO("episode " << episodes << ", " << kills << " kills so far");
      const json got = json::parse(plumb_test::ReadFile(out + "/run.json"));
      CHECK(TempFiles(out).empty());
      std::map<std::string, int> seen;
      for (const json& record : plumb_test::ReadJournal(out + "/cases.jsonl")) {
        CHECK(record["error"].is_null());
        ++seen[record["id"].get<std::string>()];
      }
      CHECK(seen.size() == static_cast<size_t>(cases));
      for (const auto& [id, count] : seen) CHECK(count == 1);
      CHECK(got["aggregates"]["items"] == cases);
      CHECK(got["aggregates"]["metrics"]["correct"]["mean"] ==
            expected["aggregates"]["metrics"]["correct"]["mean"]);
      CHECK(got["aggregates"]["metrics"]["token_f1"]["mean"] ==
            expected["aggregates"]["metrics"]["token_f1"]["mean"]);
    }
    // Printed so that a reader of the CTest log sees how hard the loop pushed.
    std::printf("recovery_test: %s mode, %d kills over %d episodes (PLUMB_KILL_SEED=%u)\n",
                mode.c_str(), kills, episodes, seed);
  }
}
