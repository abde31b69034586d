#include "runner/pipeline/subprocess_adapter.h"

#include <errno.h>
#include <poll.h>
#include <signal.h>
#include <stdint.h>
#include <string.h>
#include <sys/eventfd.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <map>
#include <utility>

#include "runner/base/human_units.h"
#include "runner/pipeline/excerpt.h"

extern char** environ;

namespace plumb {
namespace {

using Clock = std::chrono::steady_clock;

// One read() takes at most this much: the default pipe capacity on Linux.
constexpr size_t kReadChunk = 64 * 1024;
// A slot keeps its stdout buffer between calls (no allocation per call) unless an unusually
// large reply grew it beyond this; then it is freed so idle slots stay small.
constexpr size_t kKeptBufferBytes = 1024 * 1024;
// Reads of what is left in a pipe after its writers are dead: at most this many chunks.
constexpr int kFinalDrainReads = 64;

// A growable byte buffer that, unlike std::string::resize, does not zero-fill the bytes read()
// is about to overwrite.
class ReplyBuffer {
 public:
  std::string_view view() const { return {data_.get(), size_}; }
  size_t size() const { return size_; }
  size_t capacity() const { return capacity_; }
  void clear() { size_ = 0; }
  void Release() {
    data_.reset();
    size_ = capacity_ = 0;
  }
  // Room for up to `chunk` more bytes, growing geometrically but never beyond `limit` in total.
  size_t Reserve(size_t chunk, size_t limit) {
    if (capacity_ - size_ < chunk && capacity_ < limit) {
      const size_t grown = std::min(limit, std::max(capacity_ * 2, size_ + chunk));
      std::unique_ptr<char[]> bigger(new char[grown]);
      if (size_ > 0) memcpy(bigger.get(), data_.get(), size_);
      data_ = std::move(bigger);
      capacity_ = grown;
    }
    return std::min(chunk, capacity_ - size_);
  }
  char* end() { return data_.get() + size_; }
  void Commit(size_t bytes) { size_ += bytes; }

 private:
  std::unique_ptr<char[]> data_;
  size_t size_ = 0;
  size_t capacity_ = 0;
};

// The last `cap` bytes of everything appended, in at most twice that much memory.
class TailBuffer {
 public:
  explicit TailBuffer(size_t cap) : cap_(cap), data_(new char[2 * cap]) {}
  void Append(const char* bytes, size_t count) {
    if (count >= cap_) {
      memcpy(data_.get(), bytes + count - cap_, cap_);
      size_ = cap_;
      return;
    }
    if (size_ + count > 2 * cap_) {
      const size_t keep = std::min(size_, cap_);
      memmove(data_.get(), data_.get() + size_ - keep, keep);
      size_ = keep;
    }
    memcpy(data_.get() + size_, bytes, count);
    size_ += count;
  }
  std::string_view view() const {
    const size_t shown = std::min(size_, cap_);
    return {data_.get() + size_ - shown, shown};
  }

