#ifndef PLUMB_RUNNER_REPORT_SUMMARY_TABLE_H_
#define PLUMB_RUNNER_REPORT_SUMMARY_TABLE_H_

/// The terminal summary a person reads after `plumb run` / `plumb score`: first why cases
/// failed (one row per cause: count, share of the cases and its 95% Wilson interval, then the
/// most common error reasons when cases errored), then one row per metric
/// (mean, 95% interval, n, its floor or ceiling and whether it held), latency percentiles, a
/// compact per-tag table, and, last, the verdict line with the exit code and its reason. Colour
/// only when writing to a terminal and NO_COLOR is unset (https://no-color.org convention).

#include <cstdio>
#include <map>
#include <string>
#include <vector>

#include "runner/base/terminal_palette.h"
#include "runner/run/exit_code.h"
#include "runner/run/run_aggregates.h"

namespace plumb {

struct SummaryHeader {
  std::string suite;
  std::string pipeline;
  double seconds = 0;
  int repeat = 1;
  /// Per grade metric ("grade.NAME"), its calibration in a few words (GradeCalibrationNotes:
  /// kappa with its interval and the base rate, or "uncalibrated"), shown beside its row.
  std::map<std::string, std::string> grade_notes;
};

/// Without `exit_line` the table ends before the verdict line (the caller prints it, last).
/// `error_reasons` (FormatErrorReasons) is printed under the cause rows.
/// The summary's lines about multi-turn sessions (issue 22): count, session_pass, and the
/// first-turn and follow-up latency with their ratio.
std::string FormatSessionRows(const SessionAggregates& sessions);

std::string FormatSummary(const SummaryHeader& header, const RunAggregates& aggregates,
                          const std::vector<ThresholdOutcome>& thresholds,
                          const RunVerdict& verdict, bool colour, bool exit_line = true,
                          const std::string& error_reasons = "");

/// The cause rows alone: "failed 12 of 62 cases: 7 retrieval miss, ..." and a row per cause;
/// "all N cases passed" when none failed.
std::string FormatCauseRows(const CauseBreakdown& causes, const Palette& palette);

/// An amount of money as the reports write it: six significant digits (a reply's cost is often a
/// fraction of a cent), then the currency when there is one: "0.000675 EUR".
std::string FormatMoney(double amount, const std::string& currency);
/// The summary's cost line (issue 21): the run's total, how many replies had a cost, and the
/// mean per case with its 95% interval; or a line saying no reply carried the counts it needs.
std::string FormatCostLine(const TokenPrice& price, int64_t items, double total,
                           const metrics::MetricSummary& per_case);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_SUMMARY_TABLE_H_
