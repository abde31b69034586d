#include "metrics/percentile.h"

#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

using plumb::metrics::InterpolateBetween;
using plumb::metrics::PercentileRankType7;
using plumb::metrics::PercentileSorted;

TEST_CASE("Definition 7 percentile of 15, 20, 35, 40, 50, worked by hand", "[percentile]") {
  // Hyndman and Fan (1996) definition 7: h = (n - 1) p / 100 (0-based), value
  // x[floor h] + (h - floor h) (x[floor h + 1] - x[floor h]).
  const std::vector<double> sorted = {15, 20, 35, 40, 50};
  // p = 40: h = 4 * 0.4 = 1.6 -> 20 + 0.6 * (35 - 20) = 29.
  CHECK(PercentileSorted(sorted, 40) == Approx(29).epsilon(1e-15));
  // p = 50: h = 2 -> x[2] = 35, the median.
  CHECK(PercentileSorted(sorted, 50) == 35);
  // p = 90: h = 3.6 -> 40 + 0.6 * 10 = 46.
  CHECK(PercentileSorted(sorted, 90) == Approx(46).epsilon(1e-15));
  // The ends are the minimum and the maximum.
  CHECK(PercentileSorted(sorted, 0) == 15);
  CHECK(PercentileSorted(sorted, 100) == 50);
}

TEST_CASE("Definition 7 percentiles of 10, 20, 30, 40, worked by hand", "[percentile]") {
  const std::vector<double> sorted = {10, 20, 30, 40};
  // h = 3 p / 100: p50 -> 1.5 -> 25; p90 -> 2.7 -> 37; p95 -> 2.85 -> 38.5; p99 -> 2.97 -> 39.7.
  CHECK(PercentileSorted(sorted, 50) == Approx(25).epsilon(1e-15));
  CHECK(PercentileSorted(sorted, 90) == Approx(37).epsilon(1e-15));
  CHECK(PercentileSorted(sorted, 95) == Approx(38.5).epsilon(1e-15));
  CHECK(PercentileSorted(sorted, 99) == Approx(39.7).epsilon(1e-15));
}

TEST_CASE("Definition 7 on tied and tiny samples", "[percentile]") {
  // Between two equal values the interpolation stays on them.
  const std::vector<double> tied = {1, 2, 2, 2, 3};
  CHECK(PercentileSorted(tied, 30) == 2);
  CHECK(PercentileSorted(tied, 70) == 2);
  // One value is every percentile.
  CHECK(PercentileSorted({4.5}, 0) == 4.5);
  CHECK(PercentileSorted({4.5}, 73) == 4.5);
  CHECK(PercentileSorted({4.5}, 100) == 4.5);
  // Two values: h = p / 100, so p25 is a quarter of the way.
  CHECK(PercentileSorted({2, 6}, 25) == 3);
  CHECK(std::isnan(PercentileSorted({}, 50)));
}

TEST_CASE("PercentileRankType7 locates the bracketing order statistics", "[percentile]") {
  // n = 11: h = 10 p / 100. p = 25 -> h = 2.5: between x[2] and x[3], halfway.
  const auto quarter = PercentileRankType7(11, 25);
  CHECK(quarter.lower == 2);
  CHECK(quarter.gamma == 0.5);
  const auto top = PercentileRankType7(11, 100);
  CHECK(top.lower == 10);
  CHECK(top.gamma == 0);
  const auto bottom = PercentileRankType7(11, 0);
  CHECK(bottom.lower == 0);
  CHECK(bottom.gamma == 0);
}

TEST_CASE("InterpolateBetween rounds from the nearer end, as numpy's _lerp", "[percentile]") {
  // numpy 1.24 lib/function_base.py _lerp: a + (b - a) t, but b - (b - a)(1 - t) when t >= 0.5,
  // so t = 1 gives b exactly even where a + (b - a) rounds away from it: in double,
  // -0.73 + (4.13 - -0.73) is 4.129999999999999.
  CHECK(InterpolateBetween(-0.73, 4.13, 1.0) == 4.13);
  CHECK(InterpolateBetween(-0.73, 4.13, 0.0) == -0.73);
  CHECK(InterpolateBetween(2, 6, 0.25) == 3);
  CHECK(InterpolateBetween(2, 6, 0.75) == 5);
}
