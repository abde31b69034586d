#ifndef PLUMB_RUNNER_PIPELINE_ADAPTER_H_
#define PLUMB_RUNNER_PIPELINE_ADAPTER_H_

/// An Adapter sends one request to a pipeline and brings back its raw reply (SPEC §5). The
/// scheduler owns one Adapter per pipeline and calls it from `slots()` worker threads at once;
/// each thread passes its own slot index, so an adapter may keep per-slot state (a persistent
/// process, a connection) without locking. Parsing the reply into a Response is not the
/// adapter's job: it returns bytes, and `ParseResponse` (runner/pipeline/response.h) decides
/// validity.

#include <cstdint>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

namespace plumb {

class JsonWriter;

/// Where a request stands in a multi-turn session (issue 22): the request of a session's turn
/// also carries "session", "turn" and "history".
struct SessionTurn {
  std::string session;  // the session's id (its turns' ids are "SESSION#N")
  int turn = 0;         // 1-based
  /// The earlier turns in order, [{"question": ..., "answer": ...}], each answer the pipeline's
  /// own (null where it errored or abstained). Null when not known (`plumb score` records a
  /// turn without one): the request then carries no "history".
  nlohmann::json history = nlohmann::json::array();
};

/// The request of §5: {"id", "question", "input", "repeat"}, and for a session's turn also
/// {"session", "turn", "history"}.
struct PipelineRequest {
  std::string id;
  std::string question;
  nlohmann::json input = nlohmann::json::object();
  int repeat = 0;
  /// A request of another shape (a grader's), as one line of compact JSON. When set, it is what
  /// ToLine and ToJson give instead of the fields above.
  std::string line;
  /// Set for a turn of a session; null for a plain case.
  const SessionTurn* turn = nullptr;

  nlohmann::json ToJson() const {
    if (!line.empty()) return nlohmann::json::parse(line, nullptr, false);
    nlohmann::json out = {{"id", id}, {"question", question}, {"input", input}, {"repeat", repeat}};
    if (turn != nullptr) {
      out["session"] = turn->session;
      out["turn"] = turn->turn;
      if (!turn->history.is_null()) out["history"] = turn->history;
    }
    return out;
  }
  /// The same object as one line of compact JSON, without the newline: what a subprocess
  /// pipeline reads and what the journal records. Invalid UTF-8 becomes U+FFFD.
  std::string ToLine() const {
    return line.empty() ? RequestLine(id, question, input, repeat, turn) : line;
  }

  /// `input` null (a case without input) is written as {}.
  static std::string RequestLine(const std::string& id, const std::string& question,
                                 const nlohmann::json& input, int repeat,
                                 const SessionTurn* turn = nullptr);
  /// The same object, written as the next value of `out`.
  static void WriteRequest(const std::string& id, const std::string& question,
                           const nlohmann::json& input, int repeat, JsonWriter* out,
                           const SessionTurn* turn = nullptr);
};

/// What one call produced. `error` empty means `body` holds a complete reply to parse;
/// otherwise the call failed and `error` says why in a short sentence ("timed out after 30s",
/// "process exited with status 3", "response exceeded 16 MiB"). Excerpts are bounded
/// (a few KiB) and already redacted of the pipeline's secrets.
struct CallResult {
  std::string body;            // the reply (one line, or the whole stdout/HTTP body)
  std::string error;           // empty on success
  std::string stdout_excerpt;  // on error: the start of what the pipeline wrote
  std::string stderr_excerpt;  // the end of what the pipeline wrote to stderr, if any
  double latency_ms = 0;       // request start to full reply (the last attempt)
  /// A streamed reply (`stream:`): request start to the first event with non-empty text, the
  /// time to first token (issue 21). Absent for a reply that is not streamed or had no text.
  std::optional<double> ttft_ms;
  /// The call ran into the pipeline's timeout: `latency_ms` is the timeout, a lower bound of
  /// the latency (the reply would have taken at least that long), and `error` says so.
  bool timed_out = false;
  /// The reply came from a persistent worker started for this call, with no ready signal:
  /// `latency_ms` includes the worker's start-up, so it is its first_call_ms, not a case latency.
  bool first_call = false;
  int attempts = 1;     // 2 when a crashed persistent worker was restarted and retried
  int http_status = 0;  // HTTP adapter only
  /// Which start of the slot's persistent worker gave the reply (1 for the slot's first
  /// process, 2 after one restart, ...); 0 for adapters without persistent workers. A
  /// session whose turns saw two values lost the worker's state mid-way (issue 22).
  int worker_start = 0;
};

/// How long one worker took to become ready (issue 21): a persistent process from its start to
/// its ready line (`ready: line`), an HTTP service from the first call to its ready_url's first
/// 2xx, or, without a ready signal, a persistent process's first call from the request to the
/// reply, start-up included (first_call_ms).
struct WorkerWarmup {
  int worker = 0;        // the slot; 0 for an HTTP service (one for all slots)
  bool restart = false;  // the worker replaced one that crashed, timed out or fell out of step
  std::string signal;    // "ready_line", "ready_url" or "first_call"
  double ms = 0;         // warmup_ms, or first_call_ms when signal is "first_call"
  /// The ready line's other members ("tokens_preloaded": ...), redacted; an object.
  nlohmann::json ready = nlohmann::json::object();
};

class Adapter {
 public:
  virtual ~Adapter() = default;
  Adapter() = default;
  Adapter(const Adapter&) = delete;
  Adapter& operator=(const Adapter&) = delete;

  /// How many concurrent calls the adapter supports; the scheduler runs that many workers.
  virtual int slots() const = 0;
  /// Sends `request` and waits for the reply. Thread-safe across distinct `slot` values in
  /// [0, slots()); never called concurrently with the same slot. Never throws.
  virtual CallResult Call(const PipelineRequest& request, int slot) = 0;
  /// Calls waiting to retry right now (backoff or Retry-After), for the progress line.
  /// Thread-safe; adapters that never retry keep the default.
  virtual int retries_in_flight() const { return 0; }
  /// Every worker start-up so far, by slot and then in order (issue 21). Call after the last
  /// Call; adapters without workers to warm keep the default.
  virtual std::vector<WorkerWarmup> Warmups() const { return {}; }
  /// Stops every process / connection; pending Calls return promptly with an error.
  /// Called once, after the last Call or from a signal-watching thread on interrupt.
  virtual void Shutdown() = 0;
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_PIPELINE_ADAPTER_H_
