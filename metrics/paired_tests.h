#ifndef PLUMB_METRICS_PAIRED_TESTS_H_
#define PLUMB_METRICS_PAIRED_TESTS_H_

/// Significance tests for `plumb drift` (SPEC §7), over cases paired by id between a base and a
/// candidate run: exact McNemar for 0/1 metrics, the Wilcoxon signed-rank test for continuous
/// ones, and Holm's step-down adjustment for the per-tag p-values. Pure functions.

#include <cstddef>
#include <cstdint>
#include <vector>

namespace plumb::metrics {

/// The fewest paired cases that can give a two-sided p <= alpha in either test here: with n
/// cases the smallest attainable p of exact McNemar and of the exact signed-rank test alike is
/// 2 / 2^n (every case changed, all in one direction), so 6 at alpha 0.05 (2 / 64 = 0.031).
int64_t FewestPairsForSignificance(double alpha);

/// Exact McNemar test, two-sided: the binomial test of the discordant pairs, b (base pass,
/// candidate fail) against c (base fail, candidate pass), with p = 1/2:
///   p = min(1, 2 * BinomCDF(min(b, c); b + c, 1/2)),  b + c == 0 -> 1.
/// Agrees with statsmodels.stats.contingency_tables.mcnemar(table, exact=True).pvalue to 1e-12
/// relative up to b + c = 10^6, and with a 45-digit binomial sum to 1e-13 (1e-12 for p below
/// 1e-100) up to b + c = 10^8. NaN when b or c is negative.
double McNemarExactP(int64_t b, int64_t c);

/// The most non-zero differences for which WilcoxonSignedRankP is exact.
inline constexpr size_t kWilcoxonExactMax = 50;

/// Wilcoxon signed-rank test, two-sided, on paired differences (candidate - base); NaN entries
/// (a metric undefined on one side) are ignored. Zero differences are dropped (scipy's
/// zero_method="wilcox", its default) and tied |d| share their average rank. With at most
/// kWilcoxonExactMax non-zero differences the p-value is exact: the permutation distribution of
/// the signed ranks (every sign pattern of the non-zero differences equally likely), ties and all,
///   p = min(1, 2 * min(P(R+ <= r), P(R+ >= r))),
/// which is scipy.stats.wilcoxon(d).pvalue (scipy 1.10.1, Debian 12) when there are no ties and
/// no zeros, and scipy.stats.permutation_test((d,), R+, permutation_type="samples") in every case
/// (tests/reference/statistics_reference.py checks both). scipy's own default departs with ties
/// (it reads the no-ties table at a truncated rank sum, and says the result is then not exact)
/// and with zeros (it switches to the normal approximation): k identical differences get
/// 2 / 2^k here (0.5, 0.25, 0.125, 0.0625, 0.03125 for k = 2..6), where a normal approximation
/// gives 0.157, 0.083, 0.046, 0.025, 0.014. Above kWilcoxonExactMax: the normal approximation of
/// the rank sum with the tie correction of the variance and no continuity correction
/// (scipy.stats.wilcoxon(d, method="approx")). No differences, or all zero -> 1 (scipy raises).
double WilcoxonSignedRankP(const std::vector<double>& differences);

/// Holm-Bonferroni step-down adjusted p-values, in input order: with the m p-values sorted
/// ascending, the k-th (from 0) becomes max over j <= k of min(1, (m - j) * p_(j)). Equals
/// statsmodels.stats.multitest.multipletests(p, method="holm")[1]. Inputs lie in [0, 1]; a NaN
/// (a test that could not be run) counts as 1.
std::vector<double> HolmAdjust(const std::vector<double>& p_values);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_PAIRED_TESTS_H_
