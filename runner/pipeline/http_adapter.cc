#include "runner/pipeline/http_adapter.h"

#include <errno.h>
#include <signal.h>

#include <algorithm>
#include <cctype>
#include <cstdio>
#include <set>
#include <thread>

#include "runner/base/human_units.h"
#include "runner/pipeline/curl_library.h"
#include "runner/pipeline/event_stream.h"
#include "runner/pipeline/excerpt.h"
#include "runner/pipeline/request_template.h"

namespace plumb {
namespace {

using Clock = std::chrono::steady_clock;

// A transfer's reply buffer is kept between calls (no allocation per call) unless an unusually
// large reply grew it beyond this.
constexpr size_t kKeptBufferBytes = 1024 * 1024;

// Reason phrases of RFC 9110 §15 (429 from RFC 6585 §4), for the statuses a pipeline is likely
// to send; HTTP/2 replies carry no phrase of their own.
const char* ReasonPhrase(long status) {
  switch (status) {
    case 300:
      return "Multiple Choices";
    case 301:
      return "Moved Permanently";
    case 302:
      return "Found";
    case 303:
      return "See Other";
    case 304:
      return "Not Modified";
    case 307:
      return "Temporary Redirect";
    case 308:
      return "Permanent Redirect";
    case 400:
      return "Bad Request";
    case 401:
      return "Unauthorized";
    case 402:
      return "Payment Required";
    case 403:
      return "Forbidden";
    case 404:
      return "Not Found";
    case 405:
      return "Method Not Allowed";
    case 406:
      return "Not Acceptable";
    case 407:
      return "Proxy Authentication Required";
    case 408:
      return "Request Timeout";
    case 409:
      return "Conflict";
    case 410:
      return "Gone";
    case 411:
      return "Length Required";
    case 412:
      return "Precondition Failed";
    case 413:
      return "Content Too Large";
    case 414:
      return "URI Too Long";
    case 415:
      return "Unsupported Media Type";
    case 416:
      return "Range Not Satisfiable";
    case 417:
      return "Expectation Failed";
    case 421:
      return "Misdirected Request";
    case 422:
      return "Unprocessable Content";
    case 426:
      return "Upgrade Required";
    case 429:
      return "Too Many Requests";
    case 500:
      return "Internal Server Error";
    case 501:
      return "Not Implemented";
    case 502:
      return "Bad Gateway";
    case 503:
      return "Service Unavailable";
    case 504:
      return "Gateway Timeout";
    case 505:
      return "HTTP Version Not Supported";
    default:
      return nullptr;
  }
}

std::string StatusSentence(long status) {
  const char* phrase = ReasonPhrase(status);
  std::string sentence = "HTTP " + std::to_string(status);
  if (phrase != nullptr) sentence += std::string(" ") + phrase;
  if (status >= 300 && status < 400) sentence += " (redirects are not followed; use the final url)";
  return sentence;
}

bool IsTokenChar(char c) {  // RFC 9110 §5.6.2 tchar
  return std::isalnum(static_cast<unsigned char>(c)) ||
         std::string_view("!#$%&'*+-.^_`|~").find(c) != std::string_view::npos;
}

bool HasHeader(const std::map<std::string, ExpandedString>& headers, std::string_view name) {
  for (const auto& [key, value] : headers) {
    if (key.size() == name.size() &&
        std::equal(key.begin(), key.end(), name.begin(), [](char a, char b) {
          return std::tolower(static_cast<unsigned char>(a)) ==
                 std::tolower(static_cast<unsigned char>(b));
        })) {
      return true;
    }
  }
  return false;
}

}  // namespace

/// One slot's transfer: the easy handle, the request it sends and the reply it collects. The
/// worker thread owns it between attempts; the event loop owns it from Submit to Complete.
struct HttpAdapter::Transfer {
  CURL* easy = nullptr;
  std::string request_body;  // CURLOPT_POSTFIELDS points here; must outlive the transfer
  std::string response;
  size_t cap = 0;
  bool oversize = false;
  std::string retry_after;  // the final response's Retry-After field, if any
  char error_buffer[CURL_ERROR_SIZE] = {0};
  Clock::time_point start;
  // `stream:` (issue 21): a 2xx body goes to `stream` as it arrives, and only its first bytes
  // stay in `response` (for excerpts); `first_text` is when the first non-empty delta came.
  std::unique_ptr<EventStream> stream;
  long status = 0;  // from the status line, so the body callback knows a 2xx from an error page
  bool stream_failed = false;
  std::optional<Clock::time_point> first_text;

