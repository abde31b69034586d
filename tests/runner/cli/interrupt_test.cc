// SIGINT and SIGTERM outside the run loop (issue 17 item 7): in the first milliseconds of the
// process and in the phase after the last case, where run.json and the reports are written.
// plumb must exit with 128 + the signal's number (130 SIGINT, 143 SIGTERM: the shell's
// convention, common practice), never die by the signal, and leave no temporary file behind.
// The real plumb runs the real echo-pipeline.
//
// The first milliseconds: plumb is started with the signal blocked and sent it at once, so it is
// pending before main() runs; plumb must take it as soon as it can. The phase after the last
// case: the test puts a FIFO where plumb writes its run.json temporary file
// (run.json.tmp.PID), so plumb blocks opening it after journaling every case until the signal.

#include <signal.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <chrono>
#include <filesystem>
#include <string>
#include <thread>

#include "tests/support/plumb_process.h"

namespace fs = std::filesystem;

namespace {

std::string WriteSuite(const std::string& dir, int cases) {
  std::string text = "plumb: 1\nname: signals\npipelines:\n  echo:\n    command: [" +
                     plumb_test::kFixtures + "echo-pipeline]\n    timeout: 5s\ncases:\n";
  for (int i = 0; i < cases; ++i) {
    text += "  - {id: c" + std::to_string(i) + ", question: q" + std::to_string(i) +
            ", answers: [q" + std::to_string(i) + "]}\n";
  }
  plumb_test::WriteFile(dir + "/suite.yaml", text);
  return dir + "/suite.yaml";
}

int ExitStatus(pid_t pid, bool* by_signal) {
  int status = 0;
  REQUIRE(waitpid(pid, &status, 0) == pid);
  *by_signal = WIFSIGNALED(status);
  return WIFEXITED(status) ? WEXITSTATUS(status) : -WTERMSIG(status);
}

size_t LineCount(const std::string& path) {
  const std::string text = plumb_test::ReadFile(path);
  return static_cast<size_t>(std::count(text.begin(), text.end(), '\n'));
}

std::vector<std::string> TempFiles(const std::string& dir) {
  std::vector<std::string> found;
  for (const fs::directory_entry& entry : fs::directory_iterator(dir)) {
    const std::string name = entry.path().filename().string();
    if (name.find(".tmp.") != std::string::npos || name.find(".pending.") != std::string::npos) {
      found.push_back(name);
    }
  }
  return found;
}

void SignalBeforeMain(int number, int expected_code) {
  const std::string dir = plumb_test::MakeTempDir();
  const std::string suite = WriteSuite(dir, 3);
  sigset_t blocked;
  sigemptyset(&blocked);
  sigaddset(&blocked, number);
  const plumb_test::Process p = plumb_test::Start(
      {"run", suite, "--out", dir + "/out", "--html", dir + "/report.html"}, dir, &blocked);
  REQUIRE(kill(p.pid, number) == 0);
  bool by_signal = false;
  const int code = ExitStatus(p.pid, &by_signal);
  INFO(plumb_test::ReadFile(p.err_path));
  CHECK_FALSE(by_signal);
  CHECK(code == expected_code);
  // Nothing ran and nothing was written: no run.json, no report, no journal line.
  CHECK_FALSE(fs::exists(dir + "/out/run.json"));
  CHECK_FALSE(fs::exists(dir + "/report.html"));
  if (fs::exists(dir + "/out")) CHECK(TempFiles(dir + "/out").empty());
}

}  // namespace

TEST_CASE("SIGTERM in the first milliseconds exits 143, not by the signal") {
  SignalBeforeMain(SIGTERM, 143);
}

TEST_CASE("SIGINT in the first milliseconds exits 130, not by the signal") {
  SignalBeforeMain(SIGINT, 130);
}

