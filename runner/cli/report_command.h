#ifndef PLUMB_RUNNER_CLI_REPORT_COMMAND_H_
#define PLUMB_RUNNER_CLI_REPORT_COMMAND_H_

/// `plumb report RUN_DIR` (SPEC §8): re-renders a stored run without calling any pipeline: the
/// terminal summary (from run.json), or with --json the run record itself, and any of --html,
/// --junit, --markdown. Exits 0 when everything was rendered, 2 when the run cannot be read or
/// a file cannot be written; the run's own verdict is shown, not re-applied (that was the run's
/// exit code).

#include <string>

#include "runner/cli/run_outputs.h"
#include "runner/run/run_aggregates.h"
#include "runner/run/run_reader.h"

namespace plumb {

struct ReportOptions {
  std::string run_dir;
  OutputOptions outputs;
  bool json = false;
};

int ReportCommand(const ReportOptions& options);

/// The aggregates and threshold outcomes a run recorded in run.json, back in their structs (for
/// the summary table), metrics in display order.
RunAggregates AggregatesFromRecord(const nlohmann::json& record);
std::vector<ThresholdOutcome> ThresholdsFromRecord(const nlohmann::json& record);

}  // namespace plumb

#endif  // PLUMB_RUNNER_CLI_REPORT_COMMAND_H_
