#include "runner/base/report_stdout.h"

#include <unistd.h>

#include <cerrno>
#include <cstdio>
#include <cstring>

namespace plumb {
namespace {

int reserved_stdout = -1;

}  // namespace

bool ReserveStdoutForReport(std::string* error) {
  std::fflush(stdout);
  const int saved = dup(STDOUT_FILENO);
  if (saved < 0 || dup2(STDERR_FILENO, STDOUT_FILENO) < 0) {
    *error = std::string("cannot send a report to standard output: ") + std::strerror(errno);
    if (saved >= 0) close(saved);
    return false;
  }
  reserved_stdout = saved;
  return true;
}

bool WriteReportToStdout(std::string_view text, std::string* error) {
  const int fd = reserved_stdout >= 0 ? reserved_stdout : STDOUT_FILENO;
  if (fd == STDOUT_FILENO) std::fflush(stdout);
  while (!text.empty()) {
    const ssize_t n = write(fd, text.data(), text.size());
    if (n < 0 && errno == EINTR) continue;
    if (n <= 0) {
      *error = std::string("cannot write the report to standard output: ") +
               (n < 0 ? std::strerror(errno) : "nothing was written");
      return false;
    }
    text.remove_prefix(static_cast<size_t>(n));
  }
  return true;
}

}  // namespace plumb
