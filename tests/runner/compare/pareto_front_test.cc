// ParetoFront (runner/compare/pareto_front.h) on points worked by hand: j beats i when j is at
// least as correct and at least as fast, one of the two strictly (the usual definition of
// dominance for "maximise one objective, minimise the other").
#include "runner/compare/pareto_front.h"

#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <vector>

using plumb::ParetoFront;
using plumb::TradeoffPoint;

TEST_CASE("the front keeps the runs no other run beats on both axes, ordered by latency") {
  // A (0.60, 100 ms), B (0.70, 400 ms), C (0.55, 300 ms), D (0.80, 2000 ms), E (0.65, 1000 ms).
  // C is beaten by A (more correct and faster); E by B (more correct, faster). A, B and D
  // remain: each is the most correct at or below its own latency.
  const std::vector<TradeoffPoint> points = {
      {0.60, 100}, {0.70, 400}, {0.55, 300}, {0.80, 2000}, {0.65, 1000}};
  CHECK(ParetoFront(points) == std::vector<size_t>{0, 1, 3});
}

TEST_CASE("a run equal on one axis and better on the other beats, equal runs both stay") {
  // B is as correct as A and slower: A beats B. C equals A exactly: neither beats the other.
  const std::vector<TradeoffPoint> points = {{0.5, 100}, {0.5, 150}, {0.5, 100}};
  CHECK(ParetoFront(points) == std::vector<size_t>{0, 2});
  // Same latency, lower quality: beaten.
  CHECK(ParetoFront({{0.5, 100}, {0.4, 100}}) == std::vector<size_t>{0});
}

TEST_CASE("one run alone is its own front, and runs without a latency are left out") {
  const double nan = std::numeric_limits<double>::quiet_NaN();
  CHECK(ParetoFront({{0.3, 50}}) == std::vector<size_t>{0});
  // The second has no latency: it neither joins the front nor beats the third, which would
  // lose to it on quality (0.9 > 0.2) if its latency counted as anything.
  CHECK(ParetoFront({{0.9, nan}, {0.2, 80}}) == std::vector<size_t>{1});
  CHECK(ParetoFront({}).empty());
}

TEST_CASE("a front that only trades: every run is on it, fastest first") {
  // Quality rises with latency at every step, so nothing is beaten.
  const std::vector<TradeoffPoint> points = {{0.9, 900}, {0.1, 10}, {0.5, 90}};
  CHECK(ParetoFront(points) == std::vector<size_t>{1, 2, 0});
}
