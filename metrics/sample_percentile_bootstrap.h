#ifndef PLUMB_METRICS_SAMPLE_PERCENTILE_BOOTSTRAP_H_
#define PLUMB_METRICS_SAMPLE_PERCENTILE_BOOTSTRAP_H_

/// A percentile of one sample with a percentile bootstrap interval, and the ratio of one
/// percentile of two independent samples with an unpaired bootstrap interval. A run splits a
/// session's latencies into first turns and follow-ups with them (issue 22): the two groups are
/// different calls, so they cannot be paired. Seeded and deterministic. Pure functions.

#include <cstdint>
#include <vector>

#include "metrics/interval.h"
#include "metrics/paired_bootstrap.h"

namespace plumb::metrics {

struct PercentileEstimate {
  double value = 0;  // the definition-7 percentile (percentile.h) of the values
  Interval interval;
};

/// value = Q_p(values); interval = the definition-7 percentiles at 100 * (1 - confidence) / 2
/// and 100 * (1 - (1 - confidence) / 2) of Q_p over `resamples` resamples of values.size()
/// values drawn with replacement by SeededRandom(seed).UniformIndex. Empty input or a value that
/// is not finite: everything NaN. One value: {v, [v, v]}.
PercentileEstimate BootstrapPercentile(const std::vector<double>& values, double p,
                                       int resamples = 2000, uint64_t seed = 20261201,
                                       double confidence = 0.95);

/// ratio = Q_p(num) / Q_p(den); interval = the percentiles of that ratio over `resamples`
/// resamples, each drawing den.size() values from den and then num.size() from num, with
/// replacement, from one SeededRandom(seed) stream. Values are durations, finite and positive;
/// when a side is empty or a value is not, everything is NaN.
RatioResult UnpairedBootstrapPercentileRatio(const std::vector<double>& den,
                                             const std::vector<double>& num, double p,
                                             int resamples = 2000, uint64_t seed = 20261201,
                                             double confidence = 0.95);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_SAMPLE_PERCENTILE_BOOTSTRAP_H_
