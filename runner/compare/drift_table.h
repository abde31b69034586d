#ifndef PLUMB_RUNNER_COMPARE_DRIFT_TABLE_H_
#define PLUMB_RUNNER_COMPARE_DRIFT_TABLE_H_

/// The terminal summary of a drift report, what `plumb drift` and `plumb run --baseline` print:
/// the two runs and their labels, what changed between them, one row per metric (base, cand,
/// delta, 95% interval, p-value, verdict; gated metrics marked), latency ratios, the smallest
/// detectable effects, tags whose verdict is not steady, the first lost and gained cases, and
/// last the gate's exit code and reason. Colour as in summary_table.h. Text from the runs
/// (labels, ids) has control characters replaced, so a run cannot drive the terminal.

#include <string>

#include "runner/compare/drift.h"

namespace plumb {

/// Without `exit_line` the table ends before the gate's exit line (`run --baseline` prints one
/// exit line for the run and its gate, last).
std::string FormatDriftTable(const DriftReport& report, bool colour, bool exit_line = true);

}  // namespace plumb

#endif  // PLUMB_RUNNER_COMPARE_DRIFT_TABLE_H_
