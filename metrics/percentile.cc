#include "metrics/percentile.h"

#include <cmath>

namespace plumb::metrics {

PercentileRank PercentileRankType7(size_t n, double p) {
  PercentileRank rank;
  if (n <= 1) return rank;
  // Definition 7 puts percentile p at 0-based position h = (n - 1) * p / 100; numpy computes the
  // fraction p / 100 first, and so do we, to land on the same double.
  const double h = static_cast<double>(n - 1) * (p / 100.0);
  if (!(h > 0)) return rank;
  if (h >= static_cast<double>(n - 1)) {
    rank.lower = n - 1;
    return rank;
  }
  const double floor_h = std::floor(h);
  rank.lower = static_cast<size_t>(floor_h);
  rank.gamma = h - floor_h;
  return rank;
}

double InterpolateBetween(double below, double above, double gamma) {
  const double difference = above - below;
  if (gamma >= 0.5) return above - difference * (1 - gamma);
  return below + difference * gamma;
}

double PercentileSorted(const std::vector<double>& sorted, double p) {
  if (sorted.empty()) return std::nan("");
  const PercentileRank rank = PercentileRankType7(sorted.size(), p);
  if (rank.lower + 1 >= sorted.size()) return sorted[rank.lower];
  return InterpolateBetween(sorted[rank.lower], sorted[rank.lower + 1], rank.gamma);
}

}  // namespace plumb::metrics
