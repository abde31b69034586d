#ifndef PLUMB_METRICS_DETECTABLE_EFFECT_H_
#define PLUMB_METRICS_DETECTABLE_EFFECT_H_

/// The smallest effect a drift comparison could detect at its case count (SPEC §7), so a reader
/// of a "steady" verdict knows how large a change could have gone unnoticed. Pure function.

#include <vector>

namespace plumb::metrics {

/// The minimum detectable mean paired difference for the per-case differences (candidate - base)
/// of one metric, at two-sided level `alpha` with probability `power`, by the normal
/// approximation for a paired comparison (common practice; e.g. the one-sample z-test power
/// formula):
///   MDE = (z_{1 - alpha/2} + z_{power}) * s / sqrt(n),
/// s the sample standard deviation of the n differences (n - 1 in the denominator), z the
/// standard normal quantile (NormalQuantile). At alpha 0.05 and power 0.8 the factor is
/// 1.959964 + 0.841621 = 2.801585.
/// For a 0/1 metric (`binary`: the differences are -1, 0 or 1) s follows from the observed
/// discordance, and the result is raised to at least k / n, k the fewest discordant pairs, all in
/// one direction, for which the exact McNemar test (paired_tests.h) can reach p <= alpha
/// (k = 6 at alpha 0.05: 2 / 2^6 = 0.031): a smaller shift can never be declared, however quiet
/// the pairs are. For a continuous metric with s == 0 the result is 0.
/// n < 2 -> +infinity (no spread can be estimated, nothing can be claimed).
double MinimumDetectableEffect(const std::vector<double>& differences, bool binary,
                               double alpha = 0.05, double power = 0.8);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_DETECTABLE_EFFECT_H_
