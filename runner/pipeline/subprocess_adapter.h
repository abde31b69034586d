#ifndef PLUMB_RUNNER_PIPELINE_SUBPROCESS_ADAPTER_H_
#define PLUMB_RUNNER_PIPELINE_SUBPROCESS_ADAPTER_H_

/// The subprocess adapter (SPEC §5) runs a pipeline as a local program speaking JSON over its
/// stdin and stdout. `persistent` mode keeps one long-lived process per slot and exchanges one
/// request line for one reply line; `per-case` mode starts a process per call, writes the
/// request, closes stdin and takes everything the process prints before it exits as the reply.
/// The scheduler creates one per pipeline and calls it from `slots()` worker threads.
///
/// The protocol (README): one reply line per request; a reply that carries an "id" must carry
/// the request's, else the call fails naming both ids (and a persistent worker is replaced, being
/// out of step); output a persistent worker prints while no request is outstanding is never an
/// answer: the worker is replaced before the next request, which then counts two attempts.
///
/// Failures become CallResult errors, never exceptions: "timed out after 30s", "response
/// exceeded 16 MiB", "process exited with status 3", "process killed by signal SIGSEGV",
/// "run interrupted". A persistent worker that crashes before replying is restarted and the
/// request sent once more (attempts == 2); a timeout or an oversized reply is not retried, so a
/// hung pipeline costs its timeout once. Memory per slot stays bounded whatever the pipeline
/// prints: the reply is capped at `max_response_bytes`, stderr keeps only its last
/// kStderrTailBytes.
///
/// Thread-safety: Call is safe from several threads at once for distinct slots. Shutdown may be
/// called from any thread at any time, also while Calls run: in-flight Calls return "run
/// interrupted" promptly (an eventfd in every poll set wakes them), later Calls return it at
/// once, and Shutdown returns when every process is gone. Shutdown is idempotent; the destructor
/// calls it.
///
/// SIGPIPE: writing to a pipe whose reader died raises SIGPIPE, whose default action would kill
/// plumb. Create sets SIGPIPE to SIG_IGN for the whole process (a write then fails with EPIPE,
/// which is reported as a crash of the pipeline); blocking it around each write instead would
/// cost several system calls per request. Code that writes to plumb's own stdout must therefore
/// handle EPIPE. Children get the default disposition back.

#include <atomic>
#include <chrono>
#include <cstddef>
#include <memory>
#include <mutex>
#include <string>
#include <vector>

#include "runner/pipeline/adapter.h"
#include "runner/pipeline/child_process.h"
#include "runner/suite/suite.h"

namespace plumb {

class SubprocessAdapter : public Adapter {
 public:
  /// How long a process gets to exit after SIGTERM (timeout) or after its stdin is closed
  /// (Shutdown) before its group is SIGKILLed.
  static constexpr std::chrono::milliseconds kTerminationGrace{500};
  /// The tail of stderr a slot keeps; the rest is read and dropped so a flood cannot block.
  static constexpr size_t kStderrTailBytes = 8 * 1024;
  /// Bound of CallResult::stdout_excerpt and stderr_excerpt.
  static constexpr size_t kExcerptBytes = 2 * 1024;

  /// Checks the config up front so that a typo is a config error before any case runs: the
  /// command must be non-empty, argv[0] must resolve to an executable (see FindExecutable; a
  /// bare name is looked up in config.env's PATH if it sets one, else plumb's), a cwd must be a
  /// directory, the timeout and size cap positive, `slots` at least 1. Processes are started
  /// lazily by the first Call on each slot. The environment is plumb's at this moment plus
  /// config.env. Returns nullptr and sets `*error` (naming the pipeline) on failure.
  static std::unique_ptr<SubprocessAdapter> Create(const PipelineConfig& config, int slots,
                                                   std::string* error);
  ~SubprocessAdapter() override;

  int slots() const override { return static_cast<int>(slots_.size()); }

  /// Sends `request` as PipelineRequest::ToJson().dump() plus "\n". On success `body` is the
  /// reply line without its "\n" (persistent) or the whole stdout less trailing whitespace
  /// (per-case), exactly as printed: whether it parses is the caller's business. On error,
  /// `stdout_excerpt` is the start of what stdout produced for this call and `stderr_excerpt` the
  /// end of the slot's stderr; on success `stderr_excerpt` holds the end of what stderr produced
  /// during the call, if anything. Both are at most kExcerptBytes and redacted of
  /// config.secrets. `latency_ms` runs from the start of the request write to the full reply;
  /// a call that timed out has `timed_out` set and the timeout as its latency (a lower bound);
  /// any other failure has 0 (there was no reply).
  CallResult Call(const PipelineRequest& request, int slot) override;

  /// Interrupts running Calls, then closes the stdin of every process, gives them
  /// kTerminationGrace (in total, not each) to exit, SIGKILLs their groups and reaps them.
  void Shutdown() override;

  /// Every worker's start-up: with `ready: line`, from its start to its ready line (the line's
  /// other members kept); without, in persistent mode, its first call (start-up included),
  /// which that call's CallResult marks `first_call`. Restarted workers included.
  std::vector<WorkerWarmup> Warmups() const override;

 private:
  struct Slot;
  enum class Outcome;

  SubprocessAdapter() = default;
  Outcome Attempt(Slot& slot, const std::string& request_line, CallResult* result);
  Outcome AttemptPerCase(Slot& slot, const std::string& request_line, CallResult* result);
  bool EnsureStarted(Slot& slot, CallResult* result);
  bool AwaitReadyLine(Slot& slot, std::chrono::steady_clock::time_point start, bool restart,
                      CallResult* result);
  bool ReapDeadWorker(Slot& slot);
  void FillExcerpts(Slot& slot, bool failed, CallResult* result) const;

  SpawnSpec spawn_;
  SubprocessMode mode_ = SubprocessMode::kPersistent;
  std::chrono::milliseconds timeout_{0};
  bool ready_line_ = false;  // `ready: line`, persistent mode
  std::chrono::milliseconds startup_timeout_{0};
  size_t max_response_bytes_ = 0;
  std::vector<std::string> secrets_;
  std::vector<std::unique_ptr<Slot>> slots_;

  int interrupt_fd_ = -1;  // an eventfd, made readable (and never drained) by Shutdown
  std::atomic<bool> interrupted_{false};
  std::mutex shutdown_mutex_;
  bool shut_down_ = false;
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_PIPELINE_SUBPROCESS_ADAPTER_H_
