#include "runner/pipeline/child_process.h"

#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <poll.h>
#include <signal.h>
#include <spawn.h>
#include <string.h>
#include <sys/prctl.h>
#include <sys/stat.h>
#include <sys/syscall.h>
#include <sys/wait.h>
#include <unistd.h>

#include <atomic>
#include <cmath>
#include <fstream>
#include <mutex>
#include <set>
#include <sstream>
#include <thread>
#include <vector>

namespace plumb {
namespace {

using Clock = std::chrono::steady_clock;

// Helpers of a killed child become zombies once SIGKILL lands; reaping them is quick, but a
// member stuck in the kernel (an uninterruptible wait) must not hold plumb forever.
constexpr std::chrono::milliseconds kGroupReapLimit{1000};

int MillisecondsUntil(Clock::time_point deadline) {
  const auto left = deadline - Clock::now();
  if (left <= Clock::duration::zero()) return 0;
  // Round up: a poll that wakes a fraction of a millisecond early would only spin.
  return static_cast<int>(std::ceil(std::chrono::duration<double, std::milli>(left).count()));
}

// The pids of live ChildProcess objects: plumb's own children, never taken for adopted ones.
std::mutex g_spawned_mutex;
std::set<pid_t> g_spawned;
std::atomic<long> g_spawn_serial{0};
// Held from posix_spawn until the new pid is tracked, and while KillAdoptedDescendants picks its
// victims: otherwise a child another thread has just started (a grader's worker while the
// pipeline's run ends) looks adopted for a moment and is killed.
std::mutex g_spawn_gate;

void TrackSpawned(pid_t pid, bool alive) {
  std::lock_guard<std::mutex> lock(g_spawned_mutex);
  if (alive) {
    g_spawned.insert(pid);
  } else {
    g_spawned.erase(pid);
  }
}

bool IsSpawned(pid_t pid) {
  std::lock_guard<std::mutex> lock(g_spawned_mutex);
  return g_spawned.count(pid) != 0;
}

std::string ReadSmallFile(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::stringstream text;
  text << in.rdbuf();
  return text.str();
}

// plumb's children: from /proc/self/task/*/children (any of plumb's threads may be the parent
// of an adopted process), or, on kernels without that file, from every /proc/PID/stat.
std::vector<pid_t> OwnChildren() {
  std::vector<pid_t> children;
  bool have_children_files = false;
  if (DIR* tasks = opendir("/proc/self/task")) {
    while (const dirent* task = readdir(tasks)) {
      if (task->d_name[0] == '.') continue;
      const std::string path = std::string("/proc/self/task/") + task->d_name + "/children";
      if (access(path.c_str(), R_OK) != 0) continue;
      have_children_files = true;
      std::istringstream list(ReadSmallFile(path));
      for (pid_t pid; list >> pid;) children.push_back(pid);
    }
    closedir(tasks);
  }
  if (have_children_files) return children;
  const pid_t self = getpid();
  if (DIR* proc = opendir("/proc")) {
    while (const dirent* entry = readdir(proc)) {
      if (entry->d_name[0] < '0' || entry->d_name[0] > '9') continue;
      // /proc/PID/stat: "pid (comm) state ppid ..."; comm may hold spaces and parentheses.
      const std::string stat = ReadSmallFile(std::string("/proc/") + entry->d_name + "/stat");
      const size_t close = stat.rfind(')');
      if (close == std::string::npos) continue;
      std::istringstream fields(stat.substr(close + 1));
      std::string state;
      pid_t parent = 0;
      if (fields >> state >> parent && parent == self) children.push_back(atoi(entry->d_name));
    }
    closedir(proc);
  }
  return children;
}

// The PLUMB_WORKER value in a process's environment as it was at exec; empty if none or
// unreadable (a zombie has none).
std::string WorkerTagOf(pid_t pid) {
  const std::string environ = ReadSmallFile("/proc/" + std::to_string(pid) + "/environ");
  const std::string key = std::string(kWorkerVariable) + "=";
  size_t at = 0;
  while (at < environ.size()) {
    size_t end = environ.find('\0', at);
    if (end == std::string::npos) end = environ.size();
    if (environ.compare(at, key.size(), key) == 0) {
      return environ.substr(at + key.size(), end - at - key.size());
    }
    at = end + 1;
  }
  return "";
}

void CloseFd(int* fd) {
  if (*fd >= 0) close(*fd);
  *fd = -1;
}

// Keeps a pipe end off descriptors 0-2: if plumb runs with one of those closed, pipe2 hands it
// out, and dup2 onto itself in the child would leave close-on-exec set on the child's stdio.
bool MoveAboveStdio(int* fd) {
  if (*fd > 2) return true;
  const int moved = fcntl(*fd, F_DUPFD_CLOEXEC, 3);
  if (moved < 0) return false;
  close(*fd);
  *fd = moved;
  return true;
}

bool MakePipe(int fds[2]) {
  if (pipe2(fds, O_CLOEXEC) != 0) return false;
  if (MoveAboveStdio(&fds[0]) && MoveAboveStdio(&fds[1])) return true;
  close(fds[0]);
  close(fds[1]);
  return false;
}

bool SetNonBlocking(int fd) {
  const int flags = fcntl(fd, F_GETFL);
  return flags >= 0 && fcntl(fd, F_SETFL, flags | O_NONBLOCK) == 0;
}

void BecomeSubreaper() {
  static std::once_flag once;
  std::call_once(once, [] { prctl(PR_SET_CHILD_SUBREAPER, 1, 0, 0, 0); });
}

int OpenPidfd(pid_t pid) {
#ifdef SYS_pidfd_open
  return static_cast<int>(syscall(SYS_pidfd_open, pid, 0));
#else
  (void)pid;
  return -1;
#endif
}

std::string WorkingDirectory() {
  std::string buffer(4096, '\0');
  if (getcwd(buffer.data(), buffer.size()) == nullptr) return ".";
  buffer.resize(strlen(buffer.c_str()));
  return buffer;
}

std::string Join(const std::string& dir, const std::string& name) {
  if (dir.empty() || dir.back() == '/') return dir + name;
  return dir + "/" + name;
}

bool IsExecutableFile(const std::string& path) {
  struct stat info {};
  return stat(path.c_str(), &info) == 0 && S_ISREG(info.st_mode) && access(path.c_str(), X_OK) == 0;
}

}  // namespace

bool FindExecutable(const std::string& name, const std::string& cwd, const std::string& search_path,
                    std::string* resolved, std::string* error) {
  if (name.empty()) {
    *error = "the command's program name is empty";
    return false;
  }
  std::string base = WorkingDirectory();
  if (!cwd.empty()) base = cwd[0] == '/' ? cwd : Join(base, cwd);

  if (name.find('/') != std::string::npos) {
    const std::string path = name[0] == '/' ? name : Join(base, name);
    const std::string where = path == name ? "" : " (looked for " + path + ")";
    struct stat info {};
    if (stat(path.c_str(), &info) != 0) {
      *error = "program \"" + name + "\" does not exist" + where;
      return false;
    }
    if (S_ISDIR(info.st_mode)) {
      *error = "program \"" + name + "\" is a directory" + where;
      return false;
    }
    if (!S_ISREG(info.st_mode) || access(path.c_str(), X_OK) != 0) {
      *error = "program \"" + name + "\" is not executable" + where;
      return false;
    }
    *resolved = path;
    return true;
  }

  // execvp's rules: PATH entries in order, an empty entry meaning the working directory.
  size_t start = 0;
  while (start <= search_path.size()) {
    size_t end = search_path.find(':', start);
    if (end == std::string::npos) end = search_path.size();
    std::string dir = search_path.substr(start, end - start);
    if (dir.empty()) dir = base;
    if (dir[0] != '/') dir = Join(base, dir);
    const std::string candidate = Join(dir, name);
    if (IsExecutableFile(candidate)) {
      *resolved = candidate;
      return true;
    }
    start = end + 1;
  }
  *error = "program \"" + name + "\" was not found on PATH";
  return false;
}

std::string DescribeExit(int wait_status) {
  if (WIFEXITED(wait_status)) {
    return "process exited with status " + std::to_string(WEXITSTATUS(wait_status));
  }
  if (WIFSIGNALED(wait_status)) {
    const int signal = WTERMSIG(wait_status);
    const char* abbreviation = sigabbrev_np(signal);
    return "process killed by signal " +
           (abbreviation ? "SIG" + std::string(abbreviation) : std::to_string(signal));
  }
  return "process ended with wait status " + std::to_string(wait_status);
}

int KillAdoptedDescendants(const std::string& tag) {
  int killed = 0;
  // Killing one may orphan its own children, which plumb then adopts: look again until a look
  // finds nothing, a bounded number of times (a fork bomb cannot hold plumb here).
  for (int round = 0; round < 16; ++round) {
    std::vector<pid_t> victims;
    {
      std::lock_guard<std::mutex> gate(g_spawn_gate);
      for (const pid_t pid : OwnChildren()) {
        if (IsSpawned(pid)) continue;
        if (!tag.empty() && WorkerTagOf(pid) != tag) continue;
        victims.push_back(pid);
      }
    }
    if (victims.empty()) break;
    for (const pid_t pid : victims) {
      if (getpgid(pid) == pid) kill(-pid, SIGKILL);  // a group of its own, as setsid makes one
      kill(pid, SIGKILL);
    }
    for (const pid_t pid : victims) {
      const Clock::time_point limit = Clock::now() + kGroupReapLimit;
      while (waitpid(pid, nullptr, WNOHANG) == 0 && Clock::now() < limit) {
        std::this_thread::sleep_for(std::chrono::microseconds(200));
      }
      ++killed;
    }
  }
  return killed;
}

std::unique_ptr<ChildProcess> ChildProcess::Spawn(const SpawnSpec& spec, std::string* error) {
  BecomeSubreaper();
  int in[2], out[2], err[2];
  if (!MakePipe(in)) {
    *error = std::string("cannot create a pipe: ") + strerror(errno);
    return nullptr;
  }
  if (!MakePipe(out)) {
    *error = std::string("cannot create a pipe: ") + strerror(errno);
    close(in[0]);
    close(in[1]);
    return nullptr;
  }
  if (!MakePipe(err)) {
    *error = std::string("cannot create a pipe: ") + strerror(errno);
    for (int fd : {in[0], in[1], out[0], out[1]}) close(fd);
    return nullptr;
  }

  std::unique_ptr<ChildProcess> child(new ChildProcess());
  child->stdin_fd_ = in[1];
  child->stdout_fd_ = out[0];
  child->stderr_fd_ = err[0];

  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_adddup2(&actions, in[0], STDIN_FILENO);
  posix_spawn_file_actions_adddup2(&actions, out[1], STDOUT_FILENO);
  posix_spawn_file_actions_adddup2(&actions, err[1], STDERR_FILENO);
  if (!spec.cwd.empty()) posix_spawn_file_actions_addchdir_np(&actions, spec.cwd.c_str());

  // plumb ignores SIGPIPE and its threads may block signals for a watcher thread; an ignored
  // disposition and the mask survive exec, so the child would inherit both without this.
  posix_spawnattr_t attributes;
  posix_spawnattr_init(&attributes);
  sigset_t empty, defaults;
  sigemptyset(&empty);
  sigemptyset(&defaults);
  sigaddset(&defaults, SIGPIPE);
  posix_spawnattr_setsigmask(&attributes, &empty);
  posix_spawnattr_setsigdefault(&attributes, &defaults);
  posix_spawnattr_setpgroup(&attributes, 0);
  posix_spawnattr_setflags(&attributes,
                           POSIX_SPAWN_SETPGROUP | POSIX_SPAWN_SETSIGMASK | POSIX_SPAWN_SETSIGDEF);

  std::vector<char*> argv;
  argv.reserve(spec.argv.size() + 1);
  for (const std::string& arg : spec.argv) argv.push_back(const_cast<char*>(arg.c_str()));
  argv.push_back(nullptr);
  child->tag_ = std::to_string(getpid()) + "." + std::to_string(++g_spawn_serial);
  const std::string tag_variable = std::string(kWorkerVariable) + "=" + child->tag_;
  const std::string tag_prefix = std::string(kWorkerVariable) + "=";
  std::vector<char*> envp;
  envp.reserve(spec.env.size() + 2);
  for (const std::string& var : spec.env) {
    if (var.compare(0, tag_prefix.size(), tag_prefix) != 0) {
      envp.push_back(const_cast<char*>(var.c_str()));
    }
  }
  envp.push_back(const_cast<char*>(tag_variable.c_str()));
  envp.push_back(nullptr);

  pid_t pid = -1;
  std::unique_lock<std::mutex> gate(g_spawn_gate);
  const int rc =
      posix_spawn(&pid, spec.path.c_str(), &actions, &attributes, argv.data(), envp.data());
  posix_spawn_file_actions_destroy(&actions);
  posix_spawnattr_destroy(&attributes);
  close(in[0]);
  close(out[1]);
  close(err[1]);
  if (rc != 0) {
    *error = "cannot start " + spec.path + ": " + strerror(rc);
    return nullptr;  // the destructor closes our ends; there is no process to reap
  }
  child->pid_ = pid;
  TrackSpawned(pid, true);
  gate.unlock();
  child->exit_fd_ = OpenPidfd(pid);
  if (!SetNonBlocking(child->stdin_fd_) || !SetNonBlocking(child->stdout_fd_) ||
      !SetNonBlocking(child->stderr_fd_)) {
    *error = std::string("cannot configure the pipes: ") + strerror(errno);
    return nullptr;  // the destructor kills and reaps the child
  }
  return child;
}

ChildProcess::~ChildProcess() {
  if (pid_ > 0 && !reaped_) KillAndReap();
  CloseFds();
}

void ChildProcess::CloseFds() {
  CloseFd(&stdin_fd_);
  CloseFd(&stdout_fd_);
  CloseFd(&stderr_fd_);
  CloseFd(&exit_fd_);
}

void ChildProcess::CloseStdin() { CloseFd(&stdin_fd_); }

bool ChildProcess::HasExited() {
  if (reaped_) return true;
  siginfo_t info{};
  while (waitid(P_PID, pid_, &info, WEXITED | WNOHANG | WNOWAIT) != 0) {
    if (errno != EINTR) return true;  // ECHILD: nothing left to wait for
  }
  return info.si_pid == pid_;
}

bool ChildProcess::WaitForExit(Clock::time_point deadline, int interrupt_fd) {
  while (true) {
    if (reaped_) return true;
    if (exit_fd_ < 0 && HasExited()) return true;
    const int left = MillisecondsUntil(deadline);
    if (left == 0) return HasExited();
    pollfd fds[2];
    nfds_t count = 0;
    if (exit_fd_ >= 0) fds[count++] = {exit_fd_, POLLIN, 0};
    if (interrupt_fd >= 0) fds[count++] = {interrupt_fd, POLLIN, 0};
    // Without a pidfd nothing polls readable on exit: look again every few milliseconds.
    const int timeout = exit_fd_ >= 0 ? left : std::min(left, 2);
    const int ready = poll(fds, count, timeout);
    if (ready < 0 && errno != EINTR) return HasExited();
    if (ready <= 0) continue;
    for (nfds_t i = 0; i < count; ++i) {
      if (fds[i].revents == 0) continue;
      if (fds[i].fd == exit_fd_) return true;
      if (fds[i].fd == interrupt_fd) return HasExited();
    }
  }
}

void ChildProcess::SignalGroup(int signal) {
  // Once the leader is reaped its id may be handed to someone else's group.
  if (pid_ > 0 && !reaped_) kill(-pid_, signal);
}

int ChildProcess::KillAndReap() {
  if (reaped_ || pid_ <= 0) return wait_status_;
  kill(-pid_, SIGKILL);
  int status = 0;
  while (waitpid(pid_, &status, 0) < 0) {
    if (errno != EINTR) break;
  }
  reaped_ = true;
  wait_status_ = status;
  TrackSpawned(pid_, false);
  // Helpers in the group were re-parented to plumb (a subreaper) when their parent died.
  const Clock::time_point limit = Clock::now() + kGroupReapLimit;
  while (true) {
    int member_status = 0;
    const pid_t reaped = waitpid(-pid_, &member_status, WNOHANG);
    if (reaped > 0) continue;
    if (reaped < 0) {
      if (errno == EINTR) continue;
      break;  // ECHILD: no member of the group is our child any more
    }
    if (Clock::now() >= limit) break;
    std::this_thread::sleep_for(std::chrono::milliseconds(1));
  }
  KillAdoptedDescendants(tag_);
  CloseFd(&exit_fd_);
  return wait_status_;
}

int ChildProcess::Terminate(std::chrono::milliseconds grace, int interrupt_fd) {
  if (reaped_) return wait_status_;
  SignalGroup(SIGTERM);
  WaitForExit(Clock::now() + grace, interrupt_fd);
  return KillAndReap();
}

}  // namespace plumb
