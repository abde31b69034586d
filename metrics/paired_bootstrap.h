#ifndef PLUMB_METRICS_PAIRED_BOOTSTRAP_H_
#define PLUMB_METRICS_PAIRED_BOOTSTRAP_H_

/// Paired bootstrap intervals for `plumb drift` (SPEC §7): cases paired by id are resampled
/// together, so the interval reflects the run-to-run difference rather than the spread of case
/// difficulty. Seeded and deterministic: resample after resample, n case indices are drawn with
/// SeededRandom(seed).UniformIndex(n), the same stream PercentileBootstrapMean uses; interval ends
/// are the definition-7 percentiles (percentile.h) at 100 * (1 - confidence) / 2 and
/// 100 * (1 - (1 - confidence) / 2). Pure functions.

#include <cstdint>
#include <vector>

#include "metrics/interval.h"

namespace plumb::metrics {

/// delta = mean of the per-case differences cand[i] - base[i]; interval = the percentile bootstrap
/// of that mean (exactly PercentileBootstrapMean over the differences). base and cand hold the
/// values of the same cases in the same order. n == 0 -> all zero; sizes differ -> all NaN; a
/// value that is not finite -> a NaN interval.
/// Cost: n * resamples index draws and additions (100,000 pairs with B = 10000: see
/// tests/bench/drift_stats_bench.cc).
struct PairedBootstrapResult {
  double delta = 0;
  Interval interval;
};
PairedBootstrapResult PairedBootstrapMeanDelta(const std::vector<double>& base,
                                               const std::vector<double>& cand,
                                               int resamples = 10000, uint64_t seed = 20261201,
                                               double confidence = 0.95);

/// ratio = Q_p(cand) / Q_p(base), Q_p the definition-7 percentile p in [0, 100] (e.g. 50 or 95
/// for the latency drift); interval = percentiles of that ratio over paired resamples. Values are
/// latencies: finite and positive. When n == 0, the sizes differ, or any value is not finite and
/// positive, there is no ratio: everything is NaN.
struct RatioResult {
  double ratio = 0;
  Interval interval;
};
RatioResult PairedBootstrapQuantileRatio(const std::vector<double>& base,
                                         const std::vector<double>& cand, double p,
                                         int resamples = 10000, uint64_t seed = 20261201,
                                         double confidence = 0.95);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_PAIRED_BOOTSTRAP_H_
