#include "runner/run/progress.h"

#include <fmt/format.h>
#include <unistd.h>

#include <cstdio>

namespace plumb {

Progress::Progress(std::string label, int64_t total, bool enabled,
                   std::function<int()> retries_in_flight)
    : label_(std::move(label)),
      retries_in_flight_(std::move(retries_in_flight)),
      total_(total),
      enabled_(enabled),
      terminal_(isatty(STDERR_FILENO) == 1),
      start_(std::chrono::steady_clock::now()),
      last_print_(start_) {}

void Progress::Tick(bool errored) {
  done_.fetch_add(1, std::memory_order_relaxed);
  if (errored) errors_.fetch_add(1, std::memory_order_relaxed);
  if (!enabled_) return;
  std::unique_lock<std::mutex> lock(print_mutex_, std::try_to_lock);
  if (!lock.owns_lock()) return;
  const auto now = std::chrono::steady_clock::now();
  const auto interval = terminal_ ? std::chrono::milliseconds(100) : std::chrono::seconds(10);
  if (now - last_print_ < interval) return;
  last_print_ = now;
  Print(false);
}

void Progress::Print(bool final_line) {
  const int64_t done = done_.load();
  const double seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - start_).count();
  const double rate = seconds > 0 ? done / seconds : 0;
  std::string eta = "--";
  if (rate > 0 && done < total_) eta = fmt::format("{:.0f}s", (total_ - done) / rate);
  const std::string line = fmt::format("{}: {}/{} cases  {:.1f}/s  {} errors  eta {}", label_, done,
                                       total_, rate, errors_.load(), final_line ? "0s" : eta);
  if (terminal_) {
    std::fprintf(stderr, "\r\033[2K%s", line.c_str());
  } else {
    std::fprintf(stderr, "%s\n", line.c_str());
  }
  std::fflush(stderr);
}

void Progress::Finish() {
  if (!enabled_) return;
  std::lock_guard<std::mutex> lock(print_mutex_);
  if (terminal_) {
    std::fprintf(stderr, "\r\033[2K");
    std::fflush(stderr);
  }
}

}  // namespace plumb
