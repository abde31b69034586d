#ifndef PLUMB_METRICS_RESAMPLE_SUM_H_
#define PLUMB_METRICS_RESAMPLE_SUM_H_

/// The inner loop every index bootstrap shares (interval.cc, grouped_bootstrap.cc): the sum of
/// values drawn uniformly with replacement. Pure apart from advancing `random`.

#include <cstdint>

#include "metrics/seeded_random.h"

namespace plumb::metrics {

/// The sum of `draws` values data[random.UniformIndex(pool)]. Four partial sums let the
/// additions of consecutive draws overlap; they are added in a fixed order, ((s0 + s1) + (s2 +
/// s3)), so the result is still deterministic. This loop is the whole cost of an index bootstrap
/// (draws * resamples), see tests/bench/drift_stats_bench.cc.
inline double SumOfUniformDraws(const double* data, uint64_t pool, uint64_t draws,
                                SeededRandom& random) {
  double s0 = 0, s1 = 0, s2 = 0, s3 = 0;
  uint64_t i = 0;
  for (; i + 4 <= draws; i += 4) {
    s0 += data[random.UniformIndex(pool)];
    s1 += data[random.UniformIndex(pool)];
    s2 += data[random.UniformIndex(pool)];
    s3 += data[random.UniformIndex(pool)];
  }
  for (; i < draws; ++i) s0 += data[random.UniformIndex(pool)];
  return (s0 + s1) + (s2 + s3);
}

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_RESAMPLE_SUM_H_