 private:
  size_t cap_;
  std::unique_ptr<char[]> data_;
  size_t size_ = 0;
};

int MillisecondsUntil(Clock::time_point deadline) {
  const auto left = deadline - Clock::now();
  if (left <= Clock::duration::zero()) return 0;
  return static_cast<int>(std::ceil(std::chrono::duration<double, std::milli>(left).count()));
}

double MillisecondsSince(Clock::time_point start) {
  return std::chrono::duration<double, std::milli>(Clock::now() - start).count();
}

enum class WriteState { kPending, kDone, kBroken };

// Writes what the pipe takes without blocking; kBroken when the reader is gone (EPIPE).
WriteState WriteSome(int fd, const std::string& bytes, size_t* written) {
  while (*written < bytes.size()) {
    const ssize_t count = write(fd, bytes.data() + *written, bytes.size() - *written);
    if (count > 0) {
      *written += static_cast<size_t>(count);
    } else if (count < 0 && errno == EINTR) {
      continue;
    } else if (count < 0 && (errno == EAGAIN || errno == EWOULDBLOCK)) {
      return WriteState::kPending;
    } else {
      return WriteState::kBroken;
    }
  }
  return WriteState::kDone;
}

// One read() into the buffer: bytes read, 0 at EOF, -1 when nothing is there yet.
ssize_t ReadInto(int fd, ReplyBuffer* buffer, size_t limit) {
  const size_t room = buffer->Reserve(kReadChunk, limit);
  if (room == 0) return -1;
  while (true) {
    const ssize_t count = read(fd, buffer->end(), room);
    if (count > 0) buffer->Commit(static_cast<size_t>(count));
    if (count >= 0) return count;
    if (errno == EINTR) continue;
    if (errno == EAGAIN || errno == EWOULDBLOCK) return -1;
    return 0;  // a read error ends the stream like EOF does
  }
}

bool IsReady(const pollfd& fd) { return fd.fd >= 0 && fd.revents != 0; }

// The protocol's rule for an "id" in a reply: when a reply object carries one, it is the
// request's. Only replies that contain the bytes "id" (in quotes) are parsed for it.
bool ReplyIdMatches(const std::string& body, const std::string& request_id, std::string* error) {
  if (body.find("\"id\"") == std::string::npos) return true;
  const nlohmann::json reply = nlohmann::json::parse(body, nullptr, /*allow_exceptions=*/false);
  if (!reply.is_object()) return true;  // not this check's business: parsing words it
  const auto id = reply.find("id");
  if (id == reply.end()) return true;
  if (id->is_string() && id->get_ref<const std::string&>() == request_id) return true;
  // The id is the pipeline's text: bounded here, redacted by the caller.
  const std::string text = id->is_string() ? id->get<std::string>() : id->dump();
  const std::string shown = std::string(Utf8Prefix(text, 200)) + (text.size() > 200 ? "..." : "");
  *error = "the reply's id " + (id->is_string() ? "'" + shown + "'" : shown) +
           " is not the request's id '" + request_id +
           "' (a reply that carries an id must carry the request's)";
  return false;
}

std::vector<std::string> MergeEnvironment(const std::map<std::string, ExpandedString>& extra) {
  std::vector<std::string> env;
  for (char** var = environ; var != nullptr && *var != nullptr; ++var) {
    const std::string entry = *var;
    const std::string name = entry.substr(0, entry.find('='));
    if (extra.count(name) == 0) env.push_back(entry);
  }
  for (const auto& [name, value] : extra) env.push_back(name + "=" + value.value);
  return env;
}

}  // namespace

enum class SubprocessAdapter::Outcome {
  kReply,        // a complete reply is in result->body
  kCrash,        // the process ended (or closed a pipe) before replying: retried once
  kTimeout,      // killed at the deadline
  kOversize,     // killed when the reply passed max_response_bytes
  kInterrupted,  // Shutdown was called; the process is left for Shutdown
  kStartFailed,  // the program could not be started
};

struct SubprocessAdapter::Slot {
  std::mutex mutex;  // held by Call; Shutdown takes it to wait for the Call to return
  std::unique_ptr<ChildProcess> child;
  bool stderr_open = false;
  ReplyBuffer out;  // what stdout produced for the current call
  TailBuffer err{kStderrTailBytes};
  std::unique_ptr<char[]> scratch{new char[kReadChunk]};  // stderr reads land here
  size_t err_this_call = 0;  // stderr bytes read during the current call
  // The worker printed more after its reply line: it is out of step with the requests, so it
  // is replaced before the next request.
  bool out_of_step = false;
  int index = 0;                      // the slot's number, for its warm-up records
  int starts = 0;                     // workers started on this slot
  std::vector<WorkerWarmup> warmups;  // their start-ups, in order
  // Without a ready signal, the worker was started and has not replied yet: its first reply
  // includes its start-up (a first call).
  bool fresh = false;
  // A worker that would not become ready (no ready line within startup_timeout, or a first
  // line that is not one) is not started again: every later call fails at once with this.
  std::string not_ready;

