#include "runner/pipeline/child_process.h"

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

#include <cmath>
#include <mutex>
#include <thread>

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
  std::vector<char*> envp;
  envp.reserve(spec.env.size() + 1);
  for (const std::string& var : spec.env) envp.push_back(const_cast<char*>(var.c_str()));
  envp.push_back(nullptr);

  pid_t pid = -1;
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
