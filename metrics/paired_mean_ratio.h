#ifndef PLUMB_METRICS_PAIRED_MEAN_RATIO_H_
#define PLUMB_METRICS_PAIRED_MEAN_RATIO_H_

/// The ratio of two runs' means over the same cases, with a paired percentile bootstrap interval:
/// `plumb drift` compares cost per case and tokens in and out this way (issue 21). Cases are
/// resampled together, so the interval reflects the change between the runs rather than the
/// spread of case sizes. Seeded and deterministic. Pure function.

#include <cstdint>
#include <vector>

#include "metrics/paired_bootstrap.h"

namespace plumb::metrics {

/// ratio = sum(cand) / sum(base) (the ratio of the means); interval = the definition-7
/// percentiles at 100 * (1 - confidence) / 2 and 100 * (1 - (1 - confidence) / 2) of that ratio
/// over `resamples` resamples, each drawing n case indices with SeededRandom(seed).UniformIndex(n)
/// (the stream PairedBootstrapMeanDelta uses); a resample whose base sum is 0 is left out.
/// Values are amounts (tokens, money): finite and at or above 0. When n == 0, the sizes differ, a
/// value is negative or not finite, or sum(base) is 0, there is no ratio: everything is NaN.
RatioResult PairedBootstrapMeanRatio(const std::vector<double>& base,
                                     const std::vector<double>& cand, int resamples = 10000,
                                     uint64_t seed = 20261201, double confidence = 0.95);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_PAIRED_MEAN_RATIO_H_
