#ifndef PLUMB_METRICS_DETECTABLE_EFFECT_H_
#define PLUMB_METRICS_DETECTABLE_EFFECT_H_

/// The smallest drop a drift gate would catch (SPEC §7, "the smallest effect the run could
/// detect"), so a reader of a "steady" verdict knows how large a change could have gone
/// unnoticed. Computed for the gate as configured: the metric's own test at the level the
/// family correction leaves it, and the min_effect floor on the delta, under an alternative in
/// which the candidate really is worse by that much. Pure functions.

#include <cstdint>
#include <vector>

namespace plumb::metrics {

/// Probability that the exact McNemar test (paired_tests.h) at two-sided `level` rejects with
/// more cases lost than gained, and the mean difference (gained - lost) / n is at most
/// -min_effect, when each of n paired cases is independently lost with probability lost_rate,
/// gained with probability gained_rate, and unchanged otherwise (a multinomial). Exact: the sum
/// over the discordant count D ~ Binomial(n, lost_rate + gained_rate) of
/// P(lost >= k(D) | D), lost | D ~ Binomial(D, lost_rate / (lost_rate + gained_rate)), k(D) the
/// fewest lost cases that satisfy both conditions (D within 10 standard deviations of its mean;
/// the rest weighs below 1e-20).
double McNemarPower(int64_t n, double lost_rate, double gained_rate, double level,
                    double min_effect);

/// The smallest drop d in (0, max_drop] with McNemarPower(n, g + d, g, level, min_effect) >=
/// power, g = discordant_rate / 2: the run's observed flips, half each way, stay as noise and the
/// drop adds lost cases on top. To 1e-6 by bisection (the power grows with d). max_drop is the
/// metric's range (the base mean: the candidate cannot fall below 0), and never more than
/// 1 - discordant_rate. NaN when even max_drop does not reach `power`, or n < 1.
double McNemarDetectableDrop(int64_t n, double discordant_rate, double level, double min_effect,
                             double power, double max_drop);

/// For a continuous metric tested with the Wilcoxon signed-rank test, by the normal
/// approximation of a paired location test (common practice; the one-sample z-test power
/// formula), with s the sample standard deviation of the n differences (n - 1 in the
/// denominator) and z the standard normal quantile:
///   d = max(min_effect, z_{1 - level/2} s / sqrt(n)) + z_{power} s / sqrt(n),
/// i.e. the drop whose mean difference lands beyond both the test's critical value and
/// -min_effect with probability `power`. The signed-rank test's efficiency relative to this
/// z-test is 3/pi = 0.955 for normal differences and can be higher or lower (down to 0.864) for
/// others, so the figure is an approximation; tests/bench/gate_simulation.cc measures its power.
/// NaN when n < 2, when every difference is equal (no spread to estimate from, e.g. no paired
/// case changed), or when d exceeds max_drop.
double ShiftDetectableDrop(const std::vector<double>& differences, double level, double min_effect,
                           double power, double max_drop);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_DETECTABLE_EFFECT_H_
