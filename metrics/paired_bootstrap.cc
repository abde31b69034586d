#include "metrics/paired_bootstrap.h"

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <limits>
#include <numeric>

#include "metrics/percentile.h"
#include "metrics/seeded_random.h"

namespace plumb::metrics {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// The values of a data set sorted ascending, and for each case the position of its value in that
// order: a resample is then a count per position, and its order statistics are read off the
// running count without sorting the resample.
struct RankedValues {
  std::vector<double> sorted;
  std::vector<uint32_t> position_of_case;
};

RankedValues Rank(const std::vector<double>& values) {
  const size_t n = values.size();
  std::vector<uint32_t> order(n);
  std::iota(order.begin(), order.end(), 0);
  std::sort(order.begin(), order.end(),
            [&](uint32_t a, uint32_t b) { return values[a] < values[b]; });
  RankedValues ranked;
  ranked.sorted.resize(n);
  ranked.position_of_case.resize(n);
  for (size_t k = 0; k < n; ++k) {
    ranked.sorted[k] = values[order[k]];
    ranked.position_of_case[order[k]] = static_cast<uint32_t>(k);
  }
  return ranked;
}

// The definition-7 percentile of the resample whose multiplicity of sorted[k] is count[k] (the
// counts sum to n): the same value as PercentileSorted over the sorted resample.
double ResamplePercentile(const std::vector<double>& sorted, const std::vector<uint32_t>& count,
                          const PercentileRank& rank) {
  const size_t n = sorted.size();
  const size_t want_above = std::min(rank.lower + 1, n - 1);
  double below = 0, above = 0;
  if (rank.lower < n / 2) {
    // Walk up from the smallest value: order statistic j is the first k whose running count
    // exceeds j.
    size_t seen = 0, k = 0;
    while (seen + count[k] <= rank.lower) seen += count[k++];
    below = sorted[k];
    while (seen + count[k] <= want_above) seen += count[k++];
    above = sorted[k];
  } else {
    // Walk down from the largest value; order statistic j is n - 1 - j from the top.
    size_t seen = 0, k = n - 1;
    while (seen + count[k] <= n - 1 - want_above) seen += count[k--];
    above = sorted[k];
    while (seen + count[k] <= n - 1 - rank.lower) seen += count[k--];
    below = sorted[k];
  }
  if (rank.lower + 1 >= n) return below;
  return InterpolateBetween(below, above, rank.gamma);
}

}  // namespace

PairedBootstrapResult PairedBootstrapMeanDelta(const std::vector<double>& base,
                                               const std::vector<double>& cand, int resamples,
                                               uint64_t seed, double confidence) {
  if (base.size() != cand.size()) return {kNaN, {kNaN, kNaN}};
  // The differences are formed once; each resample is then a sum of n gathered doubles.
  std::vector<double> differences(base.size());
  double total = 0;
  for (size_t i = 0; i < base.size(); ++i) {
    differences[i] = cand[i] - base[i];
    total += differences[i];
  }
  PairedBootstrapResult result;
  if (differences.empty()) return result;
  result.delta = total / static_cast<double>(differences.size());
  result.interval = PercentileBootstrapMean(differences, resamples, seed, confidence);
  return result;
}

RatioResult PairedBootstrapQuantileRatio(const std::vector<double>& base,
                                         const std::vector<double>& cand, double p, int resamples,
                                         uint64_t seed, double confidence) {
  const RatioResult none{kNaN, {kNaN, kNaN}};
  const size_t n = base.size();
  if (n == 0 || cand.size() != n || n > std::numeric_limits<uint32_t>::max()) return none;
  for (size_t i = 0; i < n; ++i) {
    if (!(std::isfinite(base[i]) && base[i] > 0 && std::isfinite(cand[i]) && cand[i] > 0)) {
      return none;
    }
  }
  const RankedValues ranked_base = Rank(base);
  const RankedValues ranked_cand = Rank(cand);
  RatioResult result;
  result.ratio = PercentileSorted(ranked_cand.sorted, p) / PercentileSorted(ranked_base.sorted, p);
  if (resamples < 1) {
    result.interval = {result.ratio, result.ratio};
    return result;
  }

  const PercentileRank rank = PercentileRankType7(n, p);
  SeededRandom random(seed);
  std::vector<uint32_t> count_base(n), count_cand(n);
  std::vector<double> ratios(static_cast<size_t>(resamples));
  for (double& ratio : ratios) {
    std::fill(count_base.begin(), count_base.end(), 0);
    std::fill(count_cand.begin(), count_cand.end(), 0);
    for (size_t i = 0; i < n; ++i) {
      const uint64_t picked = random.UniformIndex(n);
      ++count_base[ranked_base.position_of_case[picked]];
      ++count_cand[ranked_cand.position_of_case[picked]];
    }
    ratio = ResamplePercentile(ranked_cand.sorted, count_cand, rank) /
            ResamplePercentile(ranked_base.sorted, count_base, rank);
  }
  std::sort(ratios.begin(), ratios.end());
  const double tail = (1 - confidence) / 2;
  result.interval = {PercentileSorted(ratios, 100 * tail),
                     PercentileSorted(ratios, 100 * (1 - tail))};
  return result;
}

}  // namespace plumb::metrics
