#ifndef PLUMB_RUNNER_CLI_COMPARE_COMMAND_H_
#define PLUMB_RUNNER_CLI_COMPARE_COMMAND_H_

/// `plumb compare RUN_DIR RUN_DIR...`: two or more finished runs of one suite side by side
/// (runner/compare/comparison.h). Prints the table or, with --json, the comparison's JSON;
/// writes --html and --markdown. Exit codes (SPEC §8): 0 no later run regressed against the
/// first on a gated metric; 1 one did; 2 a run could not be read, the runs are of different
/// suites, fewer than two were given, or an option is wrong.

#include <string>
#include <vector>

#include "runner/compare/drift.h"

namespace plumb {

struct CompareOptions {
  std::vector<std::string> run_dirs;
  DriftOptions drift;  // --gate, --min-effect, --seed, --resamples, --allow-missing
  std::string html;
  std::string markdown;
  bool json = false;
  bool colour = false;
};

int CompareCommand(const CompareOptions& options);

}  // namespace plumb

#endif  // PLUMB_RUNNER_CLI_COMPARE_COMMAND_H_
