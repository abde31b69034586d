#ifndef PLUMB_METRICS_PAIRED_TESTS_H_
#define PLUMB_METRICS_PAIRED_TESTS_H_

/// Significance tests for `plumb drift` (SPEC §7), over cases paired by id between a base and a
/// candidate run: exact McNemar for 0/1 metrics, the Wilcoxon signed-rank test for continuous
/// ones, and Holm's step-down adjustment for the per-tag p-values. Pure functions.

#include <cstdint>
#include <vector>

namespace plumb::metrics {

/// Exact McNemar test, two-sided: the binomial test of the discordant pairs, b (base pass,
/// candidate fail) against c (base fail, candidate pass), with p = 1/2:
///   p = min(1, 2 * BinomCDF(min(b, c); b + c, 1/2)),  b + c == 0 -> 1.
/// Agrees with statsmodels.stats.contingency_tables.mcnemar(table, exact=True).pvalue to 1e-12
/// relative up to b + c = 10^6, and with a 45-digit binomial sum to 1e-13 (1e-12 for p below
/// 1e-100) up to b + c = 10^8. NaN when b or c is negative.
double McNemarExactP(int64_t b, int64_t c);

/// Wilcoxon signed-rank test, two-sided, on paired differences (candidate - base); NaN entries
/// (a metric undefined on one side) are ignored. Follows scipy.stats.wilcoxon(d) with its defaults
/// as of scipy 1.10.1 (Debian 12): zero differences are dropped (zero_method="wilcox"), |d| ties
/// share their average rank, no continuity correction. The p-value is exact (the null distribution
/// of the positive rank sum) when there are at most 50 differences, none zero and no tied |d|;
/// otherwise it is the normal approximation of the rank sum with the tie correction of the
/// variance. One deliberate departure: with tied |d| but no zeros and n <= 50, scipy 1.10.1
/// truncates the (half-integer) rank sum and reads the no-ties exact table, which is not a valid
/// exact p-value (its documentation says so); here that case takes the normal approximation, i.e.
/// agrees with scipy.stats.wilcoxon(d, method="approx"). No differences, or all zero -> 1 (scipy
/// raises).
double WilcoxonSignedRankP(const std::vector<double>& differences);

/// Holm-Bonferroni step-down adjusted p-values, in input order: with the m p-values sorted
/// ascending, the k-th (from 0) becomes max over j <= k of min(1, (m - j) * p_(j)). Equals
/// statsmodels.stats.multitest.multipletests(p, method="holm")[1]. Inputs lie in [0, 1]; a NaN
/// (a test that could not be run) counts as 1.
std::vector<double> HolmAdjust(const std::vector<double>& p_values);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_PAIRED_TESTS_H_
