#ifndef PLUMB_METRICS_PERCENTILE_H_
#define PLUMB_METRICS_PERCENTILE_H_

/// Percentiles by Hyndman and Fan (1996) definition 7, "linear interpolation between closest
/// ranks", the one SPEC §6.5 names and numpy.percentile's default method="linear". Used for the
/// latency summary, for the ends of every bootstrap interval and for the latency drift ratio.

#include <cstddef>
#include <vector>

namespace plumb::metrics {

/// Where definition 7 falls among n sorted values for percentile p in [0, 100]: between the
/// 0-based order statistics `lower` and `lower + 1`, at fraction `gamma` of the way. When
/// `lower + 1 == n` (p == 100, or n == 1) gamma is 0 and only `lower` is used.
struct PercentileRank {
  size_t lower = 0;
  double gamma = 0;
};
PercentileRank PercentileRankType7(size_t n, double p);

/// The value `gamma` of the way from `below` to `above`, rounded as numpy's _lerp does (from the
/// nearer end), so results agree with numpy.percentile to the last bit in the common cases.
double InterpolateBetween(double below, double above, double gamma);

/// The p-th percentile (p in [0, 100]) of `sorted`, which must be ascending. NaN when empty.
double PercentileSorted(const std::vector<double>& sorted, double p);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_PERCENTILE_H_
