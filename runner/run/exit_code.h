#ifndef PLUMB_RUNNER_RUN_EXIT_CODE_H_
#define PLUMB_RUNNER_RUN_EXIT_CODE_H_

/// The process exit codes of SPEC §8, and the rule that picks one for a finished run. Case
/// errors outrank floors and ceilings: a run whose pipeline mostly failed says nothing about its
/// quality.

#include <string>
#include <vector>

#include "runner/run/run_aggregates.h"

namespace plumb {

enum ExitCode : int {
  kExitOk = 0,           // all floors and ceilings held, no gated metric regressed
  kExitFloorBroken = 1,  // a floor or ceiling broke, or a gated metric regressed
  kExitUsage = 2,        // usage, suite or config error; nothing ran
  kExitCaseErrors = 3,   // case errors above max_error_rate, or every case errored
  kExitInterrupted = 130,
};

struct RunVerdict {
  int code = kExitOk;
  std::string reason;  // one line for the end of the summary
};

/// "exit N: reason" and a newline, green for 0 and red otherwise when `colour`: the last line
/// plumb prints, so a CI log ends with the process's exit code and why.
std::string FormatExitLine(const RunVerdict& verdict, bool colour);

RunVerdict DecideRunVerdict(const RunAggregates& aggregates,
                            const std::vector<ThresholdOutcome>& thresholds, double max_error_rate,
                            bool interrupted);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_EXIT_CODE_H_
