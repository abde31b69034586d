#include "metrics/metric_summary.h"

#include <algorithm>
#include <cstddef>

#include "metrics/grouped_bootstrap.h"
#include "metrics/percentile.h"

namespace plumb::metrics {

LatencySummary SummarizeLatency(std::vector<double> latencies_ms,
                                std::vector<double> lower_bounds_ms) {
  LatencySummary summary;
  const size_t n = latencies_ms.size() + lower_bounds_ms.size();
  if (n == 0) return summary;
  std::sort(latencies_ms.begin(), latencies_ms.end());
  std::sort(lower_bounds_ms.begin(), lower_bounds_ms.end());
  // One ascending list, a lower bound after the measured values equal to it; `censored[k]` says
  // whether the k-th value is a lower bound.
  std::vector<double> sorted(n);
  std::vector<bool> censored(n);
  size_t measured = 0, bounds = 0;
  double total = 0;
  for (size_t k = 0; k < n; ++k) {
    const bool bound =
        measured == latencies_ms.size() ||
        (bounds < lower_bounds_ms.size() && lower_bounds_ms[bounds] < latencies_ms[measured]);
    sorted[k] = bound ? lower_bounds_ms[bounds++] : latencies_ms[measured++];
    censored[k] = bound;
    total += sorted[k];
  }
  // Does definition 7 at p use a lower bound with a non-zero weight?
  auto at_least = [&](double p) {
    const PercentileRank rank = PercentileRankType7(n, p);
    return censored[rank.lower] || (rank.gamma > 0 && censored[rank.lower + 1]);
  };
  summary.n = static_cast<int64_t>(n);
  summary.lower_bounds = static_cast<int64_t>(lower_bounds_ms.size());
  summary.p50 = PercentileSorted(sorted, 50);
  summary.p90 = PercentileSorted(sorted, 90);
  summary.p95 = PercentileSorted(sorted, 95);
  summary.p99 = PercentileSorted(sorted, 99);
  summary.p50_at_least = at_least(50);
  summary.p90_at_least = at_least(90);
  summary.p95_at_least = at_least(95);
  summary.p99_at_least = at_least(99);
  summary.mean = total / static_cast<double>(n);
  summary.max = sorted.back();
  return summary;
}

MetricSummary SummarizeMetric(const std::vector<double>& values, bool binary, int resamples,
                              uint64_t seed) {
  MetricSummary summary;
  summary.n = static_cast<int64_t>(values.size());
  double total = 0;
  bool all_zero_or_one = true;
  for (double v : values) {
    total += v;
    if (v != 0 && v != 1) all_zero_or_one = false;
  }
  if (!values.empty()) summary.mean = total / static_cast<double>(values.size());
  summary.wilson = binary && all_zero_or_one;
  if (summary.wilson) {
    // Every value is 0 or 1, so the sum is an exact integer in double.
    summary.interval = WilsonInterval(static_cast<int64_t>(total), summary.n);
  } else {
    summary.interval = GroupedBootstrapMean(values, resamples, seed);
  }
  return summary;
}

}  // namespace plumb::metrics
