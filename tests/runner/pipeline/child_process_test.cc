// ChildProcess and FindExecutable against real programs: the fixture pipelines
// (fixtures/test-pipelines, whose behaviour each file's header states) and coreutils programs
// whose output POSIX defines (printenv, pwd, cat).

#include "runner/pipeline/child_process.h"

#include <errno.h>
#include <poll.h>
#include <pthread.h>
#include <signal.h>
#include <sys/eventfd.h>
#include <sys/wait.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <chrono>
#include <cstdlib>
#include <string>
#include <thread>

namespace plumb {
namespace {

using Clock = std::chrono::steady_clock;
using std::chrono::milliseconds;

std::string Fixture(const std::string& name) {
  return std::string(PLUMB_BINARY_DIR) + "/fixtures/" + name;
}

std::vector<std::string> Environment() {
  std::vector<std::string> env;
  for (char** var = environ; *var != nullptr; ++var) env.push_back(*var);
  return env;
}

SpawnSpec Spec(const std::string& path, std::vector<std::string> args = {}) {
  SpawnSpec spec;
  spec.path = path;
  spec.argv.push_back(path);
  for (std::string& arg : args) spec.argv.push_back(std::move(arg));
  spec.env = Environment();
  return spec;
}

bool WriteAll(int fd, const std::string& bytes) {
  size_t sent = 0;
  while (sent < bytes.size()) {
    pollfd wait{fd, POLLOUT, 0};
    poll(&wait, 1, 1000);
    const ssize_t count = write(fd, bytes.data() + sent, bytes.size() - sent);
    if (count < 0 && errno == EAGAIN) continue;
    if (count <= 0) return false;
    sent += static_cast<size_t>(count);
  }
  return true;
}

// Everything the fd yields until EOF or `limit`; our ends are non-blocking.
std::string ReadUntilEof(int fd, milliseconds limit = milliseconds(5000)) {
  std::string text;
  const auto deadline = Clock::now() + limit;
  char buffer[4096];
  while (Clock::now() < deadline) {
    pollfd wait{fd, POLLIN, 0};
    poll(&wait, 1, 100);
    const ssize_t count = read(fd, buffer, sizeof buffer);
    if (count == 0) break;
    if (count > 0) text.append(buffer, static_cast<size_t>(count));
  }
  return text;
}

std::string ReadLine(int fd) {
  std::string text;
  const auto deadline = Clock::now() + milliseconds(5000);
  char c;
  while (Clock::now() < deadline) {
    pollfd wait{fd, POLLIN, 0};
    poll(&wait, 1, 100);
    const ssize_t count = read(fd, &c, 1);
    if (count == 0) break;
    if (count < 0) continue;
    if (c == '\n') break;
    text.push_back(c);
  }
  return text;
}

bool GroupIsGone(pid_t pgid) { return kill(-pgid, 0) == -1 && errno == ESRCH; }

long NumberAfter(const std::string& text, const std::string& key) {
  const size_t at = text.find(key);
  return at == std::string::npos ? -1 : std::atol(text.c_str() + at + key.size());
}

TEST_CASE("FindExecutable resolves names the way exec does", "[child_process]") {
  std::string resolved, error;
  SECTION("a bare name is looked up on PATH") {
    REQUIRE(FindExecutable("sh", "", "/nonexistent:/bin", &resolved, &error));
    CHECK(resolved == "/bin/sh");
  }
  SECTION("a relative path is taken from the child's working directory") {
    REQUIRE(FindExecutable("fixtures/echo-pipeline", PLUMB_BINARY_DIR, "", &resolved, &error));
    CHECK(resolved == Fixture("echo-pipeline"));
  }
  SECTION("a missing bare name is named in the error") {
    CHECK_FALSE(FindExecutable("no-such-program-x7", "", "/bin:/usr/bin", &resolved, &error));
    CHECK(error == "program \"no-such-program-x7\" was not found on PATH");
  }
  SECTION("a missing path") {
    CHECK_FALSE(FindExecutable("/nonexistent/program", "", "", &resolved, &error));
    CHECK(error == "program \"/nonexistent/program\" does not exist");
  }
  SECTION("a directory") {
    CHECK_FALSE(FindExecutable("/tmp", "", "", &resolved, &error));
    CHECK(error == "program \"/tmp\" is a directory");
  }
  SECTION("a file without execute permission") {
    const std::string source = std::string(PLUMB_SOURCE_DIR) + "/CMakeLists.txt";
    CHECK_FALSE(FindExecutable(source, "", "", &resolved, &error));
    CHECK(error == "program \"" + source + "\" is not executable");
  }
  SECTION("a name with no executable on PATH is not found even if a non-executable exists") {
    CHECK_FALSE(FindExecutable("CMakeLists.txt", "", PLUMB_SOURCE_DIR, &resolved, &error));
  }
}

TEST_CASE("a child runs in its own process group and talks over pipes", "[child_process]") {
  std::string error;
  auto child = ChildProcess::Spawn(Spec(Fixture("echo-pipeline")), &error);
  REQUIRE(child);
  CHECK(getpgid(child->pid()) == child->pid());
  CHECK(getpgid(child->pid()) != getpgrp());
  REQUIRE(WriteAll(child->stdin_fd(), "{\"id\":\"a\",\"question\":\"ferry\"}\n"));
  // echo-pipeline's contract (its header): {"answer":<question>}.
  CHECK(ReadLine(child->stdout_fd()) == "{\"answer\":\"ferry\"}");
  CHECK_FALSE(child->HasExited());
  child->CloseStdin();  // EOF: the pipeline exits 0
  CHECK(child->WaitForExit(Clock::now() + milliseconds(5000), -1));
  const int status = child->KillAndReap();
  CHECK(DescribeExit(status) == "process exited with status 0");
  CHECK(child->KillAndReap() == status);  // later calls return the same status
  CHECK(GroupIsGone(child->pid()));
}

TEST_CASE("the child gets the environment and working directory of the spec", "[child_process]") {
  std::string error;
  SECTION("environment (printenv prints the value of the named variable)") {
    SpawnSpec spec = Spec("/usr/bin/printenv", {"PLUMB_CHILD_TEST"});
    spec.env.push_back("PLUMB_CHILD_TEST=harbour master");
    auto child = ChildProcess::Spawn(spec, &error);
    REQUIRE(child);
    CHECK(ReadUntilEof(child->stdout_fd()) == "harbour master\n");
    // stdout's EOF can come a moment before the exit; KillAndReap would SIGKILL a live child.
    CHECK(child->WaitForExit(Clock::now() + milliseconds(5000), -1));
    CHECK(DescribeExit(child->KillAndReap()) == "process exited with status 0");
  }
  SECTION("working directory (pwd prints it)") {
    SpawnSpec spec = Spec("/bin/pwd", {"-P"});
    spec.cwd = "/";
    auto child = ChildProcess::Spawn(spec, &error);
    REQUIRE(child);
    CHECK(ReadUntilEof(child->stdout_fd()) == "/\n");
  }
}

// /proc/PID/status shows the masks in hex; SIGPIPE is signal 13, so bit 12 (proc(5)).
TEST_CASE("the child gets default SIGPIPE and an empty signal mask", "[child_process]") {
  signal(SIGPIPE, SIG_IGN);
  sigset_t blocked, previous;
  sigemptyset(&blocked);
  sigaddset(&blocked, SIGTERM);
  sigaddset(&blocked, SIGINT);
  pthread_sigmask(SIG_BLOCK, &blocked, &previous);
  std::string error;
  auto child = ChildProcess::Spawn(Spec("/bin/cat", {"/proc/self/status"}), &error);
  pthread_sigmask(SIG_SETMASK, &previous, nullptr);
  REQUIRE(child);
  const std::string status = ReadUntilEof(child->stdout_fd());
  const size_t blk = status.find("SigBlk:");
  const size_t ign = status.find("SigIgn:");
  REQUIRE(blk != std::string::npos);
  REQUIRE(ign != std::string::npos);
  CHECK(std::strtoull(status.c_str() + blk + 7, nullptr, 16) == 0);
  CHECK((std::strtoull(status.c_str() + ign + 7, nullptr, 16) & (1ull << (SIGPIPE - 1))) == 0);
}

TEST_CASE("DescribeExit words the way a process ended", "[child_process]") {
  std::string error;
  SECTION("exit status (crash-pipeline exits 3 on a question containing \"crash\")") {
    auto child = ChildProcess::Spawn(Spec(Fixture("crash-pipeline")), &error);
    REQUIRE(child);
    REQUIRE(WriteAll(child->stdin_fd(), "{\"question\":\"crash\"}\n"));
    CHECK(child->WaitForExit(Clock::now() + milliseconds(5000), -1));
    CHECK(DescribeExit(child->KillAndReap()) == "process exited with status 3");
  }
  SECTION("signal (crash-pipeline raises SIGSEGV on \"segv\")") {
    auto child = ChildProcess::Spawn(Spec(Fixture("crash-pipeline")), &error);
    REQUIRE(child);
    REQUIRE(WriteAll(child->stdin_fd(), "{\"question\":\"segv\"}\n"));
    CHECK(child->WaitForExit(Clock::now() + milliseconds(5000), -1));
    CHECK(DescribeExit(child->KillAndReap()) == "process killed by signal SIGSEGV");
  }
}

TEST_CASE("Terminate ends the whole group, escalating to SIGKILL", "[child_process]") {
  std::string error;
  SECTION("a child that honours SIGTERM dies of it, and so does its helper") {
    auto child = ChildProcess::Spawn(Spec(Fixture("hang-pipeline")), &error);
    REQUIRE(child);
    const std::string banner = ReadLine(child->stderr_fd());
    const long helper = NumberAfter(banner, "helper=");
    REQUIRE(helper > 0);
    CHECK(NumberAfter(banner, "pgid=") == child->pid());
    const int status = child->Terminate(milliseconds(500), -1);
    REQUIRE(WIFSIGNALED(status));
    CHECK(WTERMSIG(status) == SIGTERM);
    CHECK(GroupIsGone(child->pid()));
    CHECK(kill(static_cast<pid_t>(helper), 0) == -1);
  }
  SECTION("a child that ignores SIGTERM is SIGKILLed after the grace period") {
    auto child = ChildProcess::Spawn(Spec(Fixture("hang-pipeline"), {"--ignore-term"}), &error);
    REQUIRE(child);
    const long helper = NumberAfter(ReadLine(child->stderr_fd()), "helper=");
    REQUIRE(helper > 0);
    const auto start = Clock::now();
    const int status = child->Terminate(milliseconds(200), -1);
    CHECK(Clock::now() - start >= milliseconds(200));  // it waited the grace out
    REQUIRE(WIFSIGNALED(status));
    CHECK(WTERMSIG(status) == SIGKILL);
    CHECK(GroupIsGone(child->pid()));
    CHECK(kill(static_cast<pid_t>(helper), 0) == -1);
  }
  SECTION("an interrupt cuts the grace period short") {
    auto child = ChildProcess::Spawn(Spec(Fixture("hang-pipeline"), {"--ignore-term"}), &error);
    REQUIRE(child);
    REQUIRE(NumberAfter(ReadLine(child->stderr_fd()), "pid=") > 0);
    const int interrupt = eventfd(1, EFD_CLOEXEC);  // already readable
    const int status = child->Terminate(milliseconds(60000), interrupt);
    close(interrupt);
    REQUIRE(WIFSIGNALED(status));
    CHECK(WTERMSIG(status) == SIGKILL);
    CHECK(GroupIsGone(child->pid()));
  }
}

TEST_CASE("WaitForExit gives up at the deadline while the child runs", "[child_process]") {
  std::string error;
  auto child = ChildProcess::Spawn(Spec(Fixture("hang-pipeline")), &error);
  REQUIRE(child);
  CHECK_FALSE(child->WaitForExit(Clock::now() + milliseconds(50), -1));
  CHECK_FALSE(child->HasExited());
  // The destructor kills and reaps the group.
  const pid_t pgid = child->pid();
  child.reset();
  CHECK(GroupIsGone(pgid));
}

TEST_CASE("a program that cannot be started is an error, not a child", "[child_process]") {
  std::string error;
  auto child = ChildProcess::Spawn(Spec("/nonexistent/pipeline"), &error);
  CHECK_FALSE(child);
  CHECK(error == "cannot start /nonexistent/pipeline: No such file or directory");
}

}  // namespace
}  // namespace plumb
