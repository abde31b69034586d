#include "metrics/grouped_bootstrap.h"

#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

#include "metrics/interval.h"
#include "metrics/metric_summary.h"

using plumb::metrics::GroupedBootstrapMean;
using plumb::metrics::GroupedBootstrapPlan;
using plumb::metrics::Interval;
using plumb::metrics::PercentileBootstrapMean;
using plumb::metrics::PlanGroupedBootstrap;
using plumb::metrics::SummarizeMetric;

// Intervals of grouped plans are checked against a transcription, against numpy's index
// bootstrap at B = 100,000 and against scipy.stats.binom.ppf in
// tests/reference/statistics_reference.py; these tests pin the contract's edges.

namespace {

std::vector<double> Repeat(std::vector<std::pair<double, int>> groups) {
  std::vector<double> values;
  for (const auto& [value, count] : groups) values.insert(values.end(), count, value);
  return values;
}

}  // namespace

TEST_CASE("Grouped bootstrap: degenerate samples as PercentileBootstrapMean", "[grouped]") {
  const Interval empty = GroupedBootstrapMean({});
  CHECK(empty.low == 0.0);
  CHECK(empty.high == 0.0);
  const Interval one = GroupedBootstrapMean({0.7});
  CHECK(one.low == 0.7);
  CHECK(one.high == 0.7);
  const Interval broken = GroupedBootstrapMean({0.5, NAN, 0.25});
  CHECK(std::isnan(broken.low));
  CHECK(std::isnan(broken.high));
  const Interval infinite = GroupedBootstrapMean({0.5, INFINITY, 0.5, 0.5});
  CHECK(std::isnan(infinite.low));
  // No resamples: the mean, (0.5 + 0.5 + 1 + 0) / 4.
  const Interval none = GroupedBootstrapMean({0.5, 0.5, 1.0, 0.0}, 0);
  CHECK(none.low == 0.5);
  CHECK(none.high == 0.5);
}

TEST_CASE("Grouped bootstrap of one repeated value is that value", "[grouped]") {
  // d = 1: no draw at all, every resample puts all 50 cases on 0.25 (50 * 0.25 / 50 is exact).
  const std::vector<double> values(50, 0.25);
  const GroupedBootstrapPlan plan = PlanGroupedBootstrap(values);
  CHECK_FALSE(plan.index_resampling);
  CHECK(plan.distinct_values == 1);
  CHECK(plan.binomial_values == 0);
  CHECK(plan.tail_cases == 0);
  const Interval interval = GroupedBootstrapMean(values);
  CHECK(interval.low == 0.25);
  CHECK(interval.high == 0.25);
}

TEST_CASE("Grouped bootstrap of 30 zeros, 20 halves and 10 ones", "[grouped]") {
  // Plan by the header's rule (costs 16 and 1): J = 1 costs 16 + sqrt(30 * 30 / 60) + 30 tail
  // draws = 49.87; J = 2 (the last value takes the remainder) costs 19.87 + 16 +
  // sqrt(20 * 10 / 30) = 38.45, below both 49.87 and the 60 of index resampling.
  const std::vector<double> values = Repeat({{0.0, 30}, {0.5, 20}, {1.0, 10}});
  const GroupedBootstrapPlan plan = PlanGroupedBootstrap(values);
  CHECK_FALSE(plan.index_resampling);
  CHECK(plan.distinct_values == 3);
  CHECK(plan.binomial_values == 2);
  CHECK(plan.tail_cases == 0);
  // Default B = 2000 and seed: 14.5 / 60 and 26 / 60, from the transcription in
  // tests/reference/statistics_reference.py (grouped_bootstrap_mean), which the reference check
  // holds to the driver.
  const Interval interval = GroupedBootstrapMean(values);
  CHECK(interval.low == Approx(0.24166666666666667).epsilon(1e-15));
  CHECK(interval.high == Approx(0.43333333333333335).epsilon(1e-15));
}

