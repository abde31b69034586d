#include "metrics/binomial_distribution.h"

#include <algorithm>
#include <cmath>

namespace plumb::metrics {
namespace {

constexpr double kLogSqrt2Pi = 0.918938533204672741780;  // log(sqrt(2 pi))
constexpr double kTwoPi = 6.283185307179586476925;

// Loader's method: the binomial probability as a saddle-point expansion whose two pieces, the
// Stirling-series error and the deviance bd0, are each computed without cancellation.

// log(n!) - log(sqrt(2 pi n) (n / e)^n) for an integer n >= 1.
double StirlingError(double n) {
  if (n <= 15) return std::lgamma(n + 1) - (n + 0.5) * std::log(n) + n - kLogSqrt2Pi;
  // The Stirling series 1/(12n) - 1/(360n^3) + 1/(1260n^5) - 1/(1680n^7) + 1/(1188n^9): its
  // coefficients are B_2k / (2k (2k - 1)); the next term is below 2e-16 / n^2 for n > 15.
  const double nn = n * n;
  return (1.0 / 12 - (1.0 / 360 - (1.0 / 1260 - (1.0 / 1680 - 1.0 / 1188 / nn) / nn) / nn) / nn) /
         n;
}

// The deviance term x log(x / np) + np - x, by its series in v = (x - np) / (x + np) unless x is
// far from np. Loader switches to the direct formula at |v| = 0.1; there it still cancels about
// three bits (x = 0.77 np), which deep McNemar tails (p near 1e-230) showed against a 45-digit
// reference, so the series, whose terms shrink by v^2 <= 1/4, is used up to |v| = 1/2.
double Deviance(double x, double np) {
  if (std::fabs(x - np) < 0.5 * (x + np)) {
    double v = (x - np) / (x + np);
    double sum = (x - np) * v;
    double term = 2 * x * v;
    v *= v;
    for (int j = 1; j < 1000; ++j) {
      term *= v;
      const double next = sum + term / (2 * j + 1);
      if (next == sum) return next;
      sum = next;
    }
    return sum;
  }
  return x * std::log(x / np) + np - x;
}

}  // namespace

double BinomialProbability(int64_t x, int64_t n, double p) {
  if (x < 0 || x > n) return 0;
  const double q = 1 - p;
  if (p == 0) return x == 0 ? 1 : 0;
  if (q == 0) return x == n ? 1 : 0;
  if (x == 0 || x == n) {
    if (p == 0.5) return std::ldexp(1.0, -static_cast<int>(std::min<int64_t>(n, 2000)));
    return std::exp(static_cast<double>(n) * std::log1p(x == 0 ? -p : -q));
  }
  const double xd = static_cast<double>(x), nd = static_cast<double>(n);
  const double exponent = StirlingError(nd) - StirlingError(xd) - StirlingError(nd - xd) -
                          Deviance(xd, nd * p) - Deviance(nd - xd, nd * q);
  return std::exp(exponent) * std::sqrt(nd / (kTwoPi * xd * (nd - xd)));
}

double BinomialUpperTail(int64_t k, int64_t n, double p) {
  if (k <= 0) return 1;
  if (k > n) return 0;
  const double odds = p / (1 - p);
  if (static_cast<double>(k) >= static_cast<double>(n) * p) {
    double term = BinomialProbability(k, n, p);
    double sum = term;
    for (int64_t x = k; x < n && term > sum * 1e-17; ++x) {
      term *= odds * static_cast<double>(n - x) / static_cast<double>(x + 1);
      sum += term;
    }
    return std::min(1.0, sum);
  }
  // Below the mean: 1 - P(X <= k - 1), the lower tail summed downwards.
  double term = BinomialProbability(k - 1, n, p);
  double sum = term;
  for (int64_t x = k - 1; x > 0 && term > sum * 1e-17; --x) {
    term *= static_cast<double>(x) / (odds * static_cast<double>(n - x + 1));
    sum += term;
  }
  return std::max(0.0, 1 - sum);
}

}  // namespace plumb::metrics
