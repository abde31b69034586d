#ifndef PLUMB_METRICS_METRIC_SUMMARY_H_
#define PLUMB_METRICS_METRIC_SUMMARY_H_

/// Run-level summaries of per-case values: a metric's mean, count and 95% interval (SPEC §6.6)
/// and the latency percentiles (SPEC §6.5). The runner builds them for the whole run and for each
/// tag and writes them to run.json and the reports. Pure functions.

#include <cstdint>
#include <vector>

#include "metrics/interval.h"

namespace plumb::metrics {

/// Latency over the cases of a run, in milliseconds. Percentiles are definition 7
/// (percentile.h). All zero when n == 0.
///
/// Some values may be lower bounds (right-censored): a call that timed out enters at its
/// timeout, and took at least that long. Every statistic is then a lower bound of what the
/// uncensored latencies would give; a percentile is exactly what they would give unless one of
/// the order statistics its interpolation uses (with a non-zero weight) is a lower bound, and
/// the `*_at_least` flags say where that is so. A lower bound sorts after an equal measured
/// value (its true value is at least as large), so ties do not mark a percentile.
struct LatencySummary {
  int64_t n = 0;             // every value, lower bounds included
  int64_t lower_bounds = 0;  // of n
  double p50 = 0, p90 = 0, p95 = 0, p99 = 0, mean = 0, max = 0;
  bool p50_at_least = false, p90_at_least = false, p95_at_least = false, p99_at_least = false;
  /// The mean and the max are lower bounds as soon as one value is.
  bool mean_at_least() const { return lower_bounds > 0; }
};
LatencySummary SummarizeLatency(std::vector<double> latencies_ms,
                                std::vector<double> lower_bounds_ms = {});

/// A metric's summary. `values` holds one finite value per case where the metric is defined.
/// The interval is 95%: Wilson (interval.h) when `binary` and every value is exactly 0 or 1, with
/// successes = their sum (`wilson` is then true); otherwise GroupedBootstrapMean(values,
/// resamples, seed) (grouped_bootstrap.h): the percentile bootstrap of the mean, its resample
/// counts drawn per distinct value when that is cheaper, else PercentileBootstrapMean's own
/// index draws. n == 0 -> mean 0 and the interval the chosen method gives for no data
/// ({0, 1} for Wilson, {0, 0} for the bootstrap).
struct MetricSummary {
  double mean = 0;
  int64_t n = 0;
  Interval interval;
  bool wilson = false;
};
MetricSummary SummarizeMetric(const std::vector<double>& values, bool binary, int resamples = 2000,
                              uint64_t seed = 20261201);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_METRIC_SUMMARY_H_
