#ifndef PLUMB_RUNNER_CHECK_COMMAND_H_
#define PLUMB_RUNNER_CHECK_COMMAND_H_

/// `plumb check SUITE` (SPEC §8): validates the suite without running anything: every key,
/// every quote located, every offset checked against its document. Exit 0 when the suite is
/// usable, 2 when it is not (every problem printed with file:line:column).

#include <string>

namespace plumb {

struct CheckOptions {
  std::string suite_path;
  std::string pipelines_file;
  bool json = false;
};

int CheckCommand(const CheckOptions& options);

}  // namespace plumb

#endif  // PLUMB_RUNNER_CHECK_COMMAND_H_
