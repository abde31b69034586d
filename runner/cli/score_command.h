#ifndef PLUMB_RUNNER_CLI_SCORE_COMMAND_H_
#define PLUMB_RUNNER_CLI_SCORE_COMMAND_H_

/// `plumb score SUITE PREDICTIONS.jsonl` (SPEC §8): scores recorded replies with no pipeline.
/// Each line of the predictions file is a reply object of SPEC §5 plus "id" (and optionally
/// "repeat" and "latency_ms"). A case with no prediction is a case error; a prediction for an
/// id the suite does not have is a warning; a line that is not a JSON object with a string id
/// is a file:line:column error (exit 2, nothing scored).

#include <map>
#include <string>

#include "runner/cli/run_outputs.h"

namespace plumb {

struct ScoreOptions {
  std::string suite_path;
  std::string predictions_path;
  std::string out_dir;  // empty: plumb-out/<suite>/predictions
  std::map<std::string, std::string> labels;
  bool json = false;
  OutputOptions outputs;  // --html, --junit, --markdown
};

int ScoreCommand(const ScoreOptions& options);

}  // namespace plumb

#endif  // PLUMB_RUNNER_CLI_SCORE_COMMAND_H_
