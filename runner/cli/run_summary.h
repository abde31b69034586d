#ifndef PLUMB_RUNNER_CLI_RUN_SUMMARY_H_
#define PLUMB_RUNNER_CLI_RUN_SUMMARY_H_

/// The last stage of `plumb run` and `plumb score`: outcomes -> aggregates -> thresholds ->
/// verdict, then run.json (when the run has a directory) and the summary on stdout (the table,
/// or with --json nothing: the caller prints the record). Returns the run's verdict.

#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "runner/run/exit_code.h"
#include "runner/run/run_record.h"
#include "runner/run/scheduler.h"

namespace plumb {

struct FinishedRun {
  RunVerdict verdict;
  std::string record;  // with `json` only: the run.json text (what --json prints)
};

/// `run_dir` empty: no run.json is written. `seconds` is the wall time shown in the table.
/// When cases errored, the most common error reasons follow the table. The table ends with "run
/// written to DIR" and then, with `exit_line`, the verdict's "exit N: reason" line, last; without
/// it (a run whose gate or other pipelines still follow) the run's own verdict is shown on a
/// line of its own and the caller prints the final exit line.
bool FinishRun(RunContext context, const std::vector<CaseOutcome>& outcomes, bool interrupted,
               const std::string& run_dir, bool json, double seconds, FinishedRun* finished,
               std::string* error, bool exit_line = true);

}  // namespace plumb

#endif  // PLUMB_RUNNER_CLI_RUN_SUMMARY_H_
