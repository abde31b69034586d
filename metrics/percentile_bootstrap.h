#ifndef PLUMB_METRICS_PERCENTILE_BOOTSTRAP_H_
#define PLUMB_METRICS_PERCENTILE_BOOTSTRAP_H_

/// A percentile bootstrap interval of one sample's percentile, for a run's time to first token
/// (issue 21): how far its p50 or p95 could move with another draw of the same cases. Seeded and
/// deterministic. Pure function.

#include <cstdint>
#include <vector>

#include "metrics/interval.h"

namespace plumb::metrics {

/// The definition-7 percentile p in [0, 100] (percentile.h) of `values`, resampled `resamples`
/// times: each resample draws values.size() values with replacement, index by index, with
/// SeededRandom(seed).UniformIndex(n) (the stream PercentileBootstrapMean uses). The interval is
/// the definition-7 percentiles at 100 * (1 - confidence) / 2 and 100 * (1 - (1 - confidence) / 2)
/// of the resampled percentiles. Empty `values`, or a value that is not finite: NaN interval.
/// One value: the point [v, v]. Cost: n draws and one pass over n counts per resample.
Interval BootstrapPercentileInterval(const std::vector<double>& values, double p,
                                     int resamples = 2000, uint64_t seed = 20261201,
                                     double confidence = 0.95);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_PERCENTILE_BOOTSTRAP_H_
