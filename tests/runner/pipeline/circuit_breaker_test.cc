// The run-wide circuit breaker of HTTP pipelines (runner/pipeline/circuit_breaker.h), driven with a
// hand-held clock. Every expected state follows from the thresholds stated in the header
// (open at >= 80% failures among the last 20 attempts once 10 are recorded; pauses of 2 s
// doubling to 30 s; give up after 5 failed probes), worked through case by case below.

#include "runner/pipeline/circuit_breaker.h"

#include <catch2/catch.hpp>
#include <chrono>
#include <thread>

using plumb::CircuitBreaker;
using std::chrono::seconds;
using Verdict = CircuitBreaker::Verdict;

namespace {

const CircuitBreaker::Clock::time_point kT0 =
    CircuitBreaker::Clock::time_point() + std::chrono::hours(1);

void RecordMany(CircuitBreaker& breaker, int count, bool failed) {
  for (int i = 0; i < count; ++i) breaker.Record(failed, false, kT0);
}

}  // namespace

TEST_CASE("a few early failures do not open the breaker but the tenth does") {
  CircuitBreaker breaker;
  RecordMany(breaker, 9, true);
  CHECK(breaker.Admit(kT0).verdict == Verdict::kGo);  // 9 recorded, fewer than 10
  RecordMany(breaker, 1, true);                       // 10 of 10 failed
  const CircuitBreaker::Admission a = breaker.Admit(kT0);
  CHECK(a.verdict == Verdict::kWait);
  CHECK(a.wait_until == kT0 + seconds(2));
  CHECK(breaker.times_opened() == 1);
}

TEST_CASE("it opens at 16 failures in the last 20, not at 15 in 19") {
  CircuitBreaker breaker;
  RecordMany(breaker, 4, false);
  RecordMany(breaker, 15, true);  // 15 of 19 = 79%: below 80%
  CHECK(breaker.Admit(kT0).verdict == Verdict::kGo);
  RecordMany(breaker, 1, true);  // 16 of 20 = 80%
  CHECK(breaker.Admit(kT0).verdict == Verdict::kWait);
}

TEST_CASE("only the last 20 attempts count") {
  SECTION("a steady 75% failure rate never opens it: any 20 in a row hold 15 failures") {
    CircuitBreaker breaker;
    for (int i = 0; i < 100; ++i) breaker.Record(i % 4 != 0, false, kT0);
    CHECK(breaker.Admit(kT0).verdict == Verdict::kGo);
  }
  SECTION("old successes slide out of the window") {
    CircuitBreaker breaker;
    RecordMany(breaker, 20, false);
    RecordMany(breaker, 15, true);  // window: 5 successes, 15 failures (75%)
    CHECK(breaker.Admit(kT0).verdict == Verdict::kGo);
    RecordMany(breaker, 1, true);  // window: 4 successes, 16 failures (80%)
    CHECK(breaker.Admit(kT0).verdict == Verdict::kWait);
  }
}

TEST_CASE(
    "after the pause one probe goes while the others wait and its success closes the breaker") {
  CircuitBreaker breaker;
  RecordMany(breaker, 10, true);
  CHECK(breaker.Admit(kT0 + seconds(1)).verdict == Verdict::kWait);
  CHECK(breaker.Admit(kT0 + seconds(2)).verdict == Verdict::kProbe);
  const CircuitBreaker::Admission other = breaker.Admit(kT0 + seconds(2));
  CHECK(other.verdict == Verdict::kWait);
  CHECK(other.wait_until == CircuitBreaker::Clock::time_point::max());  // until the probe ends
  // An attempt admitted before the breaker opened finishing now changes nothing.
  breaker.Record(true, false, kT0 + seconds(2));
  CHECK(breaker.Admit(kT0 + seconds(2)).verdict == Verdict::kWait);

  breaker.Record(false, /*probe=*/true, kT0 + seconds(3));
  CHECK(breaker.Admit(kT0 + seconds(3)).verdict == Verdict::kGo);
  // The window starts afresh: nine new failures do not reopen it.
  RecordMany(breaker, 9, true);
  CHECK(breaker.Admit(kT0 + seconds(3)).verdict == Verdict::kGo);
}

TEST_CASE("failed probes double the pause up to 30 s, and the fifth gives up for good") {
  CircuitBreaker breaker;
  RecordMany(breaker, 10, true);
  auto now = kT0;
  // Pauses: 2 s (opening), then 4, 8, 16 after failed probes 1-3, 30 (not 32) after the fourth.
  for (const int pause : {2, 4, 8, 16, 30}) {
    const CircuitBreaker::Admission waiting = breaker.Admit(now);
    REQUIRE(waiting.verdict == Verdict::kWait);
    CHECK(waiting.wait_until == now + seconds(pause));
    now += seconds(pause);
    REQUIRE(breaker.Admit(now).verdict == Verdict::kProbe);
    breaker.Record(true, true, now);
  }
  CHECK(breaker.Admit(now).verdict == Verdict::kRefuse);
  CHECK(breaker.Admit(now + std::chrono::hours(1)).verdict == Verdict::kRefuse);
  CHECK(breaker.RefusalReason() ==
        "not sent: the service kept failing (10 of the last 10 requests failed, then 5 probe "
        "requests after pauses failed too), so the circuit breaker stopped sending");
}

TEST_CASE("Enter blocks while a probe is out and returns when it succeeds") {
  plumb::CircuitBreakerOptions options;
  options.first_pause = std::chrono::seconds(0);  // the probe may go at once
  CircuitBreaker breaker(options);
  // Opened on the real clock, which Enter reads: kT0 is an hour after the steady clock's
  // epoch (boot, on Linux), so on a machine up for less than an hour a breaker opened at kT0
  // would still be paused and Enter would block until then.
  for (int i = 0; i < 10; ++i) breaker.Record(true, false, CircuitBreaker::Clock::now());
  REQUIRE(breaker.Enter() == Verdict::kProbe);
  Verdict second = Verdict::kRefuse;
  std::thread waiter([&] { second = breaker.Enter(); });
  breaker.Record(false, true, CircuitBreaker::Clock::now());
  waiter.join();
  CHECK(second == Verdict::kGo);
}

TEST_CASE("Cancel refuses waiting and later requests") {
  CircuitBreaker breaker;
  // Opened on the real clock (Enter reads it): paused for the next 2 s.
  for (int i = 0; i < 10; ++i) breaker.Record(true, false, CircuitBreaker::Clock::now());
  Verdict waited = Verdict::kGo;
  std::thread waiter([&] { waited = breaker.Enter(); });
  breaker.Cancel();
  waiter.join();
  CHECK(waited == Verdict::kRefuse);
  CHECK(breaker.Enter() == Verdict::kRefuse);
}
