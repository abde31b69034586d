#include "runner/pipeline/circuit_breaker.h"

#include <algorithm>

namespace plumb {

CircuitBreaker::CircuitBreaker(const CircuitBreakerOptions& options)
    : options_(options), pause_(options.first_pause) {}

CircuitBreaker::Admission CircuitBreaker::Admit(Clock::time_point now) {
  std::lock_guard<std::mutex> lock(mutex_);
  return AdmitLocked(now);
}

CircuitBreaker::Admission CircuitBreaker::AdmitLocked(Clock::time_point now) {
  Admission admission;
  if (cancelled_) {
    admission.verdict = Verdict::kRefuse;
    return admission;
  }
  switch (state_) {
    case State::kClosed:
      admission.verdict = Verdict::kGo;
      break;
    case State::kOpen:
      if (now < open_until_) {
        admission.verdict = Verdict::kWait;
        admission.wait_until = open_until_;
      } else {
        state_ = State::kProbing;
        admission.verdict = Verdict::kProbe;
      }
      break;
    case State::kProbing:
      admission.verdict = Verdict::kWait;  // until the probe's Record wakes us
      break;
    case State::kGivenUp:
      admission.verdict = Verdict::kRefuse;
      break;
  }
  return admission;
}

void CircuitBreaker::Open(Clock::time_point now) {
  state_ = State::kOpen;
  open_until_ = now + pause_;
  ++times_opened_;
}

void CircuitBreaker::Record(bool failed, bool probe, Clock::time_point now) {
  std::lock_guard<std::mutex> lock(mutex_);
  if (probe && state_ == State::kProbing) {
    if (!failed) {
      state_ = State::kClosed;
      recent_.clear();
      recent_failures_ = 0;
      pause_ = options_.first_pause;
      failed_probes_ = 0;
    } else if (++failed_probes_ >= options_.max_failed_probes) {
      state_ = State::kGivenUp;
    } else {
      pause_ = std::min(pause_ * 2, options_.max_pause);
      Open(now);
    }
    changed_.notify_all();
    return;
  }
  if (state_ != State::kClosed) return;  // admitted before the breaker opened
  recent_.push_back(failed);
  recent_failures_ += failed ? 1 : 0;
  if (recent_.size() > options_.window) {
    recent_failures_ -= recent_.front() ? 1 : 0;
    recent_.pop_front();
  }
  if (recent_.size() >= options_.min_attempts &&
      static_cast<double>(recent_failures_) >=
          options_.open_ratio * static_cast<double>(recent_.size())) {
    opened_because_ = std::to_string(recent_failures_) + " of the last " +
                      std::to_string(recent_.size()) + " requests failed";
    Open(now);
    changed_.notify_all();
  }
}

CircuitBreaker::Verdict CircuitBreaker::Enter() {
  std::unique_lock<std::mutex> lock(mutex_);
  while (true) {
    const Admission admission = AdmitLocked(Clock::now());
    if (admission.verdict != Verdict::kWait) return admission.verdict;
    if (admission.wait_until == Clock::time_point::max()) {
      changed_.wait(lock);
    } else {
      changed_.wait_until(lock, admission.wait_until);
    }
  }
}

void CircuitBreaker::Cancel() {
  std::lock_guard<std::mutex> lock(mutex_);
  cancelled_ = true;
  changed_.notify_all();
}

std::string CircuitBreaker::RefusalReason() const {
  std::lock_guard<std::mutex> lock(mutex_);
  return "not sent: the service kept failing (" + opened_because_ + ", then " +
         std::to_string(failed_probes_) +
         " probe requests after pauses failed too), so the circuit breaker stopped sending";
}

int CircuitBreaker::times_opened() const {
  std::lock_guard<std::mutex> lock(mutex_);
  return times_opened_;
}

}  // namespace plumb
