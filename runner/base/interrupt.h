#ifndef PLUMB_RUNNER_BASE_INTERRUPT_H_
#define PLUMB_RUNNER_BASE_INTERRUPT_H_

/// SIGINT and SIGTERM, for the whole life of the process (SPEC §8: an interrupted run exits 130;
/// SIGTERM exits 143, 128 + its number, as shells report it). main() calls
/// InstallInterruptHandlers before anything else, so a signal in the first milliseconds is
/// handled like any other. A signal is passed to a watch thread (almost nothing is safe inside a
/// signal handler), which then:
///  - while an InterruptWatch is alive (the run loop), runs its callback (stopping the adapter's
///    processes) and raises the flag the scheduler polls; the command then finishes as
///    interrupted and main exits with InterruptExitCode();
///  - at any other time (loading the suite, writing run.json and the reports), removes every
///    temporary file registered with RemoveOnInterrupt and exits at once with
///    InterruptExitCode(): what is in place stays whole (files are replaced by rename), the
///    journal is kept, and `--resume` finishes the run.
/// A second signal while the callback runs exits at once (the user insists).

#include <atomic>
#include <functional>
#include <string>

namespace plumb {

/// Installs the handlers and starts the watch thread; later calls do nothing. Thread-safe.
void InstallInterruptHandlers();

/// True once SIGINT or SIGTERM came.
const std::atomic<bool>& InterruptRequested();

/// 128 + the number of the first signal that came: 130 for SIGINT, 143 for SIGTERM; 130 when
/// none came (an interruption reported by other means).
int InterruptExitCode();

/// Registers a temporary file to delete if a signal ends the process outside an InterruptWatch,
/// and forgets it again. The path must stay registered only while the file is temporary.
void RemoveOnInterrupt(const std::string& path);
void KeepOnInterrupt(const std::string& path);

/// While alive, a signal runs `on_interrupt` once on the watch thread instead of ending the
/// process. Installs the handlers if main() has not. One watch at a time.
class InterruptWatch {
 public:
  explicit InterruptWatch(std::function<void()> on_interrupt);
  /// Waits for a callback that is running, then lets signals end the process again.
  ~InterruptWatch();
  InterruptWatch(const InterruptWatch&) = delete;
  InterruptWatch& operator=(const InterruptWatch&) = delete;

  const std::atomic<bool>& interrupted() const { return InterruptRequested(); }
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_BASE_INTERRUPT_H_
