#ifndef PLUMB_METRICS_INTERVAL_H_
#define PLUMB_METRICS_INTERVAL_H_

/// Two-sided interval estimates for the run-level aggregates of SPEC §6.6: the Wilson score
/// interval for 0/1 metrics, the seeded percentile bootstrap of the mean for the others, and the
/// standard normal quantile both rest on. Pure functions; safe to call from any thread.

#include <cstdint>
#include <vector>

namespace plumb::metrics {

struct Interval {
  double low = 0;
  double high = 0;
};

/// The standard normal quantile: x with Phi(x) = p. -inf at p = 0, +inf at p = 1, NaN outside
/// [0, 1]. Acklam's rational approximation (relative error below 1.15e-9), polished by one Halley
/// step on the residual computed with std::erf / std::erfc, agrees with scipy.special.ndtri to a
/// few units in the last place (exactly at p = 0.975).
double NormalQuantile(double p);

/// Wilson score interval for `successes` of `n` at `confidence` (two-sided), with
/// z = NormalQuantile(1 - (1 - confidence) / 2); the arithmetic follows statsmodels'
/// proportion_confint(method="wilson"). n <= 0 -> {0, 1} (nothing observed, nothing excluded).
/// successes is clamped to [0, n]; confidence must lie in (0, 1).
Interval WilsonInterval(int64_t successes, int64_t n, double confidence = 0.95);

/// Percentile bootstrap interval of the mean of `values`: `resamples`
/// resamples of size n drawn with replacement, resample after resample, each index taken by
/// SeededRandom(seed).UniformIndex(n); the interval is the definition-7 percentiles
/// (percentile.h) of the resampled means at 100 * (1 - confidence) / 2 and
/// 100 * (1 - (1 - confidence) / 2). Equal input gives an equal interval on every platform.
/// n == 0 -> {0, 0}; n == 1 -> {v, v}; resamples < 1 -> {mean, mean}; any value not finite
/// -> {NaN, NaN}.
Interval PercentileBootstrapMean(const std::vector<double>& values, int resamples = 2000,
                                 uint64_t seed = 20261201, double confidence = 0.95);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_INTERVAL_H_
