#include "runner/pipeline/rate_limiter.h"

#include <algorithm>

namespace plumb {

RateLimiter::RateLimiter(double per_second, int burst)
    // Rounded, not truncated: 100/m must be 600 ms exactly, not 599.999999 ms.
    : interval_(
          std::chrono::round<Clock::duration>(std::chrono::duration<double>(1.0 / per_second))),
      tolerance_(interval_ * (std::max(burst, 1) - 1)),
      next_(Clock::time_point::min()) {}

RateLimiter::Clock::duration RateLimiter::Reserve(Clock::time_point now) {
  std::lock_guard<std::mutex> lock(mutex_);
  // GCRA (scheduling form): a request at `now` may go once the theoretical arrival time is at
  // most `tolerance_` ahead of it; each request moves that time on by one interval. Idle time
  // never banks more than `burst` tokens, because the arrival time never falls behind `now`.
  const Clock::time_point arrival = std::max(next_, now);
  const Clock::time_point send = std::max(now, arrival - tolerance_);
  next_ = arrival + interval_;
  return send - now;
}

bool RateLimiter::Acquire() {
  {
    std::lock_guard<std::mutex> lock(mutex_);
    if (cancelled_) return false;
  }
  const Clock::time_point now = Clock::now();
  const Clock::duration wait = Reserve(now);
  std::unique_lock<std::mutex> lock(mutex_);
  if (wait > Clock::duration::zero()) {
    cancelled_cv_.wait_until(lock, now + wait, [this] { return cancelled_; });
  }
  return !cancelled_;
}

void RateLimiter::Cancel() {
  std::lock_guard<std::mutex> lock(mutex_);
  cancelled_ = true;
  cancelled_cv_.notify_all();
}

}  // namespace plumb
