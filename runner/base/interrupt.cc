#include "runner/base/interrupt.h"

#include <fcntl.h>
#include <pthread.h>
#include <signal.h>
#include <unistd.h>

#include <cstdio>
#include <mutex>
#include <set>
#include <thread>

namespace plumb {
namespace {

int g_pipe[2] = {-1, -1};
std::atomic<bool> g_interrupted{false};
std::atomic<int> g_signal{0};

// Guards the callback and the temporary files; the watch thread holds it while it acts, so a
// file cannot be renamed into place (and unregistered) while the thread is deleting it.
std::mutex& Lock() {
  static std::mutex* mutex = new std::mutex();  // never destroyed: the thread may outlive main
  return *mutex;
}
std::function<void()>* g_callback = nullptr;  // the live InterruptWatch's, under Lock()
std::set<std::string>& TempFiles() {
  static auto* files = new std::set<std::string>();
  return *files;
}

void OnSignal(int number) {
  if (g_interrupted.exchange(true)) _exit(128 + g_signal.load());  // second signal: insist
  g_signal = number;
  const char byte = 1;
  ssize_t ignored = write(g_pipe[1], &byte, 1);
  (void)ignored;
}

void WatchSignals() {
  char byte = 0;
  while (read(g_pipe[0], &byte, 1) != 1) {
  }
  std::unique_lock<std::mutex> lock(Lock());
  if (g_callback != nullptr) {
    // The run loop stops its processes; the command finishes as interrupted and exits.
    (*g_callback)();  // once: a second signal ends the process in OnSignal
    return;
  }
  for (const std::string& path : TempFiles()) unlink(path.c_str());
  std::fprintf(stderr, "plumb: interrupted by %s\n", g_signal == SIGTERM ? "SIGTERM" : "SIGINT");
  _exit(InterruptExitCode());
}

}  // namespace

void InstallInterruptHandlers() {
  static std::once_flag once;
  std::call_once(once, [] {
    if (pipe2(g_pipe, O_CLOEXEC) != 0) return;
    struct sigaction action {};
    action.sa_handler = OnSignal;
    // The thread the signal lands on must not see EINTR from a blocking open() or write() of
    // run.json (an error instead of the signal's exit code); poll() still returns early.
    action.sa_flags = SA_RESTART;
    sigemptyset(&action.sa_mask);
    sigaction(SIGINT, &action, nullptr);
    sigaction(SIGTERM, &action, nullptr);
    std::thread(WatchSignals).detach();
    // A process started with these signals blocked (some supervisors do; so do the tests, to
    // send one before main runs) gets them now, pending ones at once, rather than never.
    sigset_t set;
    sigemptyset(&set);
    sigaddset(&set, SIGINT);
    sigaddset(&set, SIGTERM);
    pthread_sigmask(SIG_UNBLOCK, &set, nullptr);
  });
}

const std::atomic<bool>& InterruptRequested() { return g_interrupted; }

int InterruptExitCode() {
  const int number = g_signal.load();
  return number == 0 ? 128 + SIGINT : 128 + number;
}

void RemoveOnInterrupt(const std::string& path) {
  std::lock_guard<std::mutex> lock(Lock());
  TempFiles().insert(path);
}

void KeepOnInterrupt(const std::string& path) {
  std::lock_guard<std::mutex> lock(Lock());
  TempFiles().erase(path);
}

InterruptWatch::InterruptWatch(std::function<void()> on_interrupt) {
  InstallInterruptHandlers();
  std::lock_guard<std::mutex> lock(Lock());
  g_callback = new std::function<void()>(std::move(on_interrupt));
}

InterruptWatch::~InterruptWatch() {
  std::lock_guard<std::mutex> lock(Lock());
  delete g_callback;
  g_callback = nullptr;
}

}  // namespace plumb