TEST_CASE("SIGTERM while run.json is written after the last case exits 143 and --resume finishes") {
  const std::string dir = plumb_test::MakeTempDir();
  const std::string suite = WriteSuite(dir, 5);
  const std::string out = dir + "/out";
  REQUIRE(fs::create_directories(out));
  const plumb_test::Process p =
      plumb_test::Start({"run", suite, "--out", out, "--html", dir + "/report.html"}, dir);
  const std::string fifo = out + "/run.json.tmp." + std::to_string(p.pid);
  REQUIRE(mkfifo(fifo.c_str(), 0600) == 0);

  // Every case is journaled before run.json is opened; opening the FIFO then blocks.
  const auto give_up = std::chrono::steady_clock::now() + std::chrono::seconds(20);
  while (LineCount(out + "/cases.jsonl") < 5 && std::chrono::steady_clock::now() < give_up) {
    std::this_thread::sleep_for(std::chrono::milliseconds(10));
  }
  REQUIRE(LineCount(out + "/cases.jsonl") == 5);
  // Then wait until a thread of plumb sleeps in open() of the FIFO (the kernel's wait channel
  // for a FIFO opened with no reader); kernels that do not name it get a pause instead.
  bool blocked = false;
  while (!blocked && std::chrono::steady_clock::now() < give_up) {
    for (const fs::directory_entry& task :
         fs::directory_iterator("/proc/" + std::to_string(p.pid) + "/task")) {
      if (plumb_test::ReadFile(task.path().string() + "/wchan") == "wait_for_partner") {
        blocked = true;
      }
    }
    if (!blocked) std::this_thread::sleep_for(std::chrono::milliseconds(10));
  }
  if (!blocked) std::this_thread::sleep_for(std::chrono::milliseconds(500));
  REQUIRE(kill(p.pid, SIGTERM) == 0);
  bool by_signal = false;
  const int code = ExitStatus(p.pid, &by_signal);
  INFO(plumb_test::ReadFile(p.err_path));
  CHECK_FALSE(by_signal);
  CHECK(code == 143);
  CHECK_FALSE(fs::exists(out + "/run.json"));
  CHECK_FALSE(fs::exists(dir + "/report.html"));
  CHECK(TempFiles(out).empty());  // the temporary run.json (here the FIFO) is gone
  CHECK(LineCount(out + "/cases.jsonl") == 5);

  // The journal is whole: --resume runs nothing again and writes run.json and the report.
  const plumb_test::Result resumed = plumb_test::Plumb(
      {"run", suite, "--out", out, "--resume", "--html", dir + "/report.html"}, dir);
  INFO(resumed.err);
  CHECK(resumed.code == 0);
  CHECK(fs::exists(out + "/run.json"));
  CHECK(fs::exists(dir + "/report.html"));
  CHECK(LineCount(out + "/cases.jsonl") == 5);
}

TEST_CASE("SIGINT during the run loop still exits 130 and SIGTERM 143") {
  for (const int number : {SIGINT, SIGTERM}) {
    const std::string dir = plumb_test::MakeTempDir();
    // hang-pipeline never answers, so the signal always lands inside the run loop.
    plumb_test::WriteFile(dir + "/suite.yaml",
                          "plumb: 1\nname: signals\npipelines:\n  hang:\n    command: [" +
                              plumb_test::kFixtures +
                              "hang-pipeline]\n    timeout: 60s\ncases:\n"
                              "  - {id: c0, question: please hang, answers: [a]}\n");
    const plumb_test::Process p =
        plumb_test::Start({"run", dir + "/suite.yaml", "--out", dir + "/out"}, dir);
    std::this_thread::sleep_for(std::chrono::milliseconds(300));
    REQUIRE(kill(p.pid, number) == 0);
    bool by_signal = false;
    const int code = ExitStatus(p.pid, &by_signal);
    INFO(plumb_test::ReadFile(p.err_path));
    CHECK_FALSE(by_signal);
    CHECK(code == 128 + number);
    CHECK_FALSE(fs::exists(dir + "/out/run.json"));
  }
}
