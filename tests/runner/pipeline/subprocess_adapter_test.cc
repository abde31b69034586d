// SubprocessAdapter against real processes, one test per fault it must survive. The pipelines
// are the fixtures in fixtures/test-pipelines (each file's header states what it does, and the
// expected values below follow from that text) and coreutils' cat, printenv and pwd, whose output
// POSIX defines. Time is only ever checked from below (a deadline cannot pass early) or against
// a bound far above the expected figure, never as a measurement.

#include "runner/pipeline/subprocess_adapter.h"

#include <errno.h>
#include <signal.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <chrono>
#include <cstdlib>
#include <fstream>
#include <iterator>
#include <string>
#include <thread>
#include <vector>

#include "runner/pipeline/excerpt.h"

namespace plumb {
namespace {

using Clock = std::chrono::steady_clock;
using std::chrono::milliseconds;

std::string Fixture(const std::string& name) {
  return std::string(PLUMB_BINARY_DIR) + "/fixtures/" + name;
}

PipelineConfig Config(std::vector<std::string> argv,
                      SubprocessMode mode = SubprocessMode::kPersistent) {
  PipelineConfig config;
  config.name = "fixture";
  for (const std::string& arg : argv) config.command.push_back({arg, arg});
  config.mode = mode;
  config.timeout_ms = 10000;
  return config;
}

std::unique_ptr<SubprocessAdapter> Make(const PipelineConfig& config, int slots = 1) {
  std::string error;
  auto adapter = SubprocessAdapter::Create(config, slots, &error);
  INFO(error);
  REQUIRE(adapter);
  return adapter;
}

PipelineRequest Ask(const std::string& question, const std::string& id = "q1") {
  PipelineRequest request;
  request.id = id;
  request.question = question;
  return request;
}

// What crash-, hang-, garbage- and flood-pipeline answer: {"answer": <question>}, as dumped by
// nlohmann::json (no spaces).
std::string Echo(const std::string& question) { return "{\"answer\":\"" + question + "\"}"; }

long NumberAfter(const std::string& text, const std::string& key) {
  const size_t at = text.find(key);
  return at == std::string::npos ? -1 : std::atol(text.c_str() + at + key.size());
}

bool IsGone(pid_t pid) { return kill(pid, 0) == -1 && errno == ESRCH; }

size_t ResidentBytes() {
  std::ifstream statm("/proc/self/statm");  // proc(5): size resident shared ...
  size_t pages = 0, resident = 0;
  statm >> pages >> resident;
  return resident * static_cast<size_t>(sysconf(_SC_PAGESIZE));
}

// True once /proc/PID/stat shows state Z (proc(5): the field after the parenthesised name).
bool WaitForZombie(pid_t pid) {
  const auto deadline = Clock::now() + milliseconds(5000);
  while (Clock::now() < deadline) {
    std::ifstream stat("/proc/" + std::to_string(pid) + "/stat");
    std::string text((std::istreambuf_iterator<char>(stat)), std::istreambuf_iterator<char>());
    const size_t paren = text.rfind(')');
    if (paren != std::string::npos && paren + 2 < text.size() && text[paren + 2] == 'Z') {
      return true;
    }
    std::this_thread::sleep_for(milliseconds(5));
  }
  return false;
}

double SecondsSince(Clock::time_point start) {
  return std::chrono::duration<double>(Clock::now() - start).count();
}

const SubprocessMode kModes[] = {SubprocessMode::kPersistent, SubprocessMode::kPerCase};

TEST_CASE("the request goes out as one JSON line and the reply comes back as printed",
          "[subprocess]") {
  // cat copies its input: the reply is the request itself, keys in nlohmann's sorted order.
  PipelineRequest request = Ask("When does boarding close?", "boarding-1");
  request.input = {{"deck", 2}};
  request.repeat = 1;
  const std::string expected =
      R"({"id":"boarding-1","input":{"deck":2},"question":"When does boarding close?","repeat":1})";
  for (SubprocessMode mode : kModes) {
    auto adapter = Make(Config({"cat"}, mode));
    const CallResult result = adapter->Call(request, 0);
    CHECK(result.error.empty());
    CHECK(result.body == expected);
    CHECK(result.attempts == 1);
    CHECK(result.latency_ms > 0);
    CHECK(result.stdout_excerpt.empty());
  }
}

TEST_CASE("a persistent worker serves many calls", "[subprocess]") {
  auto adapter = Make(Config({Fixture("crash-pipeline")}));
  for (int i = 0; i < 20; ++i) {
    const std::string question = "question " + std::to_string(i);
    const CallResult result = adapter->Call(Ask(question), 0);
    CHECK(result.error.empty());
    CHECK(result.body == Echo(question));
  }
}

TEST_CASE("a crash costs one case and the worker is restarted", "[subprocess]") {
  auto adapter = Make(Config({Fixture("crash-pipeline")}));
  const CallResult crashed = adapter->Call(Ask("please crash"), 0);
  CHECK(crashed.error == "process exited with status 3");
  CHECK(crashed.attempts == 2);  // restarted and retried once; the retry crashed too
  CHECK(crashed.stdout_excerpt == "{\"answer\": \"partial ");
  CHECK(crashed.stderr_excerpt.find("crash-pipeline: crashing on request 1\n") !=
        std::string::npos);
  const CallResult next = adapter->Call(Ask("the next case"), 0);
  CHECK(next.error.empty());
  CHECK(next.body == Echo("the next case"));
  CHECK(next.attempts == 1);
}

TEST_CASE("a crash on the first attempt only is retried to success", "[subprocess]") {
  // --every 2: the second request of each process crashes; the retry is a new process's first.
  auto adapter = Make(Config({Fixture("crash-pipeline"), "--every", "2"}));
  CHECK(adapter->Call(Ask("one"), 0).body == Echo("one"));
  const CallResult retried = adapter->Call(Ask("two"), 0);
  CHECK(retried.error.empty());
  CHECK(retried.body == Echo("two"));
  CHECK(retried.attempts == 2);
}

TEST_CASE("a signal death is named", "[subprocess]") {
  for (SubprocessMode mode : kModes) {
    auto adapter = Make(Config({Fixture("crash-pipeline")}, mode));
    const CallResult result = adapter->Call(Ask("segv"), 0);
    CHECK(result.error == "process killed by signal SIGSEGV");
    CHECK(result.attempts == (mode == SubprocessMode::kPersistent ? 2 : 1));
  }
}

TEST_CASE("a worker that dies after replying is replaced before the next request", "[subprocess]") {
  auto adapter = Make(Config({Fixture("crash-pipeline")}));
  const CallResult first = adapter->Call(Ask("exit-after-reply"), 0);
  CHECK(first.error.empty());
  CHECK(first.body == Echo("exit-after-reply"));
  // Wait (bounded) until the worker has really exited; it stays a zombie until reaped.
  const long pid = NumberAfter(first.stderr_excerpt, "pid=");
  REQUIRE(pid > 0);
  REQUIRE(WaitForZombie(static_cast<pid_t>(pid)));
  const CallResult second = adapter->Call(Ask("still there?"), 0);
  CHECK(second.error.empty());
  CHECK(second.body == Echo("still there?"));
  CHECK(second.attempts == 1);  // the dead worker was noticed before the request went out
}

TEST_CASE("per-case: a non-zero exit is an error even after a good reply", "[subprocess]") {
  auto adapter = Make(Config({Fixture("crash-pipeline")}, SubprocessMode::kPerCase));
  const CallResult result = adapter->Call(Ask("exit-after-reply"), 0);
  CHECK(result.error == "process exited with status 3");
  CHECK(result.attempts == 1);  // per-case mode does not retry
  CHECK(result.stdout_excerpt == Echo("exit-after-reply") + "\n");
  const CallResult good = adapter->Call(Ask("fine"), 0);
  CHECK(good.error.empty());
  CHECK(good.body == Echo("fine"));  // stdout less its trailing newline
}

TEST_CASE("a hung pipeline times out and its whole process group is killed", "[subprocess]") {
  for (SubprocessMode mode : kModes) {
    for (bool ignore_term : {false, true}) {
      INFO("per-case: " << (mode == SubprocessMode::kPerCase)
                        << ", --ignore-term: " << ignore_term);
      PipelineConfig config = Config({Fixture("hang-pipeline")}, mode);
      if (ignore_term) config.command.push_back({"--ignore-term", "--ignore-term"});
      config.timeout_ms = 300;
      auto adapter = Make(config);
      const auto start = Clock::now();
      const CallResult result = adapter->Call(Ask("hang here"), 0);
      const double seconds = SecondsSince(start);
      CHECK(result.error == "timed out after 300ms");
      CHECK(result.attempts == 1);  // timeouts are not retried
      // It took at least the timeout: the latency is the timeout, marked as a lower bound.
      CHECK(result.timed_out);
      CHECK(result.latency_ms == 300);
      CHECK(seconds >= 0.3);
      if (ignore_term) CHECK(seconds >= 0.3 + 0.5);  // SIGTERM ignored: SIGKILL after the grace
      CHECK(seconds < 10);                           // far above 0.8 s: it did not hang
      const long pgid = NumberAfter(result.stderr_excerpt, "pgid=");
      const long helper = NumberAfter(result.stderr_excerpt, "helper=");
      REQUIRE(pgid > 0);
      REQUIRE(helper > 0);
      CHECK(IsGone(static_cast<pid_t>(-pgid)));  // kill(-pgid, 0): no process in the group
      CHECK(IsGone(static_cast<pid_t>(helper)));
      // The slot starts a new process for the next case.
      const CallResult next = adapter->Call(Ask("answer this"), 0);
      CHECK(next.error.empty());
      CHECK(next.body == Echo("answer this"));
      CHECK_FALSE(next.timed_out);
    }
  }
}

TEST_CASE("per-case: a helper holding stdout open does not delay the reply", "[subprocess]") {
  PipelineConfig config = Config({Fixture("hang-pipeline")}, SubprocessMode::kPerCase);
  auto adapter = Make(config);
  const CallResult result = adapter->Call(Ask("quick"), 0);
  CHECK(result.error.empty());
  CHECK(result.body == Echo("quick"));
  CHECK(result.latency_ms < 5000);  // far below: it did not wait for the helper's timeout
  const long helper = NumberAfter(result.stderr_excerpt, "helper=");
  REQUIRE(helper > 0);
  CHECK(IsGone(static_cast<pid_t>(helper)));
}

TEST_CASE("garbage comes back as the body, for the caller to reject", "[subprocess]") {
  for (SubprocessMode mode : kModes) {
    auto adapter = Make(Config({Fixture("garbage-pipeline")}, mode));
    const CallResult result = adapter->Call(Ask("some garbage please"), 0);
    CHECK(result.error.empty());
    CHECK(result.body == "this is not json");
  }
}

TEST_CASE("a stdout flood stops at the size cap with bounded memory", "[subprocess]") {
  for (SubprocessMode mode : kModes) {
    PipelineConfig config = Config({Fixture("flood-pipeline")}, mode);
    config.max_response_bytes = 1024 * 1024;
    auto adapter = Make(config);
    const size_t before = ResidentBytes();
    const auto start = Clock::now();
    const CallResult result = adapter->Call(Ask("flood-stdout"), 0);
    const size_t after = ResidentBytes();
    CHECK(result.error == "response exceeded 1 MiB");
    CHECK(result.attempts == 1);  // not retried
    CHECK(result.stdout_excerpt == std::string(SubprocessAdapter::kExcerptBytes, 'x'));
    CHECK(after < before + 8 * 1024 * 1024);  // the pipeline offered 1 GiB
    CHECK(SecondsSince(start) < 10);
    const CallResult next = adapter->Call(Ask("calm again"), 0);
    CHECK(next.error.empty());
    CHECK(next.body == Echo("calm again"));
  }
}

TEST_CASE("a stderr flood is drained and only its tail kept", "[subprocess]") {
  for (SubprocessMode mode : kModes) {
    auto adapter = Make(Config({Fixture("flood-pipeline")}, mode));
    const CallResult result = adapter->Call(Ask("flood-stderr"), 0);
    CHECK(result.error.empty());
    CHECK(result.body == Echo("flood-stderr"));
    CHECK(result.stderr_excerpt.size() == SubprocessAdapter::kExcerptBytes);
    const std::string end = "\nend of flood\n";
    REQUIRE(result.stderr_excerpt.size() >= end.size());
    CHECK(result.stderr_excerpt.substr(result.stderr_excerpt.size() - end.size()) == end);
  }
}

TEST_CASE("a large request cannot deadlock against a child that writes first", "[subprocess]") {
  // 1 MiB to stderr before the child reads, then a 1 MiB request: both exceed a pipe's buffer,
  // so blocking writes on either side would wait for each other forever.
  auto adapter =
      Make(Config({Fixture("flood-pipeline"), "--stderr-at-start", std::to_string(1 << 20)}));
  const std::string question(1 << 20, 'q');
  const CallResult result = adapter->Call(Ask(question), 0);
  CHECK(result.error.empty());
  CHECK(result.body == Echo(question));
}

TEST_CASE("secrets never reach an excerpt", "[subprocess]") {
  const std::string secret = "tok-3f9a-harbour";
  for (SubprocessMode mode : kModes) {
    PipelineConfig config =
        Config({Fixture("crash-pipeline"), "--print-env", "PLUMB_TEST_TOKEN"}, mode);
    config.env["PLUMB_TEST_TOKEN"] = {secret, "${PLUMB_TEST_TOKEN}"};
    config.secrets = {secret};
    auto adapter = Make(config);
    const CallResult result = adapter->Call(Ask("crash"), 0);
    CHECK(result.error == "process exited with status 3");
    CHECK(result.stdout_excerpt == "{\"answer\": \"partial PLUMB_TEST_TOKEN=***");
    CHECK(result.stderr_excerpt.find("starting with PLUMB_TEST_TOKEN=***\n") != std::string::npos);
    CHECK(result.stderr_excerpt.find(secret) == std::string::npos);
  }
}

TEST_CASE("the environment and working directory reach the pipeline", "[subprocess]") {
  PipelineConfig env = Config({"printenv", "PLUMB_TEST_DECK"}, SubprocessMode::kPerCase);
  env.env["PLUMB_TEST_DECK"] = {"upper deck", "upper deck"};
  CHECK(Make(env)->Call(Ask("?"), 0).body == "upper deck");
  PipelineConfig cwd = Config({"pwd", "-P"}, SubprocessMode::kPerCase);
  cwd.cwd = ExpandedString{"/", "/"};
  CHECK(Make(cwd)->Call(Ask("?"), 0).body == "/");
}

TEST_CASE("Shutdown from another thread interrupts a hanging call", "[subprocess]") {
  for (SubprocessMode mode : kModes) {
    const std::string ready = "/tmp/plumb-hang-ready-" + std::to_string(getpid());
    unlink(ready.c_str());
    PipelineConfig config =
        Config({Fixture("hang-pipeline"), "--ignore-term", "--ready-file", ready}, mode);
    config.timeout_ms = 60000;
    auto adapter = Make(config, 2);
    const auto start = Clock::now();
    std::thread stopper([&] {
      // Once the pipeline has the request and hangs (bounded wait, in case it never does).
      for (int i = 0; i < 1000 && access(ready.c_str(), F_OK) != 0; ++i) {
        std::this_thread::sleep_for(milliseconds(10));
      }
      adapter->Shutdown();
    });
    const CallResult result = adapter->Call(Ask("hang"), 1);
    stopper.join();
    unlink(ready.c_str());
    CHECK(result.error == "run interrupted");
    CHECK(SecondsSince(start) < 20);  // far below the 60 s timeout
    const long pgid = NumberAfter(result.stderr_excerpt, "pgid=");
    REQUIRE(pgid > 0);
    CHECK(IsGone(static_cast<pid_t>(-pgid)));  // gone once Shutdown returned
    CHECK(adapter->Call(Ask("after"), 0).error == "run interrupted");
    adapter->Shutdown();  // idempotent
  }
}

TEST_CASE("Shutdown ends idle persistent workers", "[subprocess]") {
  auto adapter = Make(Config({Fixture("hang-pipeline")}), 2);
  std::vector<long> groups;
  for (int slot = 0; slot < 2; ++slot) {
    const CallResult result = adapter->Call(Ask("hello"), slot);
    CHECK(result.body == Echo("hello"));
    // The start-up line was read during the call, so the success excerpt carries it.
    groups.push_back(NumberAfter(result.stderr_excerpt, "pgid="));
    REQUIRE(groups.back() > 0);
  }
  CHECK(groups[0] != groups[1]);  // one process per slot
  adapter->Shutdown();
  for (long pgid : groups) CHECK(IsGone(static_cast<pid_t>(-pgid)));
}

TEST_CASE("slots run calls concurrently, each with its own worker", "[subprocess]") {
  auto adapter = Make(Config({Fixture("echo-pipeline")}), 2);
  std::vector<int> wrong(2, 0);
  std::vector<std::thread> workers;
  for (int slot = 0; slot < 2; ++slot) {
    workers.emplace_back([&, slot] {
      for (int i = 0; i < 500; ++i) {
        const std::string question = "slot " + std::to_string(slot) + " call " + std::to_string(i);
        if (adapter->Call(Ask(question), slot).body != Echo(question)) ++wrong[slot];
      }
    });
  }
  for (std::thread& worker : workers) worker.join();
  CHECK(wrong[0] == 0);
  CHECK(wrong[1] == 0);
}

TEST_CASE("configuration errors are found before any case runs", "[subprocess]") {
  std::string error;
  SECTION("a program that is not on PATH") {
    CHECK_FALSE(SubprocessAdapter::Create(Config({"no-such-pipeline-9q"}), 1, &error));
    CHECK(error == "pipeline \"fixture\": program \"no-such-pipeline-9q\" was not found on PATH");
  }
  SECTION("a path that does not exist") {
    CHECK_FALSE(SubprocessAdapter::Create(Config({"/nonexistent/pipeline"}), 1, &error));
    CHECK(error == "pipeline \"fixture\": program \"/nonexistent/pipeline\" does not exist");
  }
  SECTION("an empty command") {
    CHECK_FALSE(SubprocessAdapter::Create(Config({}), 1, &error));
    CHECK(error.find("the command is empty") != std::string::npos);
  }
  SECTION("a working directory that is not one") {
    PipelineConfig config = Config({"cat"});
    config.cwd = ExpandedString{"/nonexistent/dir", "/nonexistent/dir"};
    CHECK_FALSE(SubprocessAdapter::Create(config, 1, &error));
    CHECK(error ==
          "pipeline \"fixture\": working directory \"/nonexistent/dir\" is not a directory");
  }
}

// Excerpts: hand-worked examples. UTF-8 byte sequences from RFC 3629 (é = C3 A9, 日 = E6 97 A5).
TEST_CASE("RedactSecrets replaces every occurrence", "[excerpt]") {
  CHECK(RedactSecrets("token=abc123; again abc123", {"abc123"}) == "token=***; again ***");
  CHECK(RedactSecrets("nothing here", {"abc123", ""}) == "nothing here");
  CHECK(RedactSecrets("abc", {""}) == "abc");  // an empty secret matches nothing
  // Overlapping occurrences of two secrets: [1,5) and [3,7) become one mask.
  CHECK(RedactSecrets("xabcdefy", {"abcd", "cdef"}) == "x***y");
  // Overlapping occurrences of one secret ("aa" at 0 and 1) too; touching ones do not merge.
  CHECK(RedactSecrets("aaa", {"aa"}) == "***");
  CHECK(RedactSecrets("abab", {"ab"}) == "******");
  // A secret that contains the mask is still replaced whole.
  CHECK(RedactSecrets("p=**x**", {"**x**"}) == "p=***");
}

TEST_CASE("excerpts are cut at UTF-8 boundaries", "[excerpt]") {
  const std::string hello = "h\xC3\xA9llo";  // "héllo": 6 bytes
  CHECK(Utf8Prefix(hello, 2) == "h");        // byte 2 is é's second byte
  CHECK(Utf8Prefix(hello, 3) == "h\xC3\xA9");
  CHECK(Utf8Prefix(hello, 10) == hello);
  CHECK(Utf8Suffix(hello, 5) == "\xC3\xA9llo");
  CHECK(Utf8Suffix(hello, 4) == "llo");
  const std::string japanese = "\xE6\x97\xA5\xE6\x97\xA5";  // 日日
  CHECK(Utf8Prefix(japanese, 5) == "\xE6\x97\xA5");
  CHECK(Utf8Suffix(japanese, 5) == "\xE6\x97\xA5");
  CHECK(Utf8Prefix(japanese, 2).empty());
  // Not UTF-8 (continuation bytes only): cut at the byte limit.
  CHECK(Utf8Prefix(std::string(5, '\x80'), 2).size() == 2);
}

TEST_CASE("a secret straddling an excerpt's cut leaves no fragment", "[excerpt]") {
  // Head, 12 bytes of "0123456789SECRETxyz": the window ends inside SECRET [10,16), which is
  // masked, and the mask is cut back to 12 bytes.
  CHECK(HeadExcerpt("0123456789SECRETxyz", 12, {"SECRET"}) == "0123456789**");
  // Tail, 12 bytes of "abcSECRET0123456789": the window starts inside SECRET [3,9).
  CHECK(TailExcerpt("abcSECRET0123456789", 12, {"SECRET"}) == "**0123456789");
  CHECK(HeadExcerpt("short", 12, {"SECRET"}) == "short");
  CHECK(TailExcerpt("ab SECRET", 100, {"SECRET"}) == "ab ***");
}

}  // namespace
}  // namespace plumb
