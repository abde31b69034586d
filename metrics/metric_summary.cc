#include "metrics/metric_summary.h"

#include <algorithm>
#include <cstddef>

#include "metrics/grouped_bootstrap.h"
#include "metrics/percentile.h"

namespace plumb::metrics {

LatencySummary SummarizeLatency(std::vector<double> latencies_ms) {
  LatencySummary summary;
  if (latencies_ms.empty()) return summary;
  std::sort(latencies_ms.begin(), latencies_ms.end());
  double total = 0;
  for (double v : latencies_ms) total += v;
  summary.n = static_cast<int64_t>(latencies_ms.size());
  summary.p50 = PercentileSorted(latencies_ms, 50);
  summary.p90 = PercentileSorted(latencies_ms, 90);
  summary.p95 = PercentileSorted(latencies_ms, 95);
  summary.p99 = PercentileSorted(latencies_ms, 99);
  summary.mean = total / static_cast<double>(latencies_ms.size());
  summary.max = latencies_ms.back();
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
