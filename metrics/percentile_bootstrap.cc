#include "metrics/percentile_bootstrap.h"

#include <algorithm>
#include <cmath>
#include <limits>

#include "metrics/percentile.h"
#include "metrics/seeded_random.h"

namespace plumb::metrics {

Interval BootstrapPercentileInterval(const std::vector<double>& values, double p, int resamples,
                                     uint64_t seed, double confidence) {
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  const size_t n = values.size();
  if (n == 0 || resamples < 1) return {kNaN, kNaN};
  for (double v : values) {
    if (!std::isfinite(v)) return {kNaN, kNaN};
  }
  // Draws are indices into the sample as given; each resample's order statistics are read off
  // how often each sorted position was drawn.
  std::vector<size_t> order(n);
  for (size_t i = 0; i < n; ++i) order[i] = i;
  std::stable_sort(order.begin(), order.end(),
                   [&](size_t a, size_t b) { return values[a] < values[b]; });
  std::vector<size_t> rank_of(n);
  for (size_t k = 0; k < n; ++k) rank_of[order[k]] = k;
  const PercentileRank rank = PercentileRankType7(n, p);
  SeededRandom random(seed);
  std::vector<uint32_t> count(n);
  std::vector<double> resampled;
  resampled.reserve(static_cast<size_t>(resamples));
  for (int r = 0; r < resamples; ++r) {
    std::fill(count.begin(), count.end(), 0u);
    for (size_t k = 0; k < n; ++k) ++count[rank_of[random.UniformIndex(n)]];
    // The order statistics `rank.lower` and `rank.lower + 1` (0-based) of the resample.
    double below = 0, above = 0;
    size_t seen = 0, k = 0;
    while (seen + count[k] <= rank.lower) seen += count[k++];
    below = values[order[k]];
    if (rank.lower + 1 < n) {
      while (seen + count[k] <= rank.lower + 1) seen += count[k++];
      above = values[order[k]];
    } else {
      above = below;
    }
    resampled.push_back(InterpolateBetween(below, above, rank.gamma));
  }
  std::sort(resampled.begin(), resampled.end());
  const double tail = (1 - confidence) / 2;
  return {PercentileSorted(resampled, 100 * tail), PercentileSorted(resampled, 100 * (1 - tail))};
}

}  // namespace plumb::metrics
