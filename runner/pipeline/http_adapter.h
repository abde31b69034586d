#ifndef PLUMB_RUNNER_PIPELINE_HTTP_ADAPTER_H_
#define PLUMB_RUNNER_PIPELINE_HTTP_ADAPTER_H_

/// The HTTP adapter (SPEC §5) drives a pipeline that runs as a service: one request per case and
/// repeat, built from the pipeline's `url`, `method`, `headers` and `request` block
/// (runner/pipeline/request_template.h), sent with libcurl. The scheduler creates one per pipeline
/// and calls it from `slots()` worker threads.
///
/// Transport: one event-loop thread runs a libcurl multi handle with up to `slots` transfers at
/// once; connections are kept alive and reused between requests (at most `slots` of them).
/// HTTP/2 is negotiated over TLS where libcurl supports it, HTTP/1.1 otherwise. TLS certificates
/// are verified unless the pipeline says `insecure: true` (a warning goes to stderr once, when
/// the adapter is created). libcurl's proxy variables are honoured (http_proxy, https_proxy,
/// ALL_PROXY, NO_PROXY; not upper-case HTTP_PROXY, which CGI programs can be made to set).
/// Redirects are not followed: a 3xx is a case error. Per attempt, the connect phase may take
/// min(10 s, timeout) and the whole exchange `timeout`; a reply larger than
/// `max_response_bytes` is cut off as it arrives.
///
/// Each attempt first passes the run-wide circuit breaker (runner/pipeline/circuit_breaker.h), then
/// the `rate` token bucket (runner/pipeline/rate_limiter.h); failures are retried as
/// runner/pipeline/retry_policy.h says, up to `retries` more times, and CallResult::attempts counts
/// the attempts sent.
///
/// Outcomes: a 2xx reply is returned in `body` unparsed, whatever its status line says about the
/// content (the scheduler decides validity with the pipeline's `map`). Anything else is a
/// CallResult error sentence: "HTTP 400 Bad Request", "HTTP 503 Service Unavailable (after 4
/// attempts)", "timed out after 2s", "could not connect: ...", "connection reset", "response
/// exceeded 1 MiB", "run interrupted", or the circuit breaker's refusal. `http_status` is the
/// final status when there was one, and `stdout_excerpt` the start of the reply body. Every
/// error sentence, excerpt and returned body is redacted of the pipeline's secrets (the loader's,
/// which include every `!env` value of the request block).
///
/// Thread-safety: Call is safe from several threads at once for distinct slots (the Adapter
/// contract). Shutdown may be called from any thread at any time, also while Calls run:
/// transfers in flight are aborted and their Calls, like those waiting for a retry, the rate
/// limit or the circuit breaker, return "run interrupted" promptly; later Calls return it at
/// once. Shutdown is idempotent; the destructor calls it.
///
/// SIGPIPE: TLS writes to a socket the server closed raise SIGPIPE, whose default action would
/// kill plumb; Create sets it to SIG_IGN for the process, as the subprocess adapter does.

#include <atomic>
#include <chrono>
#include <condition_variable>
#include <memory>
#include <mutex>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "runner/pipeline/adapter.h"
#include "runner/pipeline/circuit_breaker.h"
#include "runner/pipeline/rate_limiter.h"
#include "runner/pipeline/retry_policy.h"
#include "runner/suite/suite.h"

struct curl_slist;

namespace plumb {

class HttpAdapter : public Adapter {
 public:
  /// Bound of CallResult::stdout_excerpt.
  static constexpr size_t kExcerptBytes = 2 * 1024;
  /// Upper bound of the connect phase of one attempt (the call timeout when that is shorter).
  static constexpr std::chrono::milliseconds kConnectTimeout{10000};

  /// Knobs the config does not expose. `retry.retries` is replaced by the pipeline's `retries`.
  /// Tests shorten the backoff and the breaker's pauses with them.
  struct Options {
    RetryOptions retry;
    CircuitBreakerOptions breaker;
  };

  /// Checks the config so that mistakes are config errors before any case runs: a url,
  /// header names and values without line breaks, a GET's request block an object (its members
  /// become query parameters), a positive timeout and size cap, `slots` >= 1.
  /// Nothing connects yet. Returns nullptr and sets `*error` (naming the pipeline) on failure.
  static std::unique_ptr<HttpAdapter> Create(const PipelineConfig& config, int slots,
                                             std::string* error);
  static std::unique_ptr<HttpAdapter> Create(const PipelineConfig& config, int slots,
                                             const Options& options, std::string* error);
  ~HttpAdapter() override;

  int slots() const override { return static_cast<int>(slots_.size()); }

  /// Renders and sends `request`, retrying as configured; blocks until the reply or the final
  /// failure. `latency_ms` runs from the start of the final attempt to the full reply body; a
  /// final attempt that timed out sets `timed_out` and gives the timeout (a lower bound).
  CallResult Call(const PipelineRequest& request, int slot) override;

  /// With `ready_url`, the first Call polls it with GET (every 100 ms, each poll at most 2 s)
  /// until it answers 2xx, up to startup_timeout; the other slots' Calls wait for it. The
  /// time from that first Call to the 2xx is the service's warm-up (worker 0, "ready_url").
  /// A service that never answers 2xx fails every Call with the reason.
  std::vector<WorkerWarmup> Warmups() const override;

  /// Aborts every transfer, wakes every waiting Call and stops the event loop.
  void Shutdown() override;

  /// Calls now waiting out a backoff or Retry-After before their next attempt.
  int retries_waiting() const { return retries_waiting_.load(); }
  int retries_in_flight() const override { return retries_waiting(); }
  /// How often the circuit breaker has paused the run.
  int breaker_openings() const { return breaker_.times_opened(); }

 private:
  struct Transfer;
  struct EventLoop;
  struct Attempted;

  HttpAdapter(const PipelineConfig& config, const Options& options);
  bool Init(const PipelineConfig& config, int slots, std::string* error);
  Attempted Attempt(Transfer& transfer, const std::string& url);
  bool SleepUnlessInterrupted(std::chrono::milliseconds delay);
  bool AwaitReady(std::string* error);
  std::string Redact(std::string text) const;

  std::string name_;
  std::string url_template_;
  std::string method_;
  std::vector<RequestPart> url_pieces_;
  std::optional<RequestPart> request_block_;
  std::chrono::milliseconds timeout_{0};
  std::string ready_url_;  // empty: no ready signal
  std::chrono::milliseconds startup_timeout_{0};
  mutable std::mutex ready_mutex_;  // held while the ready_url is polled; guards the three below
  bool ready_ = false;
  std::string ready_error_;  // the service did not become ready: every call fails with this
  std::vector<WorkerWarmup> warmups_;
  size_t max_response_bytes_ = 0;
  bool insecure_ = false;
  std::vector<std::string> secrets_;
  curl_slist* headers_ = nullptr;  // shared by every transfer, freed by the destructor

  RetryPolicy retry_;
  CircuitBreaker breaker_;
  std::unique_ptr<RateLimiter> rate_;  // null: unlimited

  std::unique_ptr<EventLoop> loop_;
  std::vector<std::unique_ptr<Transfer>> slots_;

  std::atomic<bool> interrupted_{false};
  std::atomic<int> retries_waiting_{0};
  std::mutex sleep_mutex_;
  std::condition_variable sleep_cv_;
  std::mutex shutdown_mutex_;
  bool shut_down_ = false;
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_PIPELINE_HTTP_ADAPTER_H_
