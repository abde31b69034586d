#ifndef PLUMB_RUNNER_PIPELINE_CIRCUIT_BREAKER_H_
#define PLUMB_RUNNER_PIPELINE_CIRCUIT_BREAKER_H_

/// A run-wide circuit breaker for an HTTP pipeline (issue 4): when most recent requests fail,
/// the service is down or overloaded, and sending the rest of the suite at it would only turn
/// every case into an error (and, for a rate-limited API, dig the hole deeper). The breaker
/// pauses all slots instead, then lets one probe request through; a probe that succeeds resumes
/// the run, one that fails pauses again for longer.
///
/// Thresholds (CircuitBreakerOptions, defaults):
///  - it opens when at least 80% of the last 20 attempts failed, once at least 10 have been
///    recorded (so a handful of early failures does not trip it);
///  - the first pause is 2 s; each failed probe doubles it, up to 30 s;
///  - after 5 failed probes in a row (about a minute of pausing) it gives up for good: every
///    later request is refused at once, so a dead service ends the run with case errors in
///    seconds rather than hours.
/// "Failed" is the adapter's call: connect errors, timeouts, resets and the retryable statuses
/// (408, 429, 5xx); a 4xx or an invalid reply means the service is up, and counts as a success.
/// Attempts admitted before the breaker opened do not change it while it is open; only the probe
/// does.
///
/// Thread-safe. Admit/Record take the time as an argument, so the state machine is tested with
/// a hand-driven clock; Enter is the blocking form the adapter uses.

#include <chrono>
#include <condition_variable>
#include <cstddef>
#include <deque>
#include <mutex>
#include <string>

namespace plumb {

struct CircuitBreakerOptions {
  size_t window = 20;
  size_t min_attempts = 10;
  double open_ratio = 0.8;
  std::chrono::steady_clock::duration first_pause = std::chrono::seconds(2);
  std::chrono::steady_clock::duration max_pause = std::chrono::seconds(30);
  int max_failed_probes = 5;
};

class CircuitBreaker {
 public:
  using Clock = std::chrono::steady_clock;

  enum class Verdict {
    kGo,      // send it
    kProbe,   // send it: it is the probe; Record it with probe = true
    kWait,    // paused: ask again at `wait_until` (or when woken)
    kRefuse,  // given up (or cancelled): fail the request without sending
  };
  struct Admission {
    Verdict verdict = Verdict::kGo;
    Clock::time_point wait_until = Clock::time_point::max();
  };

  explicit CircuitBreaker(const CircuitBreakerOptions& options = {});
  CircuitBreaker(const CircuitBreaker&) = delete;
  CircuitBreaker& operator=(const CircuitBreaker&) = delete;

  /// What a request arriving at `now` may do.
  Admission Admit(Clock::time_point now);
  /// The outcome of an attempt that Admit let through.
  void Record(bool failed, bool probe, Clock::time_point now);

  /// Blocks while the breaker is paused or a probe is out; returns kGo, kProbe or kRefuse.
  Verdict Enter();
  /// Wakes every Enter with kRefuse, now and later (the adapter's Shutdown).
  void Cancel();

  /// Why requests are refused, for the case error: "the service kept failing: ...".
  std::string RefusalReason() const;
  /// How many times the breaker has opened (for tests and the run's diagnostics).
  int times_opened() const;

 private:
  enum class State { kClosed, kOpen, kProbing, kGivenUp };

  Admission AdmitLocked(Clock::time_point now);
  void Open(Clock::time_point now);

  const CircuitBreakerOptions options_;
  mutable std::mutex mutex_;
  std::condition_variable changed_;
  State state_ = State::kClosed;
  bool cancelled_ = false;
  std::deque<bool> recent_;  // true = failed; the last options_.window attempts
  size_t recent_failures_ = 0;
  Clock::duration pause_;
  Clock::time_point open_until_;
  int failed_probes_ = 0;
  int times_opened_ = 0;
  std::string opened_because_;
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_PIPELINE_CIRCUIT_BREAKER_H_