  std::mutex mutex;
  std::condition_variable finished_cv;
  bool finished = false;
  bool interrupted = false;
  CURLcode code = CURLE_OK;
  Clock::time_point end;

  static size_t OnBody(char* data, size_t size, size_t count, void* user) {
    auto* t = static_cast<Transfer*>(user);
    const size_t bytes = size * count;
    if (t->stream != nullptr && t->status >= 200 && t->status < 300) {
      if (t->response.size() < kExcerptBytes) {
        t->response.append(data, std::min(bytes, kExcerptBytes - t->response.size()));
      }
      if (!t->stream->Feed(std::string_view(data, bytes))) {
        t->stream_failed = true;
        return 0;  // returning less than given stops curl
      }
      if (!t->first_text && t->stream->has_text()) t->first_text = Clock::now();
      return bytes;
    }
    if (t->response.size() + bytes > t->cap) {
      // Keep what fits, for the excerpt, then abort: returning less than given stops curl.
      t->response.append(data, t->cap - t->response.size());
      t->oversize = true;
      return 0;
    }
    t->response.append(data, bytes);
    return bytes;
  }

  static size_t OnHeader(char* data, size_t size, size_t count, void* user) {
    auto* t = static_cast<Transfer*>(user);
    const size_t bytes = size * count;
    std::string_view line(data, bytes);
    while (!line.empty() && (line.back() == '\r' || line.back() == '\n')) line.remove_suffix(1);
    if (line.substr(0, 5) == "HTTP/") {
      t->retry_after.clear();  // a new response (after 100 Continue, say) starts
      const size_t space = line.find(' ');
      t->status = space == std::string_view::npos
                      ? 0
                      : std::strtol(std::string(line.substr(space + 1, 3)).c_str(), nullptr, 10);
      return bytes;
    }
    constexpr std::string_view kName = "retry-after:";
    if (line.size() >= kName.size()) {
      bool match = true;
      for (size_t i = 0; i < kName.size() && match; ++i) {
        match = std::tolower(static_cast<unsigned char>(line[i])) == kName[i];
      }
      if (match) t->retry_after = std::string(line.substr(kName.size()));
    }
    return bytes;
  }
};

/// The thread that runs every transfer of the adapter on one libcurl multi handle.
struct HttpAdapter::EventLoop {
  CURLM* multi = nullptr;
  std::thread thread;
  std::mutex mutex;
  std::vector<Transfer*> pending;  // submitted, not yet added to the multi handle
  bool stopping = false;

  ~EventLoop() {
    if (multi != nullptr) Curl().multi_cleanup(multi);
  }

  // False when the loop has stopped (Shutdown): the transfer was not taken.
  bool Submit(Transfer* t) {
    {
      std::lock_guard<std::mutex> lock(mutex);
      if (stopping) return false;
      pending.push_back(t);
    }
    Curl().multi_wakeup(multi);
    return true;
  }

  void Stop() {
    {
      std::lock_guard<std::mutex> lock(mutex);
      stopping = true;
    }
    Curl().multi_wakeup(multi);
    if (thread.joinable()) thread.join();
  }

  static void Complete(Transfer* t, CURLcode code, bool interrupted) {
    std::lock_guard<std::mutex> lock(t->mutex);
    t->code = code;
    t->interrupted = interrupted;
    t->end = Clock::now();
    t->finished = true;
    t->finished_cv.notify_all();
  }

