#ifndef PLUMB_RUNNER_RUN_PROGRESS_H_
#define PLUMB_RUNNER_RUN_PROGRESS_H_

/// Progress reports a run's advance on stderr, never stdout (stdout may carry --json). On a
/// terminal it redraws one live line (done/total, rate, errors, retries waiting, ETA) at most ten
/// times a second;
/// elsewhere (CI logs) it prints a plain line every ten seconds, so a long run shows life
/// without flooding the log. Tick() is thread-safe and cheap enough to call per case.

#include <atomic>
#include <chrono>
#include <cstdint>
#include <functional>
#include <mutex>
#include <string>

namespace plumb {

class Progress {
 public:
  /// `label` names what is running ("retrieve"); `enabled` false silences it (--json, tests).
  /// `retries_in_flight`, when set, is polled for the line's "retrying" count.
  Progress(std::string label, int64_t total, bool enabled,
           std::function<int()> retries_in_flight = {});
  void Tick(bool errored);
  /// Clears the live line; call once when the run ends.
  void Finish();

 private:
  void Print(bool final_line);

  const std::string label_;
  const std::function<int()> retries_in_flight_;
  const int64_t total_;
  const bool enabled_;
  const bool terminal_;
  const std::chrono::steady_clock::time_point start_;
  std::atomic<int64_t> done_{0};
  std::atomic<int64_t> errors_{0};
  std::mutex print_mutex_;
  std::chrono::steady_clock::time_point last_print_;
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_PROGRESS_H_
