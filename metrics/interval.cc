#include "metrics/interval.h"

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <limits>

#include "metrics/percentile.h"
#include "metrics/resample_sum.h"
#include "metrics/seeded_random.h"

namespace plumb::metrics {
namespace {

// Acklam's coefficients, as printed in his description of the algorithm and as transcribed in
// Debian's python3-statsmodels (statsmodels/stats/libqsturng/qsturng_.py, function _ltqnorm).
constexpr double kA[] = {-3.969683028665376e+01, 2.209460984245205e+02,  -2.759285104469687e+02,
                         1.383577518672690e+02,  -3.066479806614716e+01, 2.506628277459239e+00};
constexpr double kB[] = {-5.447609879822406e+01, 1.615858368580409e+02, -1.556989798598866e+02,
                         6.680131188771972e+01, -1.328068155288572e+01};
constexpr double kC[] = {-7.784894002430293e-03, -3.223964580411365e-01, -2.400758277161838e+00,
                         -2.549732539343734e+00, 4.374664141464968e+00,  2.938163982698783e+00};
constexpr double kD[] = {7.784695709041462e-03, 3.224671290700398e-01, 2.445134137142996e+00,
                         3.754408661907416e+00};
constexpr double kAcklamLowBreak = 0.02425;
constexpr double kSqrt2 = 1.41421356237309504880;
constexpr double kSqrt2Pi = 2.50662827463100050242;

// The quantile for p in (0, 0.5]; the upper half follows by symmetry, because 1 - p is exact in
// double for p >= 0.5 while p itself carries no information below 2^-53 near 1.
double LowerHalfQuantile(double p) {
  double x;
  if (p < kAcklamLowBreak) {
    const double q = std::sqrt(-2 * std::log(p));
    x = (((((kC[0] * q + kC[1]) * q + kC[2]) * q + kC[3]) * q + kC[4]) * q + kC[5]) /
        ((((kD[0] * q + kD[1]) * q + kD[2]) * q + kD[3]) * q + 1);
  } else {
    const double q = p - 0.5;
    const double r = q * q;
    x = (((((kA[0] * r + kA[1]) * r + kA[2]) * r + kA[3]) * r + kA[4]) * r + kA[5]) * q /
        (((((kB[0] * r + kB[1]) * r + kB[2]) * r + kB[3]) * r + kB[4]) * r + 1);
  }
  // One Halley step (Acklam's suggested refinement) triples the correct digits. The residual
  // Phi(x) - p loses nothing to cancellation: near the centre it is formed as erf(..)/2 - (p - 0.5)
  // with p - 0.5 exact, in the tail from erfc, which keeps full relative precision there.
  const double residual =
      p > 0.25 ? 0.5 * std::erf(x / kSqrt2) - (p - 0.5) : 0.5 * std::erfc(-x / kSqrt2) - p;
  const double u = residual * kSqrt2Pi * std::exp(x * x / 2);
  return x - u / (1 + x * u / 2);
}

}  // namespace

double NormalQuantile(double p) {
  if (std::isnan(p) || p < 0 || p > 1) return std::numeric_limits<double>::quiet_NaN();
  if (p == 0) return -std::numeric_limits<double>::infinity();
  if (p == 1) return std::numeric_limits<double>::infinity();
  if (p > 0.5) return -LowerHalfQuantile(1 - p);
  return LowerHalfQuantile(p);
}

Interval WilsonInterval(int64_t successes, int64_t n, double confidence) {
  if (n <= 0) return {0, 1};
  successes = std::clamp<int64_t>(successes, 0, n);
  const double z = NormalQuantile(1 - (1 - confidence) / 2);
  const double nobs = static_cast<double>(n);
  const double q = static_cast<double>(successes) / nobs;
  // Same operation order as statsmodels' proportion_confint(method="wilson").
  const double z2 = z * z;
  const double denominator = 1 + z2 / nobs;
  const double center = (q + z2 / (2 * nobs)) / denominator;
  const double half_width =
      z * std::sqrt(q * (1. - q) / nobs + z2 / (4 * nobs * nobs)) / denominator;
  // The bounds of a proportion; clamping only removes rounding residue (about 1e-17) at q = 0, 1.
  return {std::max(0.0, center - half_width), std::min(1.0, center + half_width)};
}

Interval PercentileBootstrapMean(const std::vector<double>& values, int resamples, uint64_t seed,
                                 double confidence) {
  const size_t n = values.size();
  if (n == 0) return {0, 0};
  if (n == 1) return {values[0], values[0]};
  double total = 0;
  for (double v : values) {
    // A non-finite value would make every resample mean NaN or infinite, and NaN cannot be sorted.
    if (!std::isfinite(v)) return {std::nan(""), std::nan("")};
    total += v;
  }
  const double mean = total / static_cast<double>(n);
  if (resamples < 1) return {mean, mean};

  SeededRandom random(seed);
  const double* data = values.data();
  std::vector<double> means(static_cast<size_t>(resamples));
  for (double& resample_mean : means) {
    resample_mean = SumOfUniformDraws(data, n, n, random) / static_cast<double>(n);
  }
  std::sort(means.begin(), means.end());
  const double tail = (1 - confidence) / 2;
  return {PercentileSorted(means, 100 * tail), PercentileSorted(means, 100 * (1 - tail))};
}

}  // namespace plumb::metrics
