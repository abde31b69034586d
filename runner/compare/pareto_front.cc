#include "runner/compare/pareto_front.h"

#include <algorithm>
#include <cmath>

namespace plumb {
namespace {

bool Usable(const TradeoffPoint& p) {
  return std::isfinite(p.quality) && std::isfinite(p.latency_ms);
}

bool Beats(const TradeoffPoint& j, const TradeoffPoint& i) {
  return j.quality >= i.quality && j.latency_ms <= i.latency_ms &&
         (j.quality > i.quality || j.latency_ms < i.latency_ms);
}

}  // namespace

std::vector<size_t> ParetoFront(const std::vector<TradeoffPoint>& points) {
  std::vector<size_t> front;
  for (size_t i = 0; i < points.size(); ++i) {
    if (!Usable(points[i])) continue;
    bool beaten = false;
    for (size_t j = 0; j < points.size() && !beaten; ++j) {
      beaten = j != i && Usable(points[j]) && Beats(points[j], points[i]);
    }
    if (!beaten) front.push_back(i);
  }
  std::sort(front.begin(), front.end(), [&](size_t a, size_t b) {
    if (points[a].latency_ms != points[b].latency_ms) {
      return points[a].latency_ms < points[b].latency_ms;
    }
    if (points[a].quality != points[b].quality) return points[a].quality > points[b].quality;
    return a < b;
  });
  return front;
}

}  // namespace plumb
