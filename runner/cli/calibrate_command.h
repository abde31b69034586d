#ifndef PLUMB_RUNNER_CLI_CALIBRATE_COMMAND_H_
#define PLUMB_RUNNER_CLI_CALIBRATE_COMMAND_H_

/// `plumb calibrate SUITE --grader NAME [--labels FILE] [--repeat K]`: runs the grader on every
/// labelled answer of a human labels file (through the verdict cache), compares its verdicts
/// with the person's, prints the agreement (n, base rate, kappa, sensitivity, specificity,
/// self-consistency with K >= 2, every disagreement worst first) and writes the record
/// calibration/NAME.json beside the suite, which decides whether grade.NAME may gate
/// (runner/run/calibration.h). Exit 0 once the record is written, whatever it says; 2 for a
/// usage, suite or labels error; 130/143 when interrupted (no record written).

#include <string>

#include "runner/cli/grader_session.h"

namespace plumb {

struct CalibrateOptions {
  std::string suite_path;
  std::string grader;          // --grader NAME
  std::string labels_path;     // --labels FILE; empty: the grader's labels: key
  std::string pipelines_file;  // --pipelines
  int repeat = 1;              // --repeat K: grade each answer K times (self-consistency)
  GradeCacheOptions cache;
  bool json = false;
};

int CalibrateCommand(const CalibrateOptions& options);

}  // namespace plumb

#endif  // PLUMB_RUNNER_CLI_CALIBRATE_COMMAND_H_
