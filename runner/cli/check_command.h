#ifndef PLUMB_RUNNER_CLI_CHECK_COMMAND_H_
#define PLUMB_RUNNER_CLI_CHECK_COMMAND_H_

/// `plumb check SUITE` (SPEC §8): validates the suite without running anything: every key,
/// every quote located, every offset checked against its document. Exit 0 when the suite is
/// usable, 2 when it is not (every problem printed with file:line:column).
/// With `--since RUN_DIR`, it also compares each gold span with the fingerprint that run
/// recorded (run.json) and reports stale gold after a corpus edit: a span whose text changed
/// (and where that text is now, when it is still in the document) or whose quote now resolves
/// to other offsets. Any stale span makes the exit code 1.

#include <string>

namespace plumb {

struct CheckOptions {
  std::string suite_path;
  std::string pipelines_file;
  std::string since_run_dir;  // --since RUN_DIR; empty: no stale-gold check
  bool json = false;
};

int CheckCommand(const CheckOptions& options);

}  // namespace plumb

#endif  // PLUMB_RUNNER_CLI_CHECK_COMMAND_H_
