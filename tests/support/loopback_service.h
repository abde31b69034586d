// Test support: a fixture service (fixtures/chat-service, fixtures/fault-server) started for one
// test, its port read from the "listening on 127.0.0.1:PORT" line it prints first, killed and
// reaped at the end. Header-only.
#ifndef PLUMB_TESTS_SUPPORT_LOOPBACK_SERVICE_H_
#define PLUMB_TESTS_SUPPORT_LOOPBACK_SERVICE_H_

#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <string>
#include <vector>

#include "tests/support/plumb_process.h"

namespace plumb_test {

class LoopbackService {
 public:
  /// Starts build/fixtures/`program` with `args`.
  explicit LoopbackService(const std::string& program, const std::vector<std::string>& args = {}) {
    const std::string path = kFixtures + program;
    std::vector<char*> argv;
    argv.push_back(const_cast<char*>(path.c_str()));
    for (const std::string& a : args) argv.push_back(const_cast<char*>(a.c_str()));
    argv.push_back(nullptr);
    int out[2];
    REQUIRE(pipe(out) == 0);
    pid_ = fork();
    REQUIRE(pid_ >= 0);
    if (pid_ == 0) {
      dup2(out[1], 1);
      close(out[0]);
      close(out[1]);
      execv(path.c_str(), argv.data());
      _exit(127);
    }
    close(out[1]);
    std::string line;
    char c;
    while (read(out[0], &c, 1) == 1 && c != '\n') line.push_back(c);
    close(out[0]);
    const std::string marker = "listening on 127.0.0.1:";
    REQUIRE(line.rfind(marker, 0) == 0);
    port_ = line.substr(marker.size());
  }
  ~LoopbackService() {
    kill(pid_, SIGKILL);
    waitpid(pid_, nullptr, 0);
  }
  LoopbackService(const LoopbackService&) = delete;
  LoopbackService& operator=(const LoopbackService&) = delete;
  const std::string& port() const { return port_; }

 private:
  pid_t pid_ = -1;
  std::string port_;
};

}  // namespace plumb_test

#endif  // PLUMB_TESTS_SUPPORT_LOOPBACK_SERVICE_H_
