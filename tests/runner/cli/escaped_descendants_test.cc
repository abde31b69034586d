// Descendants that leave the pipeline's process group (issue 17 item 3). daemon-pipeline
// double-forks a sleeper per request that calls setsid, so killing the pipeline's process
// group does not reach it. plumb, as the subreaper of its pipelines, adopts such sleepers and
// must kill them when the worker that started them is restarted and when the run ends. The
// test counts the sleepers still running (from the pid files daemon-pipeline writes) during
// the run (each reply says how many earlier sleepers run) and after plumb has exited.

#include <dirent.h>

#include <catch2/catch.hpp>
#include <cstring>
#include <fstream>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "tests/support/plumb_process.h"

using nlohmann::json;

namespace {

bool Running(pid_t pid) {
  const std::string stat = plumb_test::ReadFile("/proc/" + std::to_string(pid) + "/stat");
  const size_t close = stat.rfind(')');
  return close != std::string::npos && close + 2 < stat.size() && stat[close + 2] != 'Z';
}

struct Sleepers {
  int started = 0;
  int running = 0;
};

Sleepers CountSleepers(const std::string& dir) {
  Sleepers count;
  DIR* listing = opendir(dir.c_str());
  REQUIRE(listing != nullptr);
  while (const dirent* entry = readdir(listing)) {
    if (std::strncmp(entry->d_name, "sleeper.", 8) != 0) continue;
    ++count.started;
    const pid_t pid = static_cast<pid_t>(std::atoi(entry->d_name + 8));
    if (Running(pid)) {
      ++count.running;
      kill(pid, SIGKILL);  // leave nothing behind for the next test, whatever this one finds
    }
  }
  closedir(listing);
  return count;
}

// Runs `cases` cases through daemon-pipeline; returns each case's answer, in suite order.
std::vector<std::string> RunDaemons(const std::string& dir, const std::string& mode,
                                    const std::string& question, int cases,
                                    const std::string& extra_flag = "") {
  std::string suite =
      "plumb: 1\nname: daemons\nmax_error_rate: 1.0\npipelines:\n  daemon:\n"
      "    command: [" +
      plumb_test::kFixtures + "daemon-pipeline, --dir, " + dir +
      (extra_flag.empty() ? "" : ", " + extra_flag) + "]\n    mode: " + mode +
      "\n    timeout: 10s\ncases:\n";
  for (int i = 0; i < cases; ++i) {
    suite += "  - {id: c" + std::to_string(i) + ", question: " + question + ", answers: [x]}\n";
  }
  plumb_test::WriteFile(dir + "/suite.yaml", suite);
  const plumb_test::Result run =
      plumb_test::Plumb({"run", dir + "/suite.yaml", "--out", dir + "/out"}, dir);
  INFO(run.err);
  REQUIRE(run.code == 0);
  std::vector<std::string> answers;
  for (const json& record : plumb_test::ReadJournal(dir + "/out/cases.jsonl")) {
    answers.push_back(record["answer"].is_string() ? record["answer"].get<std::string>()
                                                   : record.dump());
  }
  return answers;
}

}  // namespace

TEST_CASE("persistent: a restarted worker's escaped daemon is killed before the next case") {
  const std::string dir = plumb_test::MakeTempDir();
  // Every worker exits after its reply, so each case gets a fresh worker.
  const std::vector<std::string> answers = RunDaemons(dir, "persistent", "reply and exit", 4);
  CHECK(answers == std::vector<std::string>(4, "alive 0"));
  const Sleepers after = CountSleepers(dir);
  CHECK(after.started == 4);
  CHECK(after.running == 0);
}

TEST_CASE("persistent: the daemons of a live worker are killed when the run ends") {
  const std::string dir = plumb_test::MakeTempDir();
  const std::vector<std::string> answers = RunDaemons(dir, "persistent", "stay", 3);
  // One worker for the whole run: its sleepers pile up while it lives.
  CHECK(answers == std::vector<std::string>{"alive 0", "alive 1", "alive 2"});
  const Sleepers after = CountSleepers(dir);
  CHECK(after.started == 3);
  CHECK(after.running == 0);
}

TEST_CASE("per-case: each case's escaped daemon is killed with its process") {
  const std::string dir = plumb_test::MakeTempDir();
  const std::vector<std::string> answers = RunDaemons(dir, "per-case", "stay", 4);
  CHECK(answers == std::vector<std::string>(4, "alive 0"));
  const Sleepers after = CountSleepers(dir);
  CHECK(after.started == 4);
  CHECK(after.running == 0);
}

TEST_CASE("a daemon that dropped its environment is still killed when the run ends") {
  const std::string dir = plumb_test::MakeTempDir();
  RunDaemons(dir, "persistent", "reply and exit", 3, "--clean-env");
  const Sleepers after = CountSleepers(dir);
  CHECK(after.started == 3);
  CHECK(after.running == 0);
}
