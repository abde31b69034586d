#ifndef PLUMB_RUNNER_PIPELINE_CHILD_PROCESS_H_
#define PLUMB_RUNNER_PIPELINE_CHILD_PROCESS_H_

/// A ChildProcess is one running pipeline program, started and ended by the subprocess adapter
/// (runner/pipeline/subprocess_adapter.h). The program runs without a shell, in a process group of
/// its own, with stdin, stdout and stderr connected to pipes. Ending it always ends the whole
/// group, so helpers the program forked cannot outlive it or hold its pipes open.

#include <sys/types.h>

#include <chrono>
#include <memory>
#include <string>
#include <vector>

namespace plumb {

/// What to start. Built once per pipeline and reused for every start.
struct SpawnSpec {
  std::string path;               // the executable to run, already resolved (see FindExecutable)
  std::vector<std::string> argv;  // argv[0] as the user wrote it
  std::vector<std::string> env;   // the child's whole environment, "NAME=value" each
  std::string cwd;                // empty: plumb's own working directory
};

/// Resolves a command's argv[0] the way exec would from the child's working directory `cwd`
/// (empty: plumb's): a name with a '/' is a path (relative ones against `cwd`), a bare name is
/// looked up in `search_path` (a PATH value). On success `*resolved` is an absolute path to an
/// executable regular file; otherwise false, with `*error` saying what is wrong with `name`.
bool FindExecutable(const std::string& name, const std::string& cwd, const std::string& search_path,
                    std::string* resolved, std::string* error);

/// "process exited with status 3", "process killed by signal SIGSEGV": a waitpid() status in
/// the words of a case error.
std::string DescribeExit(int wait_status);

/// The environment variable that marks a pipeline process and everything it starts:
/// PLUMB_WORKER=<plumb's pid>.<serial>, a serial per ChildProcess (see ChildProcess::tag).
inline constexpr char kWorkerVariable[] = "PLUMB_WORKER";

/// Kills and reaps the descendants plumb adopted as a subreaper: processes whose parent is now
/// plumb but which plumb did not start as a ChildProcess (a pipeline's helper that left its
/// process group, with setsid say, and whose parent died). With a non-empty `tag`, only those
/// whose environment carries PLUMB_WORKER=`tag` (a descendant of that one ChildProcess); with
/// an empty `tag`, every such process (only for a plumb that starts no other children). Each is
/// SIGKILLed with its process group when it leads one; processes that its death orphans are
/// adopted in turn and killed too. Returns how many were killed. Thread-safe.
int KillAdoptedDescendants(const std::string& tag);

/// Not thread-safe: one thread drives a ChildProcess at a time. Copying is deleted: the object
/// owns the process (it is killed and reaped by the destructor at the latest) and the pipe ends.
class ChildProcess {
 public:
  /// Starts `spec`. The child gets a default SIGPIPE disposition and an empty signal mask
  /// whatever plumb's threads use, and is the leader of a new process group. Our pipe ends
  /// are non-blocking and close-on-exec, so no other child inherits them. Returns nullptr and
  /// sets `*error` when the program cannot be started.
  ///
  /// The first call marks plumb as a child subreaper (Linux PR_SET_CHILD_SUBREAPER): helpers of
  /// a killed child are re-parented to plumb instead of init, so KillAndReap can reap them too
  /// and leave no zombie in the group, even where init does not reap.
  static std::unique_ptr<ChildProcess> Spawn(const SpawnSpec& spec, std::string* error);

  /// Kills and reaps the group if that has not happened yet; closes the pipes.
  ~ChildProcess();
  ChildProcess(const ChildProcess&) = delete;
  ChildProcess& operator=(const ChildProcess&) = delete;

  /// The child's pid, which is also its process group id.
  pid_t pid() const { return pid_; }
  /// The value of PLUMB_WORKER in the child's environment, unique within this plumb.
  const std::string& tag() const { return tag_; }
  /// Our ends of the pipes; -1 once closed.
  int stdin_fd() const { return stdin_fd_; }
  int stdout_fd() const { return stdout_fd_; }
  int stderr_fd() const { return stderr_fd_; }
  /// A pidfd that polls readable once the child has exited; -1 where the kernel has none
  /// (before Linux 5.3), in which case callers fall back to HasExited().
  int exit_fd() const { return exit_fd_; }

  /// Closes our end of stdin, so the child reads EOF.
  void CloseStdin();

  /// True once the child has exited. It is not reaped, so its pid (and group id) cannot be
  /// reused until KillAndReap.
  bool HasExited();

  /// Waits until the child exits (true), `deadline` passes or `interrupt_fd` (-1: none) polls
  /// readable (false).
  bool WaitForExit(std::chrono::steady_clock::time_point deadline, int interrupt_fd);

  /// Sends `signal` to every process of the group. Harmless once the group is gone.
  void SignalGroup(int signal);

  /// SIGKILLs the whole group (before reaping the leader, so the group id is still ours), reaps
  /// the child and every member of the group re-parented to plumb, kills the descendants that
  /// left the group and were adopted by plumb (KillAdoptedDescendants(tag())), and returns the
  /// child's wait status. Later calls return the same status.
  int KillAndReap();

  /// The polite end: SIGTERM to the group, up to `grace` for the child to exit (cut short when
  /// `interrupt_fd` polls readable), then KillAndReap. Returns the child's wait status.
  int Terminate(std::chrono::milliseconds grace, int interrupt_fd);

 private:
  ChildProcess() = default;
  void CloseFds();

  pid_t pid_ = -1;
  int stdin_fd_ = -1;
  int stdout_fd_ = -1;
  int stderr_fd_ = -1;
  int exit_fd_ = -1;
  bool reaped_ = false;
  int wait_status_ = 0;
  std::string tag_;
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_PIPELINE_CHILD_PROCESS_H_
