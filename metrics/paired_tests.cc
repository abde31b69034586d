#include "metrics/paired_tests.h"

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <limits>
#include <numeric>

#include "metrics/binomial_distribution.h"

namespace plumb::metrics {
namespace {

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
  double term = BinomialProbability(k, n, 0.5);
  double sum = term;
  for (int64_t i = k; i >= 1 && term > sum * 1e-18; --i) {
    term *= static_cast<double>(i) / static_cast<double>(n - i + 1);
    sum += term;
  }
  return sum;
}

}  // namespace

int64_t FewestPairsForSignificance(double alpha) {
  int64_t n = 1;
  while (n < 1100 && std::ldexp(1.0, static_cast<int>(1 - n)) > alpha) ++n;
  return n;
}

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
  if (n <= kWilcoxonExactMax) {
    // Exact: under the null each non-zero difference is as likely positive as negative, so R+ is
    // the sum of a random subset of the (average) ranks. Doubled, every average rank is an
    // integer (start + end + 1), and the number of sign patterns giving each doubled sum follows
    // from the subset-sum recurrence; every count is below 2^50, so the counts and the tails are
    // exact in uint64 and each probability count / 2^n is exact in double. Without ties this is
    // the classic table scipy reads; with ties and zeros it is the permutation distribution of
    // the signed ranks (Pratt and Gibbons' conditional test; scipy.stats.permutation_test with
    // permutation_type="samples" enumerates the same 2^n sign patterns).
    std::vector<size_t> doubled(n);
    size_t max_sum = 0;
    for (size_t start = 0; start < n;) {
      size_t end = start + 1;
      while (end < n && std::fabs(nonzero[order[end]]) == std::fabs(nonzero[order[start]])) ++end;
      for (size_t i = start; i < end; ++i) doubled[i] = start + end + 1;
      max_sum += (end - start) * (start + end + 1);
      start = end;
    }
    std::vector<uint64_t> ways(max_sum + 1, 0);
    ways[0] = 1;
    size_t reached = 0;
    for (size_t r : doubled) {
      reached += r;
      for (size_t s = reached; s >= r; --s) ways[s] += ways[s - r];
    }
    const size_t r_plus = static_cast<size_t>(std::llround(2 * rank_sum_positive));
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