  void Run() {
    std::set<Transfer*> active;
    std::vector<Transfer*> incoming;
    while (true) {
      {
        std::lock_guard<std::mutex> lock(mutex);
        if (stopping) {
          incoming = std::move(pending);
          pending.clear();
          break;
        }
        incoming.swap(pending);
      }
      for (Transfer* t : incoming) {
        const CURLMcode added = Curl().multi_add_handle(multi, t->easy);
        if (added != CURLM_OK) {
          snprintf(t->error_buffer, sizeof t->error_buffer, "%s", Curl().multi_strerror(added));
          Complete(t, CURLE_FAILED_INIT, false);
          continue;
        }
        active.insert(t);
      }
      incoming.clear();
      int running = 0;
      Curl().multi_perform(multi, &running);
      int left = 0;
      while (CURLMsg* message = Curl().multi_info_read(multi, &left)) {
        if (message->msg != CURLMSG_DONE) continue;
        CURL* easy = message->easy_handle;
        const CURLcode code = message->data.result;  // `message` dies with the removal below
        Transfer* t = nullptr;
        Curl().easy_getinfo(easy, CURLINFO_PRIVATE, reinterpret_cast<char**>(&t));
        Curl().multi_remove_handle(multi, easy);
        active.erase(t);
        Complete(t, code, false);
      }
      Curl().multi_poll(multi, nullptr, 0, 1000, nullptr);
    }
    for (Transfer* t : active) {
      Curl().multi_remove_handle(multi, t->easy);
      Complete(t, CURLE_ABORTED_BY_CALLBACK, true);
    }
    for (Transfer* t : incoming) Complete(t, CURLE_ABORTED_BY_CALLBACK, true);
  }
};

/// What one attempt came to.
struct HttpAdapter::Attempted {
  bool ok = false;
  bool interrupted = false;
  bool retryable = false;       // a kind of failure RetryPolicy retries
  bool service_failed = false;  // counts against the circuit breaker
  long status = 0;
  std::optional<std::chrono::milliseconds> retry_after;
  std::string error;
  double latency_ms = 0;
  bool timed_out = false;  // the server took the request and did not answer within the timeout
  std::optional<double> ttft_ms;  // a stream's first non-empty delta
};

HttpAdapter::HttpAdapter(const PipelineConfig& config, const Options& options)
    : retry_([&] {
        RetryOptions retry = options.retry;
        retry.retries = config.retries;
        return retry;
      }()),
      breaker_(options.breaker) {}

std::unique_ptr<HttpAdapter> HttpAdapter::Create(const PipelineConfig& config, int slots,
                                                 std::string* error) {
  return Create(config, slots, Options(), error);
}

std::unique_ptr<HttpAdapter> HttpAdapter::Create(const PipelineConfig& config, int slots,
                                                 const Options& options, std::string* error) {
  std::unique_ptr<HttpAdapter> adapter(new HttpAdapter(config, options));
  std::string reason;
  if (!adapter->Init(config, slots, &reason)) {
    *error = "pipeline '" + config.name + "': " + reason;
    return nullptr;
  }
  return adapter;
}

bool HttpAdapter::Init(const PipelineConfig& config, int slots, std::string* error) {
  name_ = config.name;
  if (!config.url.has_value() || config.url->value.empty()) {
    *error = "an HTTP pipeline needs a 'url'";
    return false;
  }
  url_template_ = config.url->value;
  url_pieces_ = config.url_pieces;
  method_ = config.method;
  if (method_ == "GET" && config.request.has_value() &&
      config.request->kind != RequestPart::Kind::kObject) {
    *error =
        "method GET sends the request block's members as query parameters, so 'request' "
        "must be a mapping";
    return false;
  }
  if (config.timeout_ms <= 0 || config.max_response_bytes <= 0 || slots < 1) {
    *error = "timeout, max_response_bytes and jobs must be positive";
    return false;
  }
  timeout_ = std::chrono::milliseconds(config.timeout_ms);
  if (config.ready_url) ready_url_ = config.ready_url->value;
  startup_timeout_ = std::chrono::milliseconds(config.startup_timeout_ms);
  max_response_bytes_ = static_cast<size_t>(config.max_response_bytes);
  insecure_ = config.insecure;
  secrets_ = config.secrets;
  request_block_ = config.request;

  std::vector<std::string> header_lines;
  for (const auto& [name, value] : config.headers) {
    if (name.empty() || !std::all_of(name.begin(), name.end(), IsTokenChar)) {
      *error = "header name '" + name + "' is not a valid HTTP field name";
      return false;
    }
    if (value.value.find_first_of("\r\n") != std::string::npos) {
      *error = "header '" + name + "' contains a line break (from " + value.redacted + ")";
      return false;
    }
    header_lines.push_back(name + ": " + value.value);
  }
  if (!HasHeader(config.headers, "Content-Type") && method_ != "GET") {
    header_lines.push_back("Content-Type: application/json");
  }
  if (!HasHeader(config.headers, "Accept")) {
    header_lines.push_back(config.stream == StreamFormat::kSse     ? "Accept: text/event-stream"
                           : config.stream == StreamFormat::kLines ? "Accept: application/x-ndjson"
                                                                   : "Accept: application/json");
  }
  // No "Expect: 100-continue" round trip before large bodies: the services we talk to answer
  // the request either way.
  if (!HasHeader(config.headers, "Expect")) header_lines.push_back("Expect:");
  if (config.rate_per_second > 0) rate_ = std::make_unique<RateLimiter>(config.rate_per_second);

  signal(SIGPIPE, SIG_IGN);
  if (LoadCurlLibrary(error) == nullptr) return false;
  if (insecure_) {
    std::fprintf(stderr,
                 "plumb: warning: pipeline '%s' has insecure: true; TLS certificates are not "
                 "verified, so anyone on the network path can read and alter its traffic\n",
                 name_.c_str());
  }

  loop_ = std::make_unique<EventLoop>();
  loop_->multi = Curl().multi_init();
  if (loop_->multi == nullptr) {
    *error = "libcurl could not create a multi handle";
    return false;
  }
  Curl().multi_setopt(loop_->multi, CURLMOPT_MAX_TOTAL_CONNECTIONS, long(slots));
  Curl().multi_setopt(loop_->multi, CURLMOPT_MAX_HOST_CONNECTIONS, long(slots));
  Curl().multi_setopt(loop_->multi, CURLMOPT_MAXCONNECTS, long(slots));

  const bool http2 = (Curl().version_info(CURLVERSION_NOW)->features & CURL_VERSION_HTTP2) != 0;
  const long connect_ms = std::min<long>(kConnectTimeout.count(), long(config.timeout_ms));
  for (int i = 0; i < slots; ++i) {
    auto t = std::make_unique<Transfer>();
    t->easy = Curl().easy_init();
    if (t->easy == nullptr) {
      *error = "libcurl could not create a transfer handle";
      return false;
    }
    t->cap = max_response_bytes_;
    if (config.stream != StreamFormat::kNone) {
      try {
        t->stream =
            std::make_unique<EventStream>(config.stream, config.reply.answer, max_response_bytes_);
      } catch (const nlohmann::json::exception&) {
        *error = "'reply.answer' is not a JSON Pointer: '" + config.reply.answer + "'";
        return false;
      }
    }
    CURL* e = t->easy;
    Curl().easy_setopt(e, CURLOPT_PRIVATE, t.get());
    Curl().easy_setopt(e, CURLOPT_NOSIGNAL, 1L);
    Curl().easy_setopt(e, CURLOPT_ERRORBUFFER, t->error_buffer);
    Curl().easy_setopt(e, CURLOPT_WRITEFUNCTION, &Transfer::OnBody);
    Curl().easy_setopt(e, CURLOPT_WRITEDATA, t.get());
    Curl().easy_setopt(e, CURLOPT_HEADERFUNCTION, &Transfer::OnHeader);
    Curl().easy_setopt(e, CURLOPT_HEADERDATA, t.get());
    Curl().easy_setopt(e, CURLOPT_PROTOCOLS_STR, "http,https");
    Curl().easy_setopt(e, CURLOPT_TIMEOUT_MS, long(config.timeout_ms));
    Curl().easy_setopt(e, CURLOPT_CONNECTTIMEOUT_MS, connect_ms);
    Curl().easy_setopt(e, CURLOPT_MAXFILESIZE_LARGE, curl_off_t(max_response_bytes_));
    Curl().easy_setopt(e, CURLOPT_HTTP_VERSION,
                       http2 ? long(CURL_HTTP_VERSION_2TLS) : long(CURL_HTTP_VERSION_1_1));
    Curl().easy_setopt(e, CURLOPT_SSL_VERIFYPEER, insecure_ ? 0L : 1L);
    Curl().easy_setopt(e, CURLOPT_SSL_VERIFYHOST, insecure_ ? 0L : 2L);
    Curl().easy_setopt(e, CURLOPT_TCP_KEEPALIVE, 1L);
    Curl().easy_setopt(e, CURLOPT_ACCEPT_ENCODING,
                       "");  // what libcurl can decode; cap applies after
    Curl().easy_setopt(e, CURLOPT_USERAGENT, "plumb/" PLUMB_VERSION);
    if (method_ == "GET") {
      Curl().easy_setopt(e, CURLOPT_HTTPGET, 1L);
    } else {
      Curl().easy_setopt(e, CURLOPT_POST, 1L);
      if (method_ != "POST") Curl().easy_setopt(e, CURLOPT_CUSTOMREQUEST, method_.c_str());
    }
    slots_.push_back(std::move(t));
  }
  for (const std::string& line : header_lines) {
    curl_slist* grown = Curl().slist_append(headers_, line.c_str());
    if (grown == nullptr) {
      *error = "out of memory building the request headers";
      return false;
    }
    headers_ = grown;
  }
  for (auto& t : slots_) Curl().easy_setopt(t->easy, CURLOPT_HTTPHEADER, headers_);

  EventLoop* loop = loop_.get();
  loop_->thread = std::thread([loop] { loop->Run(); });
  return true;
}

HttpAdapter::~HttpAdapter() {
  Shutdown();
  for (auto& t : slots_) {
    if (t->easy != nullptr) Curl().easy_cleanup(t->easy);
  }
  loop_.reset();  // the multi handle goes after its easy handles
  if (headers_ != nullptr) Curl().slist_free_all(headers_);
}

std::string HttpAdapter::Redact(std::string text) const {
  return secrets_.empty() ? text : RedactSecrets(std::move(text), secrets_);
}

bool HttpAdapter::SleepUnlessInterrupted(std::chrono::milliseconds delay) {
  std::unique_lock<std::mutex> lock(sleep_mutex_);
  return !sleep_cv_.wait_for(lock, delay, [this] { return interrupted_.load(); });
}

namespace {

size_t DiscardBody(char*, size_t size, size_t count, void*) { return size * count; }

}  // namespace

bool HttpAdapter::AwaitReady(std::string* error) {
  std::lock_guard<std::mutex> lock(ready_mutex_);
  if (ready_) return true;
  if (!ready_error_.empty()) {
    *error = ready_error_;
    return false;
  }
  const Clock::time_point start = Clock::now();
  const Clock::time_point deadline = start + startup_timeout_;
  CURL* e = Curl().easy_init();
  if (e == nullptr) {
    *error = "could not create a transfer to poll the ready_url";
    return false;
  }
  Curl().easy_setopt(e, CURLOPT_URL, ready_url_.c_str());
  Curl().easy_setopt(e, CURLOPT_NOSIGNAL, 1L);
  Curl().easy_setopt(e, CURLOPT_HTTPGET, 1L);
  Curl().easy_setopt(e, CURLOPT_PROTOCOLS_STR, "http,https");
  Curl().easy_setopt(e, CURLOPT_WRITEFUNCTION, &DiscardBody);
  Curl().easy_setopt(e, CURLOPT_HTTPHEADER, headers_);
  Curl().easy_setopt(e, CURLOPT_SSL_VERIFYPEER, insecure_ ? 0L : 1L);
  Curl().easy_setopt(e, CURLOPT_SSL_VERIFYHOST, insecure_ ? 0L : 2L);
  Curl().easy_setopt(e, CURLOPT_USERAGENT, "plumb/" PLUMB_VERSION);
  std::string last;  // what the last poll got
  bool ok = false;
  while (!interrupted_) {
    const auto left =
        std::chrono::duration_cast<std::chrono::milliseconds>(deadline - Clock::now());
    if (left.count() <= 0) break;
    const long poll_ms = long(std::min<int64_t>(2000, left.count()));
    Curl().easy_setopt(e, CURLOPT_TIMEOUT_MS, poll_ms);
    Curl().easy_setopt(e, CURLOPT_CONNECTTIMEOUT_MS, poll_ms);
    const CURLcode code = Curl().easy_perform(e);
    long status = 0;
    if (code == CURLE_OK) Curl().easy_getinfo(e, CURLINFO_RESPONSE_CODE, &status);
    if (code == CURLE_OK && status >= 200 && status < 300) {
      ok = true;
      break;
    }
    last = code == CURLE_OK ? "HTTP " + std::to_string(status) : Curl().easy_strerror(code);
    if (!SleepUnlessInterrupted(std::chrono::milliseconds(100))) break;
  }
  Curl().easy_cleanup(e);
  if (ok) {
    WorkerWarmup warmup;
    warmup.signal = "ready_url";
    warmup.ms = std::chrono::duration<double, std::milli>(Clock::now() - start).count();
    warmups_.push_back(std::move(warmup));
    ready_ = true;
    return true;
  }
  if (interrupted_) {
    *error = "run interrupted";
    return false;
  }
  ready_error_ = Redact("the ready_url did not answer 2xx within the startup_timeout of " +
                        FormatDuration(startup_timeout_) +
                        " (last: " + (last.empty() ? std::string("no answer") : last) +
                        "); check the service, or raise startup_timeout");
  *error = ready_error_;
  return false;
}

std::vector<WorkerWarmup> HttpAdapter::Warmups() const {
  std::lock_guard<std::mutex> lock(ready_mutex_);
  return warmups_;
}

HttpAdapter::Attempted HttpAdapter::Attempt(Transfer& t, const std::string& url) {
  Attempted a;
  CURL* e = t.easy;
  Curl().easy_setopt(e, CURLOPT_URL, url.c_str());
  if (method_ != "GET") {
    Curl().easy_setopt(e, CURLOPT_POSTFIELDSIZE_LARGE, curl_off_t(t.request_body.size()));
    Curl().easy_setopt(e, CURLOPT_POSTFIELDS, t.request_body.data());
  }
  if (t.response.capacity() > kKeptBufferBytes) std::string().swap(t.response);
  t.response.clear();
  t.oversize = false;
  t.retry_after.clear();
  t.status = 0;
  t.stream_failed = false;
  t.first_text.reset();
  if (t.stream != nullptr) t.stream->Reset();
  t.error_buffer[0] = '\0';
  {
    std::lock_guard<std::mutex> lock(t.mutex);
    t.finished = false;
  }
  t.start = Clock::now();
  if (!loop_->Submit(&t)) {
    a.interrupted = true;
    return a;
  }
  {
    std::unique_lock<std::mutex> lock(t.mutex);
    t.finished_cv.wait(lock, [&t] { return t.finished; });
  }
  if (t.interrupted) {
    a.interrupted = true;
    return a;
  }
  a.latency_ms = std::chrono::duration<double, std::milli>(t.end - t.start).count();
  Curl().easy_getinfo(e, CURLINFO_RESPONSE_CODE, &a.status);
  const std::string detail =
      t.error_buffer[0] != '\0' ? t.error_buffer : Curl().easy_strerror(t.code);

  if (t.stream_failed) {
    // A stream that broke costs its case; resending would only break it again.
    a.error = t.stream->error();
    return a;
  }
  switch (t.code) {
    case CURLE_OK:
      if (a.status >= 200 && a.status < 300) {
        if (t.stream != nullptr) {
          std::string document;
          if (!t.stream->Finish(&document)) {
            a.error = t.stream->error();
            return a;
          }
          t.response = std::move(document);
          if (t.first_text) {
            a.ttft_ms = std::chrono::duration<double, std::milli>(*t.first_text - t.start).count();
          }
        }
        a.ok = true;
        return a;
      }
      a.error = StatusSentence(a.status);
      a.retryable = IsRetryableStatus(int(a.status));
      a.service_failed = a.retryable;
      if (a.retryable && !t.retry_after.empty()) {
        a.retry_after = ParseRetryAfter(t.retry_after, std::chrono::system_clock::now());
      }
      return a;
    case CURLE_WRITE_ERROR:
    case CURLE_FILESIZE_EXCEEDED:
      if (t.oversize || t.code == CURLE_FILESIZE_EXCEEDED) {
        a.error = "response exceeded " + FormatBytes(max_response_bytes_);
        return a;
      }
      break;
    case CURLE_OPERATION_TIMEDOUT: {
      // Whether the request went out tells a connect timeout (retried: nothing reached the
      // server) from a server that took the request and never answered (not retried).
      long request_bytes = 0;
      Curl().easy_getinfo(e, CURLINFO_REQUEST_SIZE, &request_bytes);
      if (request_bytes == 0) {
        a.error = "could not connect within " +
                  FormatDuration(std::min(timeout_, std::chrono::milliseconds(kConnectTimeout)));
        a.retryable = a.service_failed = true;
      } else {
        a.error = "timed out after " + FormatDuration(timeout_);
        a.service_failed = true;
        a.timed_out = true;
      }
      return a;
    }
    case CURLE_COULDNT_CONNECT:
    case CURLE_COULDNT_RESOLVE_HOST:
    case CURLE_COULDNT_RESOLVE_PROXY:
      a.error = "could not connect: " + detail;
      a.retryable = a.service_failed = true;
      return a;
    case CURLE_RECV_ERROR:
    case CURLE_SEND_ERROR: {
      long os_errno = 0;
      Curl().easy_getinfo(e, CURLINFO_OS_ERRNO, &os_errno);
      a.error = os_errno == ECONNRESET || os_errno == EPIPE ? "connection reset"
                                                            : "network error: " + detail;
      a.service_failed = true;
      return a;
    }
    case CURLE_GOT_NOTHING:
      a.error = "the server closed the connection without replying";
      a.service_failed = true;
      return a;
    case CURLE_PARTIAL_FILE:
      a.error = "the connection closed before the whole response arrived";
      a.service_failed = true;
      return a;
    case CURLE_PEER_FAILED_VERIFICATION:
      a.error = "TLS certificate not trusted: " + detail +
                " (fix the certificate, or set insecure: true for a test service)";
      return a;
    default:
      break;
  }
  if (t.code == CURLE_SSL_CONNECT_ERROR || t.code == CURLE_SSL_CERTPROBLEM ||
      t.code == CURLE_SSL_CIPHER || t.code == CURLE_SSL_CACERT_BADFILE) {
    a.error = "TLS error: " + detail;
    return a;
  }
  a.error = "request failed: " + detail;
  return a;
}

CallResult HttpAdapter::Call(const PipelineRequest& request, int slot) {
  CallResult result;
  result.attempts = 0;
  auto interrupted = [&result] {
    result.error = "run interrupted";
    return result;
  };
  if (interrupted_) return interrupted();
  if (!ready_url_.empty()) {
    std::string not_ready;
    if (!AwaitReady(&not_ready)) {
      if (interrupted_) return interrupted();
      result.attempts = 1;
      result.error = not_ready;
      return result;
    }
  }
  Transfer& t = *slots_[static_cast<size_t>(slot)];

  std::string url;
  nlohmann::json body;
  std::string render_error;
  const bool get = method_ == "GET";
  if (!RenderUrl(url_template_, url_pieces_, request, &url, &render_error) ||
      ((!get || request_block_.has_value()) &&
       !RenderRequest(request_block_, request, &body, &render_error))) {
    result.error = Redact("request not sent: " + render_error);
    return result;
  }
  // A GET sends its request block as query parameters (and nothing without one).
  if (get && body.is_object() && !body.empty()) {
    const std::string query = QueryString(body);  // "?a=1&b=2"
    url += url.find('?') == std::string::npos ? query : "&" + query.substr(1);
  }
  // `replace`: a case whose text is not valid UTF-8 still gets a request, with U+FFFD.
  t.request_body = get ? "" : body.dump(-1, ' ', false, nlohmann::json::error_handler_t::replace);

  for (int attempt = 1;; ++attempt) {
    const CircuitBreaker::Verdict verdict = breaker_.Enter();
    if (interrupted_) return interrupted();
    if (verdict == CircuitBreaker::Verdict::kRefuse) {
      result.error = breaker_.RefusalReason();
      return result;
    }
    if (rate_ != nullptr && !rate_->Acquire()) return interrupted();
    Attempted a = Attempt(t, url);
    if (a.interrupted) return interrupted();
    result.attempts = attempt;
    breaker_.Record(a.service_failed, verdict == CircuitBreaker::Verdict::kProbe, Clock::now());
    result.http_status = static_cast<int>(a.status);
    result.latency_ms = a.latency_ms;
    if (a.ok) {
      result.ttft_ms = a.ttft_ms;
      result.body = Redact(std::move(t.response));
      return result;
    }
    const RetryDecision decision = retry_.Decide(attempt, a.retryable, a.retry_after);
    if (!decision.retry) {
      std::string error = a.error;
      if (!decision.note.empty()) error += "; " + decision.note;
      if (attempt > 1) error += " (after " + std::to_string(attempt) + " attempts)";
      result.error = Redact(std::move(error));
      result.stdout_excerpt = HeadExcerpt(t.response, kExcerptBytes, secrets_);
      // No reply arrived, so there is no latency to report (as for the subprocess adapter),
      // except after a timeout: the reply would have taken at least that long.
      if (a.timed_out) {
        result.timed_out = true;
        result.latency_ms = static_cast<double>(timeout_.count());
      } else if (a.status == 0) {
        result.latency_ms = 0;
      }
      return result;
    }
    ++retries_waiting_;
    const bool slept = SleepUnlessInterrupted(decision.delay);
    --retries_waiting_;
    if (!slept) return interrupted();
  }
}

void HttpAdapter::Shutdown() {
  std::lock_guard<std::mutex> shutdown_lock(shutdown_mutex_);
  if (shut_down_) return;
  shut_down_ = true;
  {
    std::lock_guard<std::mutex> lock(sleep_mutex_);
    interrupted_ = true;
  }
  sleep_cv_.notify_all();
  breaker_.Cancel();
  if (rate_ != nullptr) rate_->Cancel();
  if (loop_ != nullptr && loop_->multi != nullptr) loop_->Stop();
}

}  // namespace plumb
