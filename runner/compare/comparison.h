#ifndef PLUMB_RUNNER_COMPARE_COMPARISON_H_
#define PLUMB_RUNNER_COMPARE_COMPARISON_H_

/// Comparison is `plumb compare RUN_DIR RUN_DIR...`: two or more runs of one suite side by side.
/// Each run's own figures as its run.json records them (every quality metric's mean, interval and
/// n; latency p50/p95 and mean; time to first token; the workers' warm-up; cost per 1,000 cases),
/// a drift of every later run against the first (ComputeDrift: the same pairing, tests and verdict
/// rule as `plumb drift`), the front of quality (`correct`) against latency p95 (pareto_front.h),
/// and the break-even of every pair that trades warm-up for per-case time (break_even.h).
/// The JSON, terminal, Markdown and HTML writers all read this one value.

#include <cstdint>
#include <map>
#include <string>
#include <vector>

#include "metrics/interval.h"
#include "runner/compare/break_even.h"
#include "runner/compare/drift.h"
#include "runner/run/run_aggregates.h"
#include "runner/run/run_values.h"

namespace plumb {

/// The metric the chart and the front read as quality.
inline constexpr const char* kCompareQualityMetric = "correct";

struct ComparedMetric {
  double mean = 0;
  metrics::Interval interval;
  int64_t n = 0;
};

/// Percentiles of a time in milliseconds (latency_ms, or ttft_ms when the run recorded it).
/// `available` is false when the run has none (no reply measured, or no streaming).
struct ComparedTime {
  bool available = false;
  int64_t n = 0;
  double p50 = 0, p95 = 0, mean = 0;
  bool p50_at_least = false, p95_at_least = false, mean_at_least = false;  // timeouts reach it
};

/// The mean cost of a case times 1,000, with its interval (same scaling), in the run's currency.
struct ComparedCost {
  bool available = false;
  double per_1000 = 0;
  metrics::Interval interval;
  std::string currency;
};

struct ComparedRun {
  RunIdentity identity;
  std::string name;  // the pipeline's name, made unique among the runs (see ComputeComparison)
  int64_t cases = 0;
  std::map<std::string, ComparedMetric> metrics;
  ComparedTime latency;
  ComparedTime ttft;
  WarmupSummary warmup;  // signal empty: no warm-up recorded
  /// What the break-even takes as the worker's start-up: the mean warm-up with a ready signal;
  /// with first calls, the mean first call less the mean latency (a first call also answers a
  /// case), at least 0; NaN without either.
  double startup_ms = 0;
  ComparedCost cost;
  int exit_code = 0;  // the run's own verdict as run.json records it
  std::string verdict_reason;
  bool on_front = false;
};

/// Run `slow_start` warms up longer and answers faster than run `quick_start`: from `cases`
/// cases on (one worker, one case after another) its total time is the smaller.
/// The per-case times are means, so the statement is only as firm as their difference: `gap_ms`
/// is the 95% paired-bootstrap interval of quick's mean latency less slow's over the cases both
/// timed (metrics::PairedBootstrapMeanDelta, the drift's resamples and seed). `established`
/// when the whole interval is above 0; then the break-even lies between `cases_early` (at the
/// interval's upper end) and `cases_late` (at its lower end). Otherwise the two runs' per-case
/// times are not told apart and the break-even may not exist.
struct BreakEvenStatement {
  size_t slow_start = 0;
  size_t quick_start = 0;
  int64_t cases = 0;
  TimeCost slow, quick;
  int64_t paired_cases = 0;
  metrics::Interval gap_ms;
  bool established = false;
  int64_t cases_early = 0, cases_late = 0;
};

struct Comparison {
  std::string suite;
  DriftOptions options;
  std::vector<ComparedRun> runs;
  std::vector<std::string> metrics;        // every run's quality metrics, in display order
  std::vector<DriftReport> against_first;  // [i - 1]: runs[i] against runs[0]
  std::vector<size_t> front;               // indices into runs, by latency p95
  std::vector<BreakEvenStatement> break_evens;
  /// 1 when a gated metric of some later run regressed against the first run; else 0.
  int exit_code = 0;
  std::string reason;  // one line
};

/// Compares `runs` (two or more; the first is the reference of the verdicts). False with a
/// sentence when fewer than two runs are given, when a run's suite name differs from the first
/// run's (naming both directories and suites), or when a drift cannot be computed.
/// Names: each run is shown by its pipeline's name; names that repeat get their directory's last
/// component in brackets, and names that still repeat a "#K" (K its position, from 1).
bool ComputeComparison(const std::vector<const RunValues*>& runs, const DriftOptions& options,
                       Comparison* out, std::string* error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_COMPARE_COMPARISON_H_
