#include "metrics/metric_summary.h"

#include <catch2/catch.hpp>
#include <vector>

using plumb::metrics::Interval;
using plumb::metrics::LatencySummary;
using plumb::metrics::MetricSummary;
using plumb::metrics::PercentileBootstrapMean;
using plumb::metrics::SummarizeLatency;
using plumb::metrics::SummarizeMetric;
using plumb::metrics::WilsonInterval;

TEST_CASE("Latency summary of 40, 10, 30, 20 ms, worked by hand", "[metric_summary]") {
  // Sorted 10, 20, 30, 40; definition 7 with h = 3 p / 100 (see percentile_test.cc):
  // p50 25, p90 37, p95 38.5, p99 39.7; mean 100 / 4 = 25; max 40.
  const LatencySummary s = SummarizeLatency({40, 10, 30, 20});
  CHECK(s.n == 4);
  CHECK(s.p50 == Approx(25).epsilon(1e-15));
  CHECK(s.p90 == Approx(37).epsilon(1e-15));
  CHECK(s.p95 == Approx(38.5).epsilon(1e-15));
  CHECK(s.p99 == Approx(39.7).epsilon(1e-15));
  CHECK(s.mean == 25);
  CHECK(s.max == 40);
}

TEST_CASE("Latency summary of no cases is all zero", "[metric_summary]") {
  const LatencySummary s = SummarizeLatency({});
  CHECK(s.n == 0);
  CHECK(s.p50 == 0);
  CHECK(s.p99 == 0);
  CHECK(s.mean == 0);
  CHECK(s.max == 0);
}

TEST_CASE("A timed-out call enters at its timeout and marks the percentiles it reaches",
          "[metric_summary]") {
  // Measured 10, 20, ..., 90 ms and one call that timed out at 100 ms. numpy.percentile([10, 20,
  // ..., 100], [50, 90, 95, 99]) gives 55, 91, 95.5 (95.49999999999999), 99.1, and the mean is
  // 55: the lower bound counts at its value. Definition 7 (h = 9 p / 100) reads p50 between the
  // 5th and 6th values, both measured, so p50 is exact; p90, p95 and p99 interpolate towards the
  // 10th value, the lower bound, with a non-zero weight, so they are "at least".
  const LatencySummary s = SummarizeLatency({90, 10, 80, 20, 70, 30, 60, 40, 50}, {100});
  CHECK(s.n == 10);
  CHECK(s.lower_bounds == 1);
  CHECK(s.p50 == 55);
  CHECK(s.p90 == Approx(91).epsilon(1e-15));
  CHECK(s.p95 == Approx(95.5).epsilon(1e-15));
  CHECK(s.p99 == Approx(99.1).epsilon(1e-15));
  CHECK(s.mean == 55);
  CHECK(s.max == 100);
  CHECK_FALSE(s.p50_at_least);
  CHECK(s.p90_at_least);
  CHECK(s.p95_at_least);
  CHECK(s.p99_at_least);
  CHECK(s.mean_at_least());
}

TEST_CASE("A lower bound equal to a measured value sorts after it", "[metric_summary]") {
  // Measured 10, 20, 100 and a timeout at 100: sorted 10, 20, 100, 100 (the bound last). p50
  // (h = 1.5) uses 20 and the measured 100: exact, 60 (numpy). p90 (h = 2.7) reaches the bound.
  // Percentiles landing exactly on a measured value (gamma 0) stay exact: of 1, 2, 3, 4 and a
  // bound at 9, p50 is the 3rd value, 3.
  const LatencySummary s = SummarizeLatency({100, 10, 20}, {100});
  CHECK(s.p50 == 60);
  CHECK_FALSE(s.p50_at_least);
  CHECK(s.p90 == 100);
  CHECK(s.p90_at_least);
  const LatencySummary t = SummarizeLatency({1, 2, 3, 4}, {9});
  CHECK(t.p50 == 3);
  CHECK_FALSE(t.p50_at_least);
  CHECK(t.p90_at_least);
}

TEST_CASE("Without lower bounds no statistic is marked", "[metric_summary]") {
  const LatencySummary s = SummarizeLatency({40, 10, 30, 20});
  CHECK(s.lower_bounds == 0);
  CHECK_FALSE(s.p99_at_least);
  CHECK_FALSE(s.mean_at_least());
}

TEST_CASE("A 0/1 metric gets the Wilson interval of its successes", "[metric_summary]") {
  // 8 of 10 correct: mean 0.8 and the Wilson interval worked in interval_test.cc,
  // [0.49016247153664183, 0.9433178485456247].
  const MetricSummary s = SummarizeMetric({1, 1, 0, 1, 1, 1, 0, 1, 1, 1}, true);
  CHECK(s.wilson);
  CHECK(s.n == 10);
  CHECK(s.mean == Approx(0.8).epsilon(1e-15));
  CHECK(s.interval.low == Approx(0.49016247153664183).epsilon(1e-14));
  CHECK(s.interval.high == Approx(0.9433178485456247).epsilon(1e-14));
}

TEST_CASE("A continuous metric gets the seeded percentile bootstrap", "[metric_summary]") {
  const std::vector<double> f1 = {0.5, 1, 0.25, 0.8, 0.66, 1, 0, 0.4};
  const MetricSummary s = SummarizeMetric(f1, false);
  CHECK_FALSE(s.wilson);
  CHECK(s.n == 8);
  CHECK(s.mean == Approx(4.61 / 8).epsilon(1e-15));
  const Interval expected = PercentileBootstrapMean(f1, 2000, 20261201);
  CHECK(s.interval.low == expected.low);
  CHECK(s.interval.high == expected.high);
}

TEST_CASE("A metric declared binary but holding a fraction falls back to the bootstrap",
          "[metric_summary]") {
  // A case averaged over repeats (SPEC §7, --repeat) can make a 0/1 metric 0.5.
  const std::vector<double> values = {1, 0, 0.5, 1, 1};
  const MetricSummary s = SummarizeMetric(values, true);
  CHECK_FALSE(s.wilson);
  const Interval expected = PercentileBootstrapMean(values, 2000, 20261201);
  CHECK(s.interval.low == expected.low);
  CHECK(s.interval.high == expected.high);
}

TEST_CASE("A metric defined on no case", "[metric_summary]") {
  const MetricSummary binary = SummarizeMetric({}, true);
  CHECK(binary.n == 0);
  CHECK(binary.mean == 0);
  CHECK(binary.wilson);
  CHECK(binary.interval.low == 0);
  CHECK(binary.interval.high == 1);
  const MetricSummary continuous = SummarizeMetric({}, false);
  CHECK(continuous.n == 0);
  CHECK(continuous.interval.low == 0);
  CHECK(continuous.interval.high == 0);
}

TEST_CASE("Wilson successes are the sum of the values", "[metric_summary]") {
  const MetricSummary s = SummarizeMetric({0, 0, 0, 1}, true);
  const Interval expected = WilsonInterval(1, 4);
  CHECK(s.interval.low == expected.low);
  CHECK(s.interval.high == expected.high);
}
