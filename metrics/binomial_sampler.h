#ifndef PLUMB_METRICS_BINOMIAL_SAMPLER_H_
#define PLUMB_METRICS_BINOMIAL_SAMPLER_H_

/// Exact draws from a binomial distribution on the SeededRandom stream, for the grouped bootstrap
/// (grouped_bootstrap.h), which draws how often each distinct value lands in a resample instead
/// of drawing every case index. Pure functions over plain values; safe from any thread as long
/// as each thread has its own SeededRandom.

#include <cstdint>
#include <vector>

#include "metrics/seeded_random.h"

namespace plumb::metrics {

/// ln k!, exactly as SampleBinomial uses it: for k < 32 the logarithm of the double product
/// 1 * 2 * ... * k (exact up to 22!), from 32 on the Stirling series through its k^-5 term
/// (Abramowitz and Stegun 6.1.40), whose truncation error there is below 1 / (1680 k^7) < 2e-14.
/// Computed with std::log only, so the values are the same wherever the C library's log is.
double LogFactorial(uint64_t k);

/// The tables SampleBinomial reads, for any number of trials up to max_trials: LogFactorial(k)
/// and 1.0 / k for k = 0..max_trials. Built once for many draws (O(max_trials) logarithms).
struct BinomialTables {
  explicit BinomialTables(uint64_t max_trials);
  std::vector<double> log_factorial;
  std::vector<double> reciprocal;
};

/// The constants of Binomial(., p) that SampleBinomial needs, computed once per p:
/// log p, log1p(-p), the odds p / (1 - p) and their inverse. p must lie in [0, 1].
struct BinomialOdds {
  explicit BinomialOdds(double p);
  double p;
  double log_p;
  double log_q;
  double odds;
  double inverse_odds;
};

/// One draw from Binomial(n, p) by inversion, walking the support in a fixed order: the mode
/// m = min(n, floor((n + 1) p)) first, then m + 1, m - 1, m + 2, m - 2, ... while both sides have
/// room, then the rest of the longer side. The pmf at the mode is exp(ln n! - ln m! - ln (n - m)!
/// + m log p + (n - m) log1p(-p)), the others follow by the ratios pmf(k + 1) = pmf(k) *
/// ((n - k) * (1 / (k + 1)) * odds) and pmf(k - 1) = pmf(k) * (k * (1 / (n - k + 1)) *
/// inverse_odds), tables and constants as above. One uniform u = (random.Next() >> 11) * 2^-53
/// below pmf(m) gives m; otherwise w = u - pmf(m) is compared, once per round of one step up and
/// one down, with mass_up + mass_down, the pmf summed so far above and below the mode (each side
/// its own running sum). The first round where w falls below gives its up value if w is also
/// below mass_up + (mass_down before the round's down step), else its down value; once one side
/// is done, each step of the other is compared alike. Should w exceed the whole computed mass
/// (rounding leaves that about 1e-16 * ln n! below 1), the next u is tried, so the draw follows
/// the computed pmf renormalised: exact up to that pmf's rounding (relative, about
/// 1e-16 * ln n!).
/// Expected cost 1 + 1.6 sqrt(n p (1 - p)) pmf steps; consumes one Next() per try.
/// n == 0, p == 0 (or NaN) and p == 1 return 0, 0 and n without consuming anything.
/// Requires n <= the tables' max_trials and n < 2^53.
uint64_t SampleBinomial(SeededRandom& random, uint64_t n, const BinomialOdds& p,
                        const BinomialTables& tables);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_BINOMIAL_SAMPLER_H_
