#ifndef PLUMB_RUNNER_PIPELINE_RETRY_POLICY_H_
#define PLUMB_RUNNER_PIPELINE_RETRY_POLICY_H_

/// When an HTTP pipeline's failed attempt is sent again, and after how long (SPEC §5 `retries`).
/// The HTTP adapter asks it after every failed attempt; the decision is recorded in the case's
/// attempt count.
///
/// Retried: connect errors (refused, unresolvable host, connect timeout) and the statuses 408,
/// 429, 500, 502, 503 and 504, which say "not now" rather than "never". Every other 4xx is the
/// request's fault and is never retried; neither is a timeout after the request was sent, a
/// reset mid-reply or an oversized reply, since the server may have done the work and sending it
/// again costs the full timeout again.
///
/// Delay: the server's Retry-After when it sent one (seconds or an HTTP-date), else exponential
/// backoff with full jitter: retry n waits a uniform random time in [0, min(cap, base * 2^(n-1))],
/// so clients that failed together do not come back together. The generator is seeded, so a run
/// makes the same choices each time. A Retry-After beyond `max_retry_after` ends the case instead
/// of stalling the run.

#include <chrono>
#include <cstdint>
#include <mutex>
#include <optional>
#include <random>
#include <string>
#include <string_view>

namespace plumb {

/// 408, 429, 500, 502, 503, 504.
bool IsRetryableStatus(int status);

/// Parses a Retry-After field value (RFC 9110 §10.2.3): delay-seconds (digits), or an HTTP-date
/// in any of the three forms of RFC 9110 §5.6.7 (IMF-fixdate "Sun, 06 Nov 1994 08:49:37 GMT",
/// obsolete RFC 850 "Sunday, 06-Nov-94 08:49:37 GMT", asctime "Sun Nov  6 08:49:37 1994"),
/// whose delay is the date minus `now`, zero when it is past. nullopt when the value is neither.
std::optional<std::chrono::milliseconds> ParseRetryAfter(std::string_view value,
                                                         std::chrono::system_clock::time_point now);

struct RetryOptions {
  int retries = 3;  // attempts after the first
  std::chrono::milliseconds base{500};
  std::chrono::milliseconds cap{30000};
  std::chrono::milliseconds max_retry_after{60000};
  uint64_t seed = 20240611;
};

struct RetryDecision {
  bool retry = false;
  std::chrono::milliseconds delay{0};
  /// Set when a retryable failure is not retried for a reason the user should read (the server
  /// asked for a longer wait than plumb allows).
  std::string note;
};

/// Thread-safe: one policy serves every slot of an adapter.
class RetryPolicy {
 public:
  explicit RetryPolicy(const RetryOptions& options);

  int max_attempts() const { return options_.retries + 1; }

  /// After attempt number `attempt` (1 = the first) failed: retry or not, and the wait.
  /// `retryable` is whether the failure is of a retried kind (see above); `retry_after` is the
  /// server's parsed Retry-After, if any.
  RetryDecision Decide(int attempt, bool retryable,
                       std::optional<std::chrono::milliseconds> retry_after);

  /// The full-jitter delay before retry number `retry` (1 = the first retry).
  std::chrono::milliseconds Backoff(int retry);

 private:
  const RetryOptions options_;
  std::mutex mutex_;
  std::mt19937_64 generator_;
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_PIPELINE_RETRY_POLICY_H_
