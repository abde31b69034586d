#include "runner/base/interrupt.h"

#include <fcntl.h>
#include <signal.h>
#include <unistd.h>

namespace plumb {
namespace {

int g_pipe[2] = {-1, -1};
std::atomic<bool> g_interrupted{false};
struct sigaction g_old_int;
struct sigaction g_old_term;

void OnSignal(int) {
  if (g_interrupted.exchange(true)) _exit(130);  // second signal: the user insists
  const char byte = 1;
  ssize_t ignored = write(g_pipe[1], &byte, 1);
  (void)ignored;
}

}  // namespace

InterruptWatch::InterruptWatch(std::function<void()> on_interrupt)
    : on_interrupt_(std::move(on_interrupt)) {
  g_interrupted = false;
  if (pipe2(g_pipe, O_CLOEXEC) != 0) return;
  struct sigaction action {};
  action.sa_handler = OnSignal;
  sigemptyset(&action.sa_mask);
  sigaction(SIGINT, &action, &g_old_int);
  sigaction(SIGTERM, &action, &g_old_term);
  thread_ = std::thread([this] {
    char byte = 0;
    while (read(g_pipe[0], &byte, 1) < 0) {
    }
    if (byte == 1 && on_interrupt_) on_interrupt_();
  });
}

InterruptWatch::~InterruptWatch() {
  if (g_pipe[0] < 0) return;
  sigaction(SIGINT, &g_old_int, nullptr);
  sigaction(SIGTERM, &g_old_term, nullptr);
  const char byte = 0;  // wakes the thread without an interrupt
  ssize_t ignored = write(g_pipe[1], &byte, 1);
  (void)ignored;
  if (thread_.joinable()) thread_.join();
  close(g_pipe[0]);
  close(g_pipe[1]);
  g_pipe[0] = g_pipe[1] = -1;
}

const std::atomic<bool>& InterruptWatch::interrupted() const { return g_interrupted; }

}  // namespace plumb
