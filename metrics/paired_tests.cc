#include "metrics/paired_tests.h"

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <limits>
#include <numeric>

namespace plumb::metrics {
namespace {

constexpr double kLogSqrt2Pi = 0.918938533204672741780;  // log(sqrt(2 pi))
constexpr double kTwoPi = 6.283185307179586476925;

// Catherine Loader, "Fast and Accurate Computation of Binomial Probabilities" (2000), the method
// behind R's dbinom: the binomial probability as a saddle-point expansion whose two pieces, the
// Stirling-series error and the deviance bd0, are each computed without cancellation, so a
// probability keeps full relative precision even for millions of trials.

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

// P(X = x) for X ~ Binomial(n, 1/2), 0 <= x <= n.
double BinomialHalfProbability(int64_t x, int64_t n) {
  // 2^-n; past 2^-1074 it is 0 in double, so the exponent is capped to stay in int range.
  if (x == 0 || x == n) return std::ldexp(1.0, -static_cast<int>(std::min<int64_t>(n, 2000)));
  const double xd = static_cast<double>(x), nd = static_cast<double>(n);
  const double exponent = StirlingError(nd) - StirlingError(xd) - StirlingError(nd - xd) -
                          Deviance(xd, nd / 2) - Deviance(nd - xd, nd / 2);
  return std::exp(exponent) * std::sqrt(nd / (kTwoPi * xd * (nd - xd)));
}

// P(X <= k) for X ~ Binomial(n, 1/2), for 0 <= k < n / 2. Up to 60 trials the binomial
// coefficients and their sum are exact integers (below 2^60), so the tail is correctly rounded.
// Beyond, from P(X = k) down by the ratio P(X = i - 1) / P(X = i) = i / (n - i + 1), until the
// terms no longer change the sum.
double BinomialHalfLowerTail(int64_t k, int64_t n) {
  if (n <= 60) {
    uint64_t coefficient = 1;  // C(n, i); C(n, i) * (n - i) stays below 2^63 for n <= 60
    uint64_t sum = 1;
    for (int64_t i = 0; i < k; ++i) {
      coefficient = coefficient * static_cast<uint64_t>(n - i) / static_cast<uint64_t>(i + 1);
      sum += coefficient;
    }
    return std::ldexp(static_cast<double>(sum), -static_cast<int>(n));
  }
  double term = BinomialHalfProbability(k, n);
  double sum = term;
  for (int64_t i = k; i >= 1 && term > sum * 1e-18; --i) {
    term *= static_cast<double>(i) / static_cast<double>(n - i + 1);
    sum += term;
  }
  return sum;
}

}  // namespace

double McNemarExactP(int64_t b, int64_t c) {
  if (b < 0 || c < 0) return std::numeric_limits<double>::quiet_NaN();
  const int64_t n = b + c;
  const int64_t k = std::min(b, c);
  // With k >= n / 2 the lower tail is at least 1/2, so the doubled tail is capped at 1; this also
  // covers n == 0.
  if (2 * k >= n) return 1;
  return std::min(1.0, 2 * BinomialHalfLowerTail(k, n));
}

double WilcoxonSignedRankP(const std::vector<double>& differences) {
  std::vector<double> nonzero;
  nonzero.reserve(differences.size());
  for (double d : differences) {
    if (d != 0 && !std::isnan(d)) nonzero.push_back(d);
  }
  const size_t n = nonzero.size();
  if (n == 0) return 1;
  const bool had_zeros = std::count(differences.begin(), differences.end(), 0.0) > 0;

  // Average ranks of |d| (scipy.stats.rankdata's default "average").
  std::vector<size_t> order(n);
  std::iota(order.begin(), order.end(), 0);
  std::sort(order.begin(), order.end(),
            [&](size_t a, size_t b) { return std::fabs(nonzero[a]) < std::fabs(nonzero[b]); });
  double rank_sum_positive = 0;
  double rank_sum_negative = 0;
  double tie_term = 0;  // sum over groups of tied |d| of t^3 - t
  for (size_t start = 0; start < n;) {
    size_t end = start + 1;
    while (end < n && std::fabs(nonzero[order[end]]) == std::fabs(nonzero[order[start]])) ++end;
    const double t = static_cast<double>(end - start);
    const double average_rank = (static_cast<double>(start + 1) + static_cast<double>(end)) / 2;
    for (size_t i = start; i < end; ++i) {
      (nonzero[order[i]] > 0 ? rank_sum_positive : rank_sum_negative) += average_rank;
    }
    tie_term += t * t * t - t;
    start = end;
  }

  const double count = static_cast<double>(n);
  if (n <= 50 && !had_zeros && tie_term == 0) {
    // Exact: the number of subsets of {1..n} with each rank sum, by the usual counting
    // recurrence; every count is below 2^50, so it and every tail sum are exact in uint64 and the
    // probability count / 2^n is exact in double (scipy's table is the same dyadic fractions).
    const size_t max_sum = n * (n + 1) / 2;
    std::vector<uint64_t> ways(max_sum + 1, 0);
    ways[0] = 1;
    for (size_t rank = 1; rank <= n; ++rank) {
      for (size_t s = rank * (rank + 1) / 2; s >= rank; --s) ways[s] += ways[s - rank];
    }
    const size_t r_plus = static_cast<size_t>(rank_sum_positive);
    if (r_plus == max_sum / 2) return 1;  // the centre of the distribution, as scipy has it
    uint64_t lower = 0, upper = 0;
    for (size_t s = 0; s <= r_plus; ++s) lower += ways[s];
    for (size_t s = r_plus; s <= max_sum; ++s) upper += ways[s];
    const double tail =
        std::ldexp(static_cast<double>(std::min(lower, upper)), -static_cast<int>(n));
    return std::min(1.0, 2 * tail);
  }

  // Normal approximation of T = min(R+, R-): mean n(n+1)/4, variance (n(n+1)(2n+1) - sum(t^3 -
  // t)/2) / 24, no continuity correction (scipy's default correction=False).
  const double statistic = std::min(rank_sum_positive, rank_sum_negative);
  const double mean = count * (count + 1) * 0.25;
  const double sd = std::sqrt((count * (count + 1) * (2 * count + 1) - 0.5 * tie_term) / 24);
  const double z = (statistic - mean) / sd;
  // 2 * P(Z > |z|) = erfc(|z| / sqrt 2).
  return std::min(1.0, std::erfc(std::fabs(z) / std::sqrt(2.0)));
}

std::vector<double> HolmAdjust(const std::vector<double>& p_values) {
  const size_t m = p_values.size();
  std::vector<size_t> order(m);
  std::iota(order.begin(), order.end(), 0);
  // NaN sorts last, so the ordering stays strict and weak.
  std::stable_sort(order.begin(), order.end(), [&](size_t a, size_t b) {
    return p_values[a] < p_values[b] || (!std::isnan(p_values[a]) && std::isnan(p_values[b]));
  });
  std::vector<double> adjusted(m);
  double running_max = 0;
  for (size_t k = 0; k < m; ++k) {
    const double p = p_values[order[k]];
    const double scaled = std::isnan(p) ? 1.0 : std::min(1.0, static_cast<double>(m - k) * p);
    running_max = std::max(running_max, scaled);
    adjusted[order[k]] = running_max;
  }
  return adjusted;
}

}  // namespace plumb::metrics
