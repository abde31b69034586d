#include "runner/pipeline/refresh_call.h"

#include <curl/curl.h>
#include <poll.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cerrno>
#include <chrono>
#include <cstdlib>
#include <nlohmann/json.hpp>
#include <vector>

#include "runner/pipeline/child_process.h"
#include "runner/pipeline/curl_library.h"
#include "runner/pipeline/excerpt.h"
#include "runner/pipeline/request_template.h"

extern char** environ;

namespace plumb {
namespace {

using Clock = std::chrono::steady_clock;

// What a refresh's output excerpt keeps (the end of stderr, where a tool says what failed).
constexpr size_t kExcerptBytes = 2000;
// Output kept in memory while the refresh runs; older bytes are dropped.
constexpr size_t kKeptOutputBytes = 64 * 1024;

double MillisecondsSince(Clock::time_point start) {
  return std::chrono::duration<double, std::milli>(Clock::now() - start).count();
}

void FillStrings(nlohmann::json* value, const std::string& corpus_dir,
                 const std::string& update_id) {
  if (value->is_string()) {
    *value = FillRefreshPlaceholders(value->get<std::string>(), corpus_dir, update_id);
  } else if (value->is_array() || value->is_object()) {
    for (nlohmann::json& item : *value) FillStrings(&item, corpus_dir, update_id);
  }
}

// Appends what is readable on `fd` to *kept (bounded); false once the pipe is at EOF.
bool Drain(int fd, std::string* kept) {
  char buffer[8192];
  for (;;) {
    const ssize_t n = read(fd, buffer, sizeof buffer);
    if (n > 0) {
      kept->append(buffer, size_t(n));
      if (kept->size() > 2 * kKeptOutputBytes) kept->erase(0, kept->size() - kKeptOutputBytes);
      continue;
    }
    if (n == 0) return false;
    return errno == EAGAIN || errno == EWOULDBLOCK || errno == EINTR;
  }
}

RefreshOutcome RunCommand(const PipelineConfig& pipeline, const RefreshConfig& refresh,
                          const std::string& corpus_dir, const std::string& update_id,
                          const std::atomic<bool>* stop) {
  RefreshOutcome out;
  SpawnSpec spec;
  for (const ExpandedString& arg : refresh.command) {
    spec.argv.push_back(FillRefreshPlaceholders(arg.value, corpus_dir, update_id));
  }
  if (pipeline.cwd) spec.cwd = pipeline.cwd->value;
  for (char** var = environ; var != nullptr && *var != nullptr; ++var) {
    const std::string entry = *var;
    if (pipeline.env.count(entry.substr(0, entry.find('='))) == 0) spec.env.push_back(entry);
  }
  for (const auto& [name, value] : pipeline.env) spec.env.push_back(name + "=" + value.value);
  std::string search_path = "/usr/local/bin:/usr/bin:/bin";
  if (const auto path = pipeline.env.find("PATH"); path != pipeline.env.end()) {
    search_path = path->second.value;
  } else if (const char* inherited = getenv("PATH")) {
    search_path = inherited;
  }
  std::string error;
  if (!FindExecutable(spec.argv[0], spec.cwd, search_path, &spec.path, &error)) {
    out.error = "refresh command: " + RedactSecrets(error, pipeline.secrets);
    return out;
  }
  const Clock::time_point start = Clock::now();
  const Clock::time_point deadline = start + std::chrono::milliseconds(pipeline.refresh_timeout_ms);
  std::unique_ptr<ChildProcess> child = ChildProcess::Spawn(spec, &error);
  if (!child) {
    out.error = "refresh command could not start: " + RedactSecrets(error, pipeline.secrets);
    return out;
  }
  child->CloseStdin();
  std::string output;
  bool out_open = true, err_open = true, timed_out = false;
  while (out_open || err_open || !child->HasExited()) {
    if (stop != nullptr && stop->load()) {
      out.interrupted = true;
      break;
    }
    if (Clock::now() >= deadline) {
      timed_out = true;
      break;
    }
    std::vector<pollfd> fds;
    if (out_open) fds.push_back({child->stdout_fd(), POLLIN, 0});
    if (err_open) fds.push_back({child->stderr_fd(), POLLIN, 0});
    if (child->exit_fd() >= 0) fds.push_back({child->exit_fd(), POLLIN, 0});
    // Short waits: the stop flag and the deadline are checked between them.
    poll(fds.data(), fds.size(), 50);
    if (out_open) out_open = Drain(child->stdout_fd(), &output);
    if (err_open) err_open = Drain(child->stderr_fd(), &output);
    // A helper that keeps the pipes open after the command exited does not hold the run.
    if (child->HasExited() && (out_open || err_open)) {
      if (out_open) Drain(child->stdout_fd(), &output);
      if (err_open) Drain(child->stderr_fd(), &output);
      break;
    }
  }
  out.ms = MillisecondsSince(start);
  const int status = child->KillAndReap();  // the status of an exited child, or kills it
  out.output = TailExcerpt(output, kExcerptBytes, pipeline.secrets);
  if (out.interrupted) {
    out.error = "refresh interrupted";
  } else if (timed_out) {
    out.error = "refresh command timed out after " +
                std::to_string(pipeline.refresh_timeout_ms / 1000) + " s (refresh_timeout)";
  } else if (!WIFEXITED(status) || WEXITSTATUS(status) != 0) {
    out.error = "refresh command failed: " + DescribeExit(status);
  } else {
    out.ok = true;
  }
  return out;
}

size_t KeepBody(char* data, size_t size, size_t count, void* user) {
  std::string* body = static_cast<std::string*>(user);
  if (body->size() < kKeptOutputBytes) body->append(data, size * count);
  return size * count;
}

int StopProgress(void* user, curl_off_t, curl_off_t, curl_off_t, curl_off_t) {
  const auto* stop = static_cast<const std::atomic<bool>*>(user);
  return stop != nullptr && stop->load() ? 1 : 0;
}

RefreshOutcome SendRequest(const PipelineConfig& pipeline, const RefreshConfig& refresh,
                           const std::string& corpus_dir, const std::string& update_id,
                           const std::atomic<bool>* stop) {
  RefreshOutcome out;
  std::string error;
  if (LoadCurlLibrary(&error) == nullptr) {
    out.error = "refresh request: " + error;
    return out;
  }
  PipelineRequest fields;
  fields.id = update_id;
  fields.input = {{"corpus", corpus_dir}, {"update", update_id}};
  nlohmann::json body = fields.input;
  if (refresh.request && !RenderRequest(refresh.request, fields, &body, &error)) {
    out.error = "refresh request: " + RedactSecrets(error, pipeline.secrets);
    return out;
  }
  FillStrings(&body, corpus_dir, update_id);
  std::string url = FillRefreshPlaceholders(refresh.url->value, corpus_dir, update_id);
  std::string payload;
  if (refresh.method == "GET") {
    if (body.is_object()) url += QueryString(body);
  } else {
    payload = body.dump(-1, ' ', false, nlohmann::json::error_handler_t::replace);
  }
  CURL* e = Curl().easy_init();
  if (e == nullptr) {
    out.error = "refresh request: could not create a transfer";
    return out;
  }
  curl_slist* headers = nullptr;
  headers = Curl().slist_append(headers, "Content-Type: application/json");
  for (const auto& [name, value] : refresh.headers) {
    headers = Curl().slist_append(headers, (name + ": " + value.value).c_str());
  }
  std::string reply;
  Curl().easy_setopt(e, CURLOPT_URL, url.c_str());
  Curl().easy_setopt(e, CURLOPT_NOSIGNAL, 1L);
  Curl().easy_setopt(e, CURLOPT_PROTOCOLS_STR, "http,https");
  Curl().easy_setopt(e, CURLOPT_HTTPHEADER, headers);
  Curl().easy_setopt(e, CURLOPT_SSL_VERIFYPEER, pipeline.insecure ? 0L : 1L);
  Curl().easy_setopt(e, CURLOPT_SSL_VERIFYHOST, pipeline.insecure ? 0L : 2L);
  Curl().easy_setopt(e, CURLOPT_USERAGENT, "plumb/" PLUMB_VERSION);
  Curl().easy_setopt(e, CURLOPT_TIMEOUT_MS, long(pipeline.refresh_timeout_ms));
  Curl().easy_setopt(e, CURLOPT_WRITEFUNCTION, &KeepBody);
  Curl().easy_setopt(e, CURLOPT_WRITEDATA, &reply);
  Curl().easy_setopt(e, CURLOPT_NOPROGRESS, 0L);
  Curl().easy_setopt(e, CURLOPT_XFERINFOFUNCTION, &StopProgress);
  Curl().easy_setopt(e, CURLOPT_XFERINFODATA, stop);
  if (refresh.method == "GET") {
    Curl().easy_setopt(e, CURLOPT_HTTPGET, 1L);
  } else {
    Curl().easy_setopt(e, CURLOPT_CUSTOMREQUEST, refresh.method.c_str());
    Curl().easy_setopt(e, CURLOPT_POSTFIELDS, payload.c_str());
    Curl().easy_setopt(e, CURLOPT_POSTFIELDSIZE, long(payload.size()));
  }
  const Clock::time_point start = Clock::now();
  const CURLcode code = Curl().easy_perform(e);
  out.ms = MillisecondsSince(start);
  long status = 0;
  Curl().easy_getinfo(e, CURLINFO_RESPONSE_CODE, &status);
  Curl().easy_cleanup(e);
  Curl().slist_free_all(headers);
  out.output = HeadExcerpt(reply, kExcerptBytes, pipeline.secrets);
  if (code == CURLE_ABORTED_BY_CALLBACK) {
    out.interrupted = true;
    out.error = "refresh interrupted";
  } else if (code == CURLE_OPERATION_TIMEDOUT) {
    out.error = "refresh request timed out after " +
                std::to_string(pipeline.refresh_timeout_ms / 1000) + " s (refresh_timeout)";
  } else if (code != CURLE_OK) {
    out.error =
        "refresh request failed: " + RedactSecrets(Curl().easy_strerror(code), pipeline.secrets);
  } else if (status < 200 || status > 299) {
    out.error = "refresh request answered HTTP " + std::to_string(status);
  } else {
    out.ok = true;
  }
  return out;
}

}  // namespace

std::string FillRefreshPlaceholders(const std::string& text, const std::string& corpus_dir,
                                    const std::string& update_id) {
  std::string out;
  out.reserve(text.size());
  for (size_t i = 0; i < text.size();) {
    if (text.compare(i, 8, "{corpus}") == 0) {
      out += corpus_dir;
      i += 8;
    } else if (text.compare(i, 8, "{update}") == 0) {
      out += update_id;
      i += 8;
    } else {
      out += text[i++];
    }
  }
  return out;
}

RefreshOutcome CallRefresh(const PipelineConfig& pipeline, const std::string& corpus_dir,
                           const std::string& update_id, const std::atomic<bool>* stop) {
  const RefreshConfig& refresh = *pipeline.refresh;
  if (!refresh.command.empty()) return RunCommand(pipeline, refresh, corpus_dir, update_id, stop);
  if (refresh.url) return SendRequest(pipeline, refresh, corpus_dir, update_id, stop);
  RefreshOutcome out;
  out.error = "refresh has neither a command nor a url";
  return out;
}

}  // namespace plumb
