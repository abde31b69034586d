// The token bucket behind `rate:` (runner/pipeline/rate_limiter.h), driven with hand-picked
// instants so nothing here depends on the machine's speed. Expected waits are worked out from the
// definition: at `rate` requests a second with a bucket of one token, requests are 1/rate
// apart; with a bucket of b tokens, b may go at once (GCRA, the "virtual scheduling" form of
// ITU-T I.371, common practice).

#include "runner/pipeline/rate_limiter.h"

#include <algorithm>
#include <catch2/catch.hpp>
#include <chrono>
#include <thread>
#include <vector>

using std::chrono::milliseconds;
using Clock = plumb::RateLimiter::Clock;

namespace {

const Clock::time_point kT0 = Clock::time_point() + std::chrono::hours(1);

}  // namespace

TEST_CASE("20/s spaces requests 50 ms apart") {
  plumb::RateLimiter limiter(20);
  CHECK(limiter.Reserve(kT0) == milliseconds(0));
  CHECK(limiter.Reserve(kT0) == milliseconds(50));
  CHECK(limiter.Reserve(kT0) == milliseconds(100));
  // 10 ms later the fourth token is due at 150 ms: 140 ms to wait.
  CHECK(limiter.Reserve(kT0 + milliseconds(10)) == milliseconds(140));
}

TEST_CASE("idle time does not bank a burst beyond the bucket") {
  plumb::RateLimiter limiter(20);
  CHECK(limiter.Reserve(kT0) == milliseconds(0));
  // A second of silence would allow 20 requests at once in a bucket of 20; in a bucket of one,
  // only the first goes at once.
  CHECK(limiter.Reserve(kT0 + milliseconds(1000)) == milliseconds(0));
  CHECK(limiter.Reserve(kT0 + milliseconds(1000)) == milliseconds(50));
}

TEST_CASE("a bucket of three lets three go at once, then refills at the rate") {
  plumb::RateLimiter limiter(10, /*burst=*/3);
  CHECK(limiter.Reserve(kT0) == milliseconds(0));
  CHECK(limiter.Reserve(kT0) == milliseconds(0));
  CHECK(limiter.Reserve(kT0) == milliseconds(0));
  CHECK(limiter.Reserve(kT0) == milliseconds(100));
  CHECK(limiter.Reserve(kT0) == milliseconds(200));
}

TEST_CASE("per-minute rates: 100/m is one request every 600 ms") {
  plumb::RateLimiter limiter(100.0 / 60.0);
  CHECK(limiter.Reserve(kT0) == milliseconds(0));
  CHECK(limiter.Reserve(kT0) == milliseconds(600));
}

TEST_CASE("concurrent callers each get a distinct token") {
  plumb::RateLimiter limiter(20);
  constexpr int kThreads = 8, kEach = 25;
  std::vector<std::vector<Clock::duration>> waits(kThreads);
  std::vector<std::thread> threads;
  for (int t = 0; t < kThreads; ++t) {
    threads.emplace_back([&, t] {
      for (int i = 0; i < kEach; ++i) waits[t].push_back(limiter.Reserve(kT0));
    });
  }
  for (std::thread& t : threads) t.join();
  std::vector<Clock::duration> all;
  for (const auto& w : waits) all.insert(all.end(), w.begin(), w.end());
  std::sort(all.begin(), all.end());
  // 200 requests at one instant: waits 0, 50 ms, ..., 9950 ms, each exactly once.
  REQUIRE(all.size() == 200);
  for (size_t i = 0; i < all.size(); ++i) CHECK(all[i] == milliseconds(50) * i);
}

TEST_CASE("Cancel wakes a waiting Acquire and refuses later ones") {
  plumb::RateLimiter limiter(0.001);  // one request every 1000 s
  REQUIRE(limiter.Acquire());         // the first token is free
  bool second = true;
  std::thread waiter([&] { second = limiter.Acquire(); });  // would wait 1000 s
  limiter.Cancel();
  waiter.join();
  CHECK_FALSE(second);
  CHECK_FALSE(limiter.Acquire());
}
