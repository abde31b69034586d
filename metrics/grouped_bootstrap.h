#ifndef PLUMB_METRICS_GROUPED_BOOTSTRAP_H_
#define PLUMB_METRICS_GROUPED_BOOTSTRAP_H_

/// The percentile bootstrap of a mean, drawn by counting instead of by case index, for the
/// run-level intervals of SPEC §6.6 (metric_summary.h): a metric such as token F1 or recall@k
/// takes few distinct values over many cases, and a resample's mean depends only on how often
/// each distinct value is drawn. Pure functions; safe to call from any thread.
///
/// Exactness: drawing n case indices uniformly with replacement makes the counts (c_1..c_d) of
/// the d distinct values Multinomial(n; m_1/n, ..., m_d/n), m_j being the multiplicity of value
/// v_j, and the resample mean is sum_j c_j v_j / n. The multinomial is drawn by its chain of
/// conditional binomials, c_j ~ Binomial(n - c_1 - ... - c_{j-1}, m_j / (m_j + ... + m_d)), each
/// by SampleBinomial (binomial_sampler.h). Conditional on how many draws fall on the cases of
/// the values after the first J, those draws are uniform over these cases, so the chain may stop
/// at any J and draw case indices among the remaining cases instead. Every such plan gives resample
/// means with exactly the distribution of index resampling; only the draws from the stream differ.
///
/// The plan, a deterministic function of the values alone (not of the seed or resamples):
/// distinct values are ordered by descending multiplicity, ties by ascending value (-0 counts as
/// +0). With M_j = m_j + ... + m_d (the expected number of trials of c_j), drawing c_j is charged
/// kBinomialDrawCost + kBinomialSdCost * sqrt(m_j (M_j - m_j) / M_j) (the inversion walk grows
/// with the binomial's standard deviation) and each index draw 1, in units of one index draw.
/// Plan J draws the first J counts, then (on average M_{J+1}) indices among the cases of the
/// rest, or none when only v_d is left (it takes the remainder, J = d - 1). Index resampling of
/// all n cases costs n. The cheapest plan wins, the smallest J among equals, and index
/// resampling on a tie: then the interval is exactly PercentileBootstrapMean's, as for
/// continuous values (d near n), whose every binomial would cover about one case.

#include <cstddef>
#include <cstdint>
#include <vector>

#include "metrics/binomial_sampler.h"
#include "metrics/interval.h"
#include "metrics/seeded_random.h"

namespace plumb::metrics {

/// Cost of one SampleBinomial call and of one standard deviation of its walk, in index draws;
/// measured by tests/bench/metric_summary_bench.cc.
inline constexpr double kBinomialDrawCost = 16;
inline constexpr double kBinomialSdCost = 1;

struct GroupedBootstrapPlan {
  /// True: PercentileBootstrapMean's own index draws (the rest below is then 0).
  bool index_resampling = true;
  size_t distinct_values = 0;
  /// J: how many distinct values, in plan order, have their counts drawn as binomials.
  size_t binomial_values = 0;
  /// How many cases the index draws after the chain pick among (0 when the last value takes
  /// the remainder).
  size_t tail_cases = 0;
};

/// The plan GroupedBootstrapMean follows for `values` (documented above). For samples that
/// GroupedBootstrapMean answers without resampling (n < 2, a value not finite) it is index
/// resampling with all counts 0.
GroupedBootstrapPlan PlanGroupedBootstrap(const std::vector<double>& values);

/// Percentile bootstrap interval of the mean of `values`, same definition and edge cases as
/// PercentileBootstrapMean (interval.h): `resamples` resample means, sorted, and their
/// definition-7 percentiles at 100 * (1 - confidence) / 2 and 100 * (1 - (1 - confidence) / 2);
/// n == 0 -> {0, 0}; n == 1 -> {v, v}; any value not finite -> {NaN, NaN}; resamples < 1 ->
/// {mean, mean}. Resample after resample, the stream SeededRandom(seed) feeds the plan's
/// binomial counts in plan order, then its index draws (UniformIndex over the tail cases laid
/// out in plan order, each value repeated m_j times). A resample's mean is
/// (((c_1 v_1 + c_2 v_2) + ...) + c_J v_J + tail) / n, the tail being the remainder times v_d or
/// the sum of the drawn values in four interleaved partial sums, ((s0 + s1) + (s2 + s3)).
/// Equal input gives an equal interval wherever std::log, std::log1p and std::exp agree.
Interval GroupedBootstrapMean(const std::vector<double>& values, int resamples = 2000,
                              uint64_t seed = 20261201, double confidence = 0.95);

/// The sum of `draws` values drawn uniformly with replacement from a fixed sample, drawn the
/// grouped way: the plan PlanGroupedBootstrap gives for the sample (chosen for draws equal to its
/// size), its binomial chain started from `draws` trials instead of n. By the argument above the
/// sum has exactly the distribution of `draws` index draws, whatever `draws` is. The drift
/// report's paired bootstrap (runner/compare/drift.h) uses it for a statistic over a case subset,
/// whose number of draws in a resample is itself random. Immutable after construction; Sum is
/// safe from several threads, each with its own SeededRandom.
class GroupedSum {
 public:
  /// `values` must be finite and not empty.
  explicit GroupedSum(const std::vector<double>& values);

  /// The sum: the plan's binomial counts (SampleBinomial over `tables`, which must cover
  /// `draws` trials) in plan order, each count times its value added to a sum that starts at 0,
  /// then the tail (the remainder times the last value, or SumOfUniformDraws over the tail cases
  /// laid out in plan order); with an index-resampling plan SumOfUniformDraws over `values` in
  /// their given order. For draws == values.size() this is, draw for draw, the resample sum of
  /// GroupedBootstrapMean (or PercentileBootstrapMean for an index plan).
  double Sum(uint64_t draws, SeededRandom& random, const BinomialTables& tables) const;

  const GroupedBootstrapPlan& plan() const { return plan_; }

 private:
  GroupedBootstrapPlan plan_;
  std::vector<double> values_;  // index plan: the values; else the distinct values in plan order
  std::vector<BinomialOdds> odds_;
  std::vector<double> tail_;
};

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_GROUPED_BOOTSTRAP_H_
