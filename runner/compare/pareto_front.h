#ifndef PLUMB_RUNNER_COMPARE_PARETO_FRONT_H_
#define PLUMB_RUNNER_COMPARE_PARETO_FRONT_H_

/// The front of `plumb compare`: the runs that no other run beats on both quality and latency.
/// Run j beats run i when j's quality is at least i's and j's latency at most i's, one of the two
/// strictly. The chart joins the front's marks; the table and the JSON flag them.

#include <cstddef>
#include <vector>

namespace plumb {

/// One run on the chart: higher quality is better, lower latency is better.
struct TradeoffPoint {
  double quality = 0;     // e.g. the mean of `correct`
  double latency_ms = 0;  // e.g. latency p95
};

/// Indices of the points on the front, ordered by latency (then by quality, highest first, then
/// by index): the order in which the chart joins them. A point with a non-finite coordinate is
/// never on the front and beats no point. Equal points do not beat each other: both are on the
/// front when nothing else beats them.
std::vector<size_t> ParetoFront(const std::vector<TradeoffPoint>& points);

}  // namespace plumb

#endif  // PLUMB_RUNNER_COMPARE_PARETO_FRONT_H_
