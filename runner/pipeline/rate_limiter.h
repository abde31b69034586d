#ifndef PLUMB_RUNNER_PIPELINE_RATE_LIMITER_H_
#define PLUMB_RUNNER_PIPELINE_RATE_LIMITER_H_

/// A token bucket for a pipeline's `rate:` (SPEC §5, "rate: 20/s"): the HTTP adapter takes one
/// token before every attempt, retries included, so a rate-limited API sees at most `rate`
/// requests a second on average however many slots run.
///
/// The bucket holds `burst` tokens (default 1) and refills at `per_second`; with burst 1 the
/// requests are simply spaced 1/rate apart, which keeps within any per-second window the
/// provider may count in. It is kept as a "theoretical arrival time" (the GCRA form of a token
/// bucket), so reserving is O(1) and needs no refill thread.
///
/// Thread-safe. Acquire blocks the calling thread; Cancel wakes every waiter at once (the
/// adapter's Shutdown uses it), and after Cancel every Acquire returns false immediately.

#include <chrono>
#include <condition_variable>
#include <mutex>

namespace plumb {

class RateLimiter {
 public:
  using Clock = std::chrono::steady_clock;

  /// `per_second` > 0; `burst` >= 1.
  explicit RateLimiter(double per_second, int burst = 1);
  RateLimiter(const RateLimiter&) = delete;
  RateLimiter& operator=(const RateLimiter&) = delete;

  /// Takes a token at `now` and returns how long the caller must wait before using it (zero
  /// when one is available). Every call reserves a distinct token, so concurrent callers get
  /// distinct, spaced waits.
  Clock::duration Reserve(Clock::time_point now);

  /// Reserve(Clock::now()) and sleep for it. False when cancelled before or during the wait.
  bool Acquire();
  void Cancel();

 private:
  const Clock::duration interval_;
  const Clock::duration tolerance_;  // (burst - 1) intervals: how far ahead tokens may be taken
  std::mutex mutex_;
  std::condition_variable cancelled_cv_;
  bool cancelled_ = false;
  Clock::time_point next_;  // the theoretical arrival time of the next request
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_PIPELINE_RATE_LIMITER_H_
