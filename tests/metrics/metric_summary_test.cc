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
