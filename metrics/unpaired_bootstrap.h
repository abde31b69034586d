#ifndef PLUMB_METRICS_UNPAIRED_BOOTSTRAP_H_
#define PLUMB_METRICS_UNPAIRED_BOOTSTRAP_H_

/// The ratio of two independent samples' means with a percentile bootstrap interval, for values
/// that cannot be paired: `plumb drift` compares the workers' warm-up times of two runs this way
/// (a run's workers are not the other run's). Seeded and deterministic. Pure function.

#include <cstdint>
#include <vector>

#include "metrics/interval.h"
#include "metrics/paired_bootstrap.h"

namespace plumb::metrics {

/// ratio = mean(cand) / mean(base); interval = the definition-7 percentiles (percentile.h) at
/// 100 * (1 - confidence) / 2 and 100 * (1 - (1 - confidence) / 2) of that ratio over
/// `resamples` resamples, each drawing base.size() values from base and then cand.size() from
/// cand, with replacement, by SeededRandom(seed).UniformIndex. With one value on a side that side
/// never varies (an interval from one worker says only how the other side varies); with one value
/// on each side nothing varies, and the interval is NaN (shown as n/a), not a point. Values are
/// durations: finite and positive; when a side is empty or a value is not, everything is NaN.
RatioResult UnpairedBootstrapMeanRatio(const std::vector<double>& base,
                                       const std::vector<double>& cand, int resamples = 10000,
                                       uint64_t seed = 20261201, double confidence = 0.95);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_UNPAIRED_BOOTSTRAP_H_