  void ReadStderrOnce() {
    if (!child || !stderr_open) return;
    while (true) {
      const ssize_t count = read(child->stderr_fd(), scratch.get(), kReadChunk);
      if (count > 0) {
        err.Append(scratch.get(), static_cast<size_t>(count));
        err_this_call += static_cast<size_t>(count);
        return;
      }
      if (count < 0 && errno == EINTR) continue;
      if (count < 0 && (errno == EAGAIN || errno == EWOULDBLOCK)) return;
      stderr_open = false;  // EOF or error: nothing more will come
      return;
    }
  }

  // After the writers are dead: what is still buffered in the pipes, for the excerpts.
  void DrainStderr() {
    for (int i = 0; i < kFinalDrainReads && stderr_open; ++i) {
      const size_t before = err_this_call;
      ReadStderrOnce();
      if (err_this_call == before) break;
    }
  }
  void DrainStdout(size_t limit) {
    for (int i = 0; i < kFinalDrainReads; ++i) {
      if (ReadInto(child->stdout_fd(), &out, limit) <= 0) break;
    }
  }
};

std::unique_ptr<SubprocessAdapter> SubprocessAdapter::Create(const PipelineConfig& config,
                                                             int slots, std::string* error) {
  const std::string prefix = "pipeline \"" + config.name + "\": ";
  if (config.command.empty()) {
    *error = prefix + "the command is empty; give the program and its arguments as a list";
    return nullptr;
  }
  if (slots < 1) {
    *error = prefix + "needs at least one slot";
    return nullptr;
  }
  if (config.timeout_ms <= 0) {
    *error = prefix + "the timeout must be positive";
    return nullptr;
  }
  if (config.max_response_bytes <= 0) {
    *error = prefix + "the response size cap must be positive";
    return nullptr;
  }

  std::unique_ptr<SubprocessAdapter> adapter(new SubprocessAdapter());
  adapter->mode_ = config.mode;
  adapter->timeout_ = std::chrono::milliseconds(config.timeout_ms);
  adapter->max_response_bytes_ = static_cast<size_t>(config.max_response_bytes);
  adapter->secrets_ = config.secrets;
  adapter->ready_line_ = config.ready_line && config.mode == SubprocessMode::kPersistent;
  adapter->startup_timeout_ = std::chrono::milliseconds(config.startup_timeout_ms);

  SpawnSpec& spawn = adapter->spawn_;
  for (const ExpandedString& arg : config.command) spawn.argv.push_back(arg.value);
  if (config.cwd) {
    spawn.cwd = config.cwd->value;
    struct stat info {};
    if (stat(spawn.cwd.c_str(), &info) != 0 || !S_ISDIR(info.st_mode)) {
      *error = prefix + "working directory \"" + config.cwd->redacted + "\" is not a directory";
      return nullptr;
    }
  }
  spawn.env = MergeEnvironment(config.env);
  std::string search_path = "/usr/local/bin:/usr/bin:/bin";
  if (const auto path = config.env.find("PATH"); path != config.env.end()) {
    search_path = path->second.value;
  } else if (const char* inherited = getenv("PATH")) {
    search_path = inherited;
  }
  std::string why;
  if (!FindExecutable(spawn.argv[0], spawn.cwd, search_path, &spawn.path, &why)) {
    *error = prefix + RedactSecrets(why, config.secrets);
    return nullptr;
  }

  adapter->interrupt_fd_ = eventfd(0, EFD_CLOEXEC | EFD_NONBLOCK);
  if (adapter->interrupt_fd_ < 0) {
    *error = prefix + "cannot create an eventfd: " + strerror(errno);
    return nullptr;
  }
  signal(SIGPIPE, SIG_IGN);  // see the header: a dead reader must cost a case, not plumb
  for (int i = 0; i < slots; ++i) {
    adapter->slots_.push_back(std::make_unique<Slot>());
    adapter->slots_.back()->index = i;
  }
  return adapter;
}

SubprocessAdapter::~SubprocessAdapter() {
  Shutdown();
  if (interrupt_fd_ >= 0) close(interrupt_fd_);
}

CallResult SubprocessAdapter::Call(const PipelineRequest& request, int index) {
  CallResult result;
  if (index < 0 || index >= slots()) {
    result.error = "internal error: slot " + std::to_string(index) + " out of range";
    return result;
  }
  Slot& slot = *slots_[index];
  std::lock_guard<std::mutex> lock(slot.mutex);
  if (interrupted_) {
    result.error = "run interrupted";
    return result;
  }
  // Replacing invalid UTF-8 instead of throwing keeps Call's no-throw promise; the suite
  // loader has already rejected such text, so this only changes what could not be sent.
  std::string line = request.ToLine();
  line.push_back('\n');
  slot.err_this_call = 0;

  Outcome outcome;
  if (mode_ == SubprocessMode::kPerCase) {
    outcome = AttemptPerCase(slot, line, &result);
  } else {
    outcome = Attempt(slot, line, &result);
    if (outcome == Outcome::kCrash && !interrupted_) {
      result.error.clear();
      result.attempts = 2;
      outcome = Attempt(slot, line, &result);
    }
  }
  if (outcome == Outcome::kReply && !ReplyIdMatches(result.body, request.id, &result.error)) {
    // Most likely the late reply to an earlier request: the worker is out of step.
    result.error = RedactSecrets(result.error, secrets_);
    outcome = Outcome::kCrash;
    if (slot.child) {
      result.error += "; the worker was restarted";
      slot.child->KillAndReap();
      slot.DrainStderr();
      slot.child.reset();
    }
    slot.out_of_step = false;
  }
  // A call cut short by Shutdown fails for that reason, whatever the process was doing.
  if (outcome != Outcome::kReply && interrupted_) {
    result.error = "run interrupted";
  } else if (outcome == Outcome::kTimeout) {
    // It took at least the timeout: the latency distribution keeps it, as a lower bound.
    result.timed_out = true;
    result.latency_ms = static_cast<double>(timeout_.count());
  }
  FillExcerpts(slot, outcome != Outcome::kReply, &result);
  if (slot.out.capacity() > kKeptBufferBytes) slot.out.Release();
  if (mode_ == SubprocessMode::kPersistent) result.worker_start = slot.starts;
  return result;
}

void SubprocessAdapter::FillExcerpts(Slot& slot, bool failed, CallResult* result) const {
  const std::string_view err = slot.err.view();
  if (failed) {
    result->stdout_excerpt = HeadExcerpt(slot.out.view(), kExcerptBytes, secrets_);
    result->stderr_excerpt = TailExcerpt(err, kExcerptBytes, secrets_);
  } else if (slot.err_this_call > 0) {
    // The whole tail is passed so that a secret reaching back before this call's bytes is
    // still recognised.
    result->stderr_excerpt =
        TailExcerpt(err, std::min(kExcerptBytes, slot.err_this_call), secrets_);
  }
}

bool SubprocessAdapter::EnsureStarted(Slot& slot, CallResult* result) {
  if (slot.child) return true;
  if (!slot.not_ready.empty()) {
    result->error = slot.not_ready;
    return false;
  }
  const Clock::time_point start = Clock::now();
  std::string error;
  slot.child = ChildProcess::Spawn(spawn_, &error);
  if (!slot.child) {
    result->error = RedactSecrets(error, secrets_);
    return false;
  }
  slot.stderr_open = true;
  const bool restart = slot.starts++ > 0;
  if (ready_line_) return AwaitReadyLine(slot, start, restart, result);
  slot.fresh = mode_ == SubprocessMode::kPersistent;
  return true;
}

bool SubprocessAdapter::AwaitReadyLine(Slot& slot, Clock::time_point start, bool restart,
                                       CallResult* result) {
  ChildProcess& child = *slot.child;
  const Clock::time_point deadline = start + startup_timeout_;
  const size_t limit = max_response_bytes_ + kReadChunk + 1;
  slot.out.clear();
  // `lasting`: the worker cannot be expected to do better next time (see Slot::not_ready).
  auto fail = [&](const std::string& error, bool lasting) {
    child.Terminate(kTerminationGrace, interrupt_fd_);
    slot.DrainStderr();
    slot.child.reset();
    slot.out.clear();
    result->error = RedactSecrets(error, secrets_);
    if (lasting) slot.not_ready = result->error;
    return false;
  };
  while (true) {
    enum { kInterrupt, kStdout, kStderr, kExit };
    pollfd fds[4] = {
        {interrupt_fd_, POLLIN, 0},
        {child.stdout_fd(), POLLIN, 0},
        {slot.stderr_open ? child.stderr_fd() : -1, POLLIN, 0},
        {child.exit_fd(), POLLIN, 0},
    };
    int timeout = MillisecondsUntil(deadline);
    if (timeout == 0) {
      return fail("no ready line within the startup_timeout of " +
                      FormatDuration(startup_timeout_) +
                      " (ready: line); raise startup_timeout if its start-up takes longer",
                  true);
    }
    // Without a pidfd an exit polls nothing readable: look for it every few milliseconds.
    if (child.exit_fd() < 0) timeout = std::min(timeout, 2);
    const int ready = poll(fds, 4, timeout);
    if (ready < 0 && errno != EINTR) {
      return fail(std::string("poll failed: ") + strerror(errno), false);
    }
    if (ready <= 0) {
      if (child.exit_fd() < 0 && child.HasExited()) {
        return fail("process exited before its ready line", false);
      }
      continue;
    }
    if (IsReady(fds[kStderr])) slot.ReadStderrOnce();
    if (IsReady(fds[kInterrupt])) {
      result->error = "run interrupted";
      return false;
    }
    if (IsReady(fds[kStdout])) {
      const ssize_t got = ReadInto(child.stdout_fd(), &slot.out, limit);
      if (got == 0) return fail("process closed its stdout before its ready line", false);
      const std::string_view out = slot.out.view();
      const size_t newline = out.find('\n');
      if (newline == std::string_view::npos) {
        if (out.size() > max_response_bytes_) {
          return fail("its ready line exceeded " + FormatBytes(max_response_bytes_), true);
        }
        continue;
      }
      const std::string_view line = out.substr(0, newline);
      nlohmann::json parsed = nlohmann::json::parse(line, nullptr, /*allow_exceptions=*/false);
      if (!parsed.is_object() || parsed.value("ready", nlohmann::json()) != true) {
        return fail(
            "its first line is not a ready line {\"ready\": true, ...} (the pipeline's "
            "config says 'ready: line'): '" +
                std::string(Utf8Prefix(line, 200)) + (line.size() > 200 ? "..." : "") + "'",
            true);
      }
      if (out.size() > newline + 1) {
        return fail("it wrote more after its ready line, before any request", true);
      }
      WorkerWarmup warmup;
      warmup.worker = slot.index;
      warmup.restart = restart;
      warmup.signal = "ready_line";
      warmup.ms = MillisecondsSince(start);
      parsed.erase("ready");
      RedactJsonStrings(&parsed, secrets_);
      warmup.ready = std::move(parsed);
      slot.warmups.push_back(std::move(warmup));
      slot.out.clear();
      return true;
    }
    if (IsReady(fds[kExit])) return fail("process exited before its ready line", false);
  }
}

std::vector<WorkerWarmup> SubprocessAdapter::Warmups() const {
  std::vector<WorkerWarmup> all;
  for (const std::unique_ptr<Slot>& slot : slots_) {
    std::lock_guard<std::mutex> lock(slot->mutex);
    all.insert(all.end(), slot->warmups.begin(), slot->warmups.end());
  }
  return all;
}

bool SubprocessAdapter::ReapDeadWorker(Slot& slot) {
  if (!slot.child) return false;
  ChildProcess& child = *slot.child;
  // One non-blocking look before the request goes out: a worker that died (or closed stdout)
  // since its last reply is replaced without spending this case's retry. Output it printed
  // while no request was outstanding breaks the protocol (one reply line per request): it is
  // never taken as this request's answer, and the worker, out of step, is replaced too.
  pollfd fds[2] = {{child.stdout_fd(), POLLIN, 0}, {child.exit_fd(), POLLIN, 0}};
  const nfds_t count = child.exit_fd() >= 0 ? 2 : 1;
  bool dead = false;
  bool stray = slot.out_of_step;
  if (poll(fds, count, 0) > 0) {
    if (count == 2 && fds[1].revents != 0) dead = true;
    if (fds[0].revents != 0) {
      for (int i = 0; i < kFinalDrainReads; ++i) {
        const ssize_t got = ReadInto(child.stdout_fd(), &slot.out, kReadChunk);
        slot.out.clear();
        if (got > 0) stray = true;
        if (got == 0) dead = true;
        if (got <= 0) break;
      }
    }
  }
  if (count == 1 && !dead) dead = child.HasExited();
  slot.out_of_step = false;
  if (!dead && !stray) return false;
  child.KillAndReap();
  slot.DrainStderr();
  slot.child.reset();
  return stray;
}

SubprocessAdapter::Outcome SubprocessAdapter::Attempt(Slot& slot, const std::string& line,
                                                      CallResult* result) {
  slot.out.clear();
  // A worker replaced for stray output costs this case a retry: say so in its attempts.
  if (ReapDeadWorker(slot)) result->attempts = 2;
  if (!EnsureStarted(slot, result)) return Outcome::kStartFailed;
  ChildProcess& child = *slot.child;
  const size_t limit = max_response_bytes_ + kReadChunk + 1;
  const bool fresh = std::exchange(slot.fresh, false);

  // The process is finished here, one way or another; `error` says which.
  auto end_process = [&](Outcome outcome, std::string error) {
    if (outcome == Outcome::kCrash) {
      // It broke a pipe or its stdout; give it the grace period to finish exiting, so the
      // error can say how it ended.
      const bool exited = child.WaitForExit(Clock::now() + kTerminationGrace, interrupt_fd_);
      const int status = child.KillAndReap();
      if (exited) error = DescribeExit(status);
    } else {
      child.Terminate(kTerminationGrace, interrupt_fd_);
    }
    slot.DrainStderr();
    slot.DrainStdout(limit);
    slot.child.reset();
    result->error = std::move(error);
    return outcome;
  };

  const Clock::time_point start = Clock::now();
  const Clock::time_point deadline = start + timeout_;
  size_t written = 0;
  WriteState writing = WriteSome(child.stdin_fd(), line, &written);
  if (writing == WriteState::kBroken) {
    return end_process(Outcome::kCrash, "process closed its stdin");
  }

  // A reply is complete at its first "\n"; `scanned` bytes are known to hold none.
  size_t scanned = 0;
  auto find_reply = [&](Outcome* outcome) {
    const std::string_view out = slot.out.view();
    const void* newline = memchr(out.data() + scanned, '\n', out.size() - scanned);
    scanned = out.size();
    if (newline == nullptr) {
      if (out.size() <= max_response_bytes_) return false;
      *outcome =
          end_process(Outcome::kOversize, "response exceeded " + FormatBytes(max_response_bytes_));
      return true;
    }
    const size_t length = static_cast<size_t>(static_cast<const char*>(newline) - out.data());
    if (length > max_response_bytes_) {
      *outcome =
          end_process(Outcome::kOversize, "response exceeded " + FormatBytes(max_response_bytes_));
      return true;
    }
    result->latency_ms = MillisecondsSince(start);
    result->body.assign(out.data(), length);
    if (fresh) {
      // Its start-up is in this latency: the worker's first_call_ms, not a case latency.
      result->first_call = true;
      WorkerWarmup warmup;
      warmup.worker = slot.index;
      warmup.restart = slot.starts > 1;
      warmup.signal = "first_call";
      warmup.ms = result->latency_ms;
      slot.warmups.push_back(std::move(warmup));
    }
    // Bytes after the reply line answer no request: the worker is replaced before the next.
    if (out.size() > length + 1) slot.out_of_step = true;
    *outcome = Outcome::kReply;
    return true;
  };

  while (true) {
    enum { kInterrupt, kStdout, kStderr, kStdin, kExit };
    pollfd fds[5] = {
        {interrupt_fd_, POLLIN, 0},
        {child.stdout_fd(), POLLIN, 0},
        {slot.stderr_open ? child.stderr_fd() : -1, POLLIN, 0},
        {writing == WriteState::kPending ? child.stdin_fd() : -1, POLLOUT, 0},
        {child.exit_fd(), POLLIN, 0},
    };
    const int timeout = MillisecondsUntil(deadline);
    if (timeout == 0) {
      return end_process(Outcome::kTimeout, "timed out after " + FormatDuration(timeout_));
    }
    const int ready = poll(fds, 5, timeout);
    if (ready < 0 && errno != EINTR) {
      return end_process(Outcome::kCrash, std::string("poll failed: ") + strerror(errno));
    }
    if (ready <= 0) continue;
    if (IsReady(fds[kStderr])) slot.ReadStderrOnce();  // first, so an interrupt keeps it
    if (IsReady(fds[kInterrupt])) {
      result->error = "run interrupted";
      return Outcome::kInterrupted;
    }
    if (IsReady(fds[kStdin])) {
      writing = WriteSome(child.stdin_fd(), line, &written);
      if (writing == WriteState::kBroken) {
        return end_process(Outcome::kCrash, "process closed its stdin");
      }
    }
    if (IsReady(fds[kStdout])) {
      const ssize_t got = ReadInto(child.stdout_fd(), &slot.out, limit);
      Outcome outcome;
      if (got > 0 && find_reply(&outcome)) return outcome;
      if (got == 0) return end_process(Outcome::kCrash, "process closed its stdout");
    }
    if (IsReady(fds[kExit])) {
      // It exited; a reply it printed just before is still in the pipe.
      for (int i = 0; i < kFinalDrainReads; ++i) {
        const ssize_t got = ReadInto(child.stdout_fd(), &slot.out, limit);
        Outcome outcome;
        if (got > 0 && find_reply(&outcome)) return outcome;
        if (got <= 0) break;
      }
      return end_process(Outcome::kCrash, "process exited");
    }
  }
}

SubprocessAdapter::Outcome SubprocessAdapter::AttemptPerCase(Slot& slot, const std::string& line,
                                                             CallResult* result) {
  slot.out.clear();
  if (!EnsureStarted(slot, result)) return Outcome::kStartFailed;
  ChildProcess& child = *slot.child;
  const size_t limit = max_response_bytes_ + kReadChunk + 1;

  auto kill_process = [&](Outcome outcome, std::string error) {
    child.Terminate(kTerminationGrace, interrupt_fd_);
    slot.DrainStderr();
    slot.DrainStdout(limit);
    slot.child.reset();
    result->error = std::move(error);
    return outcome;
  };
  auto oversize = [&] {
    return kill_process(Outcome::kOversize,
                        "response exceeded " + FormatBytes(max_response_bytes_));
  };

  const Clock::time_point start = Clock::now();
  const Clock::time_point deadline = start + timeout_;
  size_t written = 0;
  // A program that exits without reading all of its request is its own business; the reply
  // and the exit status decide.
  auto write_request = [&] {
    if (WriteSome(child.stdin_fd(), line, &written) != WriteState::kPending) child.CloseStdin();
  };
  write_request();

  bool stdout_open = true;
  bool exited = false;
  while (stdout_open || !exited) {
    enum { kInterrupt, kStdout, kStderr, kStdin, kExit };
    pollfd fds[5] = {
        {interrupt_fd_, POLLIN, 0},
        {stdout_open ? child.stdout_fd() : -1, POLLIN, 0},
        {slot.stderr_open ? child.stderr_fd() : -1, POLLIN, 0},
        {child.stdin_fd(), POLLOUT, 0},
        {exited ? -1 : child.exit_fd(), POLLIN, 0},
    };
    int timeout = MillisecondsUntil(deadline);
    if (timeout == 0) {
      return kill_process(Outcome::kTimeout, "timed out after " + FormatDuration(timeout_));
    }
    // Without a pidfd an exit polls nothing readable: look for it every few milliseconds.
    if (child.exit_fd() < 0) timeout = std::min(timeout, 2);
    const int ready = poll(fds, 5, timeout);
    if (ready < 0 && errno != EINTR) {
      return kill_process(Outcome::kCrash, std::string("poll failed: ") + strerror(errno));
    }
    if (ready < 0) {
      for (pollfd& fd : fds) fd.revents = 0;  // EINTR: nothing was reported
    }
    if (child.exit_fd() < 0 && !exited) exited = child.HasExited();
    if (ready <= 0 && !exited) continue;
    if (IsReady(fds[kStderr])) slot.ReadStderrOnce();  // first, so an interrupt keeps it
    if (IsReady(fds[kInterrupt])) {
      result->error = "run interrupted";
      return Outcome::kInterrupted;
    }
    if (IsReady(fds[kStdin])) write_request();
    if (IsReady(fds[kStdout])) {
      const ssize_t got = ReadInto(child.stdout_fd(), &slot.out, limit);
      if (got == 0) stdout_open = false;
      if (slot.out.size() > max_response_bytes_) return oversize();
    }
    if (IsReady(fds[kExit])) exited = true;
    if (exited && stdout_open) {
      // What the process printed before exiting is in the pipe. A helper that still holds
      // stdout open may add to it, within the size cap, until the pipe is empty.
      while (ReadInto(child.stdout_fd(), &slot.out, limit) > 0) {
        if (slot.out.size() > max_response_bytes_) return oversize();
      }
      stdout_open = false;
    }
  }
  result->latency_ms = MillisecondsSince(start);
  const int status = child.KillAndReap();
  slot.DrainStderr();
  slot.child.reset();
  if (!WIFEXITED(status) || WEXITSTATUS(status) != 0) {
    result->error = DescribeExit(status);
    return Outcome::kCrash;
  }
  std::string_view body = slot.out.view();
  while (!body.empty() && strchr(" \t\r\n\f\v", body.back()) != nullptr) body.remove_suffix(1);
  result->body.assign(body.data(), body.size());
  return Outcome::kReply;
}

void SubprocessAdapter::Shutdown() {
  std::lock_guard<std::mutex> guard(shutdown_mutex_);
  if (shut_down_) return;
  shut_down_ = true;
  interrupted_ = true;
  const uint64_t one = 1;
  if (interrupt_fd_ >= 0 && write(interrupt_fd_, &one, sizeof one) < 0) {
    // Only fails if the counter would overflow, which one write cannot do.
  }
  // Each slot's lock is free once its Call has seen the interrupt and returned.
  std::vector<std::unique_ptr<ChildProcess>> children;
  for (const std::unique_ptr<Slot>& slot : slots_) {
    std::lock_guard<std::mutex> lock(slot->mutex);
    if (slot->child) children.push_back(std::move(slot->child));
  }
  for (const auto& child : children) child->CloseStdin();
  const Clock::time_point deadline = Clock::now() + kTerminationGrace;
  for (const auto& child : children) child->WaitForExit(deadline, -1);
  for (const auto& child : children) child->KillAndReap();
}

}  // namespace plumb
