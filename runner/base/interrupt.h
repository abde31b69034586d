#ifndef PLUMB_RUNNER_BASE_INTERRUPT_H_
#define PLUMB_RUNNER_BASE_INTERRUPT_H_

/// InterruptWatch turns SIGINT/SIGTERM into a flag the scheduler polls and a callback (stopping
/// the adapter's processes) run on an ordinary thread, since almost nothing is safe inside a
/// signal handler. A second SIGINT while stopping exits at once with 130. One watch at a time.

#include <atomic>
#include <functional>
#include <thread>

namespace plumb {

class InterruptWatch {
 public:
  /// Installs the handlers; `on_interrupt` runs once, on the watch's thread, when a signal comes.
  explicit InterruptWatch(std::function<void()> on_interrupt);
  /// Restores the previous handlers and joins the thread.
  ~InterruptWatch();
  InterruptWatch(const InterruptWatch&) = delete;
  InterruptWatch& operator=(const InterruptWatch&) = delete;

  const std::atomic<bool>& interrupted() const;

 private:
  std::function<void()> on_interrupt_;
  std::thread thread_;
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_BASE_INTERRUPT_H_