TEST_CASE("Grouped bootstrap is deterministic and seeded", "[grouped]") {
  const std::vector<double> values = Repeat({{0.0, 400}, {1.0, 350}, {0.5, 150}, {0.25, 100}});
  const Interval first = GroupedBootstrapMean(values);
  const Interval again = GroupedBootstrapMean(values);
  CHECK(first.low == again.low);
  CHECK(first.high == again.high);
  const Interval other_seed = GroupedBootstrapMean(values, 2000, 7);
  CHECK((other_seed.low != first.low || other_seed.high != first.high));
  // The values' order does not matter: the plan sees only the distinct values and counts.
  std::vector<double> reversed(values.rbegin(), values.rend());
  const Interval reordered = GroupedBootstrapMean(reversed);
  CHECK(reordered.low == first.low);
  CHECK(reordered.high == first.high);
  // Mean (350 + 75 + 25) / 1000 = 0.45; the interval holds it, and a wider confidence gives a
  // wider interval.
  CHECK(first.low < 0.45);
  CHECK(first.high > 0.45);
  const Interval wider = GroupedBootstrapMean(values, 2000, 20261201, 0.99);
  CHECK(wider.low <= first.low);
  CHECK(wider.high >= first.high);
}

TEST_CASE("Continuous values fall back to PercentileBootstrapMean's own draws", "[grouped]") {
  // Every value distinct: each binomial would cover one case at a cost of 16 index draws.
  const std::vector<double> values = {0.1, 0.9, 0.35, 0.6, 0.72, 0.05, 0.44, 0.81, 0.3, 0.57};
  CHECK(PlanGroupedBootstrap(values).index_resampling);
  for (double confidence : {0.95, 0.8}) {
    const Interval grouped = GroupedBootstrapMean(values, 2000, 3, confidence);
    const Interval index = PercentileBootstrapMean(values, 2000, 3, confidence);
    CHECK(grouped.low == index.low);
    CHECK(grouped.high == index.high);
  }
  // {0, 1}: d = 2 but n = 2, so one binomial (16.7) costs more than two index draws; the
  // interval is interval_test.cc's worked [0, 1].
  const Interval pair = GroupedBootstrapMean({0.0, 1.0});
  CHECK(pair.low == 0.0);
  CHECK(pair.high == 1.0);
}

TEST_CASE("Rare values are resampled by index after the frequent ones' binomials", "[grouped]") {
  // 600 zeros, 300 ones, 100 halves and 10 values seen once (n = 1010). Three binomials cost
  // 48 + sqrt(600 * 410 / 1010) + sqrt(300 * 110 / 410) + sqrt(100 * 10 / 110) = 75.6, plus 10
  // index draws among the rare cases: 85.6, against 101.5 for a fourth binomial (and 9 draws),
  // 166.6 for two, and more for all twelve.
  std::vector<double> values = Repeat({{0.0, 600}, {1.0, 300}, {0.5, 100}});
  for (int i = 0; i < 10; ++i) values.push_back(0.01 * i + 0.005);
  const GroupedBootstrapPlan plan = PlanGroupedBootstrap(values);
  CHECK_FALSE(plan.index_resampling);
  CHECK(plan.distinct_values == 13);
  CHECK(plan.binomial_values == 3);
  CHECK(plan.tail_cases == 10);
  const Interval interval = GroupedBootstrapMean(values);
  // Mean (300 + 50 + 0.5) / 1010 = 0.347; a sanity bound only, the values are checked in the
  // reference check.
  CHECK(interval.low < 0.347);
  CHECK(interval.high > 0.347);
}

TEST_CASE("Signed zeros, -0 and +0, are one distinct value", "[grouped]") {
  const std::vector<double> values = Repeat({{-0.0, 300}, {0.0, 300}, {1.0, 400}});
  CHECK(PlanGroupedBootstrap(values).distinct_values == 2);
  const Interval signed_zeros = GroupedBootstrapMean(values);
  const Interval plain_zeros = GroupedBootstrapMean(Repeat({{0.0, 600}, {1.0, 400}}));
  CHECK(signed_zeros.low == plain_zeros.low);
  CHECK(signed_zeros.high == plain_zeros.high);
}

TEST_CASE("SummarizeMetric's bootstrap interval is GroupedBootstrapMean's", "[grouped]") {
  // A token-F1-like metric of few distinct values, where the grouped draws differ from the index
  // draws (the interval is another sample of the same bootstrap distribution).
  const std::vector<double> values = Repeat({{0.0, 40}, {1.0, 35}, {0.5, 15}, {2.0 / 3, 10}});
  REQUIRE_FALSE(PlanGroupedBootstrap(values).index_resampling);
  for (bool binary : {false, true}) {
    const auto summary = SummarizeMetric(values, binary);
    CHECK_FALSE(summary.wilson);
    const Interval expected = GroupedBootstrapMean(values, 2000, 20261201);
    CHECK(summary.interval.low == expected.low);
    CHECK(summary.interval.high == expected.high);
  }
}
