#ifndef PLUMB_RUNNER_CLI_DRIFT_COMMAND_H_
#define PLUMB_RUNNER_CLI_DRIFT_COMMAND_H_

/// `plumb drift BASE_DIR CAND_DIR` (SPEC §7, §8): reads two finished runs, compares them
/// (drift.h), writes the requested report files, prints the terminal summary or, with --json,
/// the drift JSON, and returns the gate's exit code: 0 no gated metric regressed and the
/// candidate's floors held; 1 a gated metric regressed or a candidate floor broke; 2 a run could
/// not be read, the runs are of different suites, or an option is wrong. `plumb run --baseline`
/// shares RunDrift.

#include <string>
#include <vector>

#include "runner/cli/run_outputs.h"
#include "runner/compare/drift.h"

namespace plumb {

struct DriftCommandOptions {
  std::string base_dir;
  std::string cand_dir;
  DriftOptions drift;     // --gate, --min-effect, --seed, --resamples
  OutputOptions outputs;  // --html, --junit, --markdown
  bool json = false;
  bool colour = false;
  bool exit_line = true;  // false under `run --baseline`, which prints one exit line itself
};

int DriftCommand(const DriftCommandOptions& options);

/// Parses --gate's comma-separated metric ids; false with a sentence when the list is empty.
/// (RunDrift then refuses an id that is neither a per-case metric of SPEC §6 nor measured by
/// either run, so a misspelt gate cannot silently gate nothing.)
bool ParseGate(const std::string& text, std::vector<std::string>* gate, std::string* error);

/// Checks the numeric options; false with a sentence naming the one that is wrong.
bool CheckDriftOptions(const DriftOptions& options, std::string* error);

/// The comparison itself, for callers that already hold both runs: computes the report, writes
/// the outputs and prints the table (nothing with `json`); *json_out receives the report's JSON
/// either way. Returns the gate's exit code, or kExitUsage after printing why.
int RunDrift(const LoadedRun& base, const LoadedRun& cand, const DriftCommandOptions& options,
             nlohmann::json* json_out);
/// The same from the runs' per-case values; base_run and cand_run (the same runs in full) are
/// read only for the HTML page and the JUnit file, and may be null when neither is asked for.
int RunDrift(const RunValues& base, const RunValues& cand, const LoadedRun* base_run,
             const LoadedRun* cand_run, const DriftCommandOptions& options,
             nlohmann::json* json_out);

}  // namespace plumb

#endif  // PLUMB_RUNNER_CLI_DRIFT_COMMAND_H_
