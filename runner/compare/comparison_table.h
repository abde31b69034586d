#ifndef PLUMB_RUNNER_COMPARE_COMPARISON_TABLE_H_
#define PLUMB_RUNNER_COMPARE_COMPARISON_TABLE_H_

/// The terminal summary of `plumb compare`: the runs, one column each (quality metrics with their
/// intervals, latency p50/p95, time to first token, warm-up, cost per 1,000 cases, the run's own
/// verdict), each later run against the first by the drift verdict rule, the front, the
/// break-evens, and last the exit line. Colour as in summary_table.h. Run names and labels have
/// control characters replaced, so a run cannot drive the terminal.

#include <string>

#include "runner/compare/comparison.h"

namespace plumb {

std::string FormatComparisonTable(const Comparison& comparison, bool colour);

}  // namespace plumb

#endif  // PLUMB_RUNNER_COMPARE_COMPARISON_TABLE_H_
