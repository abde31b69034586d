#ifndef PLUMB_RUNNER_CLI_RUN_COMMAND_H_
#define PLUMB_RUNNER_CLI_RUN_COMMAND_H_

/// `plumb run` (SPEC §8): load the suite, pick the cases and pipelines, drive each pipeline
/// through the scheduler into its run directory, aggregate, check thresholds, write run.json and
/// print the summary. Returns the process exit code.

#include <map>
#include <string>
#include <vector>

#include "runner/cli/grader_session.h"
#include "runner/cli/run_outputs.h"
#include "runner/suite/case_selection.h"

namespace plumb {

struct RunOptions {
  std::string suite_path;
  std::string pipelines_file;                 // --pipelines FILE
  std::vector<std::string> pipelines;         // --pipeline NAME...; empty: the suite's first
  std::string out_dir;                        // --out DIR; empty: plumb-out/<suite>/<pipeline>
  int jobs = 0;                               // --jobs N; 0: the pipeline's `jobs`, else 1
  int repeat = 1;                             // --repeat K
  bool resume = false;                        // --resume
  bool overwrite = false;                     // --overwrite: replace a finished run in --out
  CaseSelection selection;                    // --tag, --case, --shard, --limit
  std::map<std::string, std::string> labels;  // --label K=V
  bool json = false;                          // --json
  std::string baseline_dir;       // --baseline DIR: drift against it and gate (SPEC §7, §8)
  bool allow_missing = false;     // --allow-missing: baseline cases not run are left out
  std::vector<std::string> gate;  // --gate with --baseline; empty: the drift's default
  double max_slowdown = 0.10;     // --max-slowdown with --gate latency_p95
  OutputOptions outputs;          // --html, --junit, --markdown
  bool progress = true;           // false in tests
  GradeCacheOptions grade_cache;  // --grade-cache FILE, --no-grade-cache
};

int RunCommand(const RunOptions& options);

/// The run directory for `pipeline`: --out itself for a single pipeline, --out/<pipeline> for
/// several, plumb-out/<suite>/<pipeline> without --out.
std::string RunDirectory(const std::string& out_dir, const std::string& suite_name,
                         const std::string& pipeline, bool several);

/// Creates `dir` and its parents; false with a sentence on failure.
bool MakeDirectories(const std::string& dir, std::string* error);

/// Removes the temporary files dead plumb processes left in a run directory (RemoveStaleTempFiles)
/// and names each on stderr.
void ReportStaleTempFiles(const std::string& dir);

}  // namespace plumb

#endif  // PLUMB_RUNNER_CLI_RUN_COMMAND_H_
