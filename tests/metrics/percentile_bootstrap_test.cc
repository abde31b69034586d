// metrics/percentile_bootstrap: the bootstrap interval of a percentile (a run's time to first
// token). Checked against a direct transcription of the definition in this file: draw n indices
// with the same seeded stream, sort the drawn values, take the definition-7 percentile, and take
// the 2.5th and 97.5th definition-7 percentiles of those.

#include "metrics/percentile_bootstrap.h"

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

#include "metrics/percentile.h"
#include "metrics/seeded_random.h"

using plumb::metrics::BootstrapPercentileInterval;
using plumb::metrics::Interval;

namespace {

Interval Direct(const std::vector<double>& values, double p, int resamples, uint64_t seed) {
  plumb::metrics::SeededRandom random(seed);
  std::vector<double> stats;
  for (int r = 0; r < resamples; ++r) {
    std::vector<double> drawn;
    for (size_t k = 0; k < values.size(); ++k)
      drawn.push_back(values[random.UniformIndex(values.size())]);
    std::sort(drawn.begin(), drawn.end());
    stats.push_back(plumb::metrics::PercentileSorted(drawn, p));
  }
  std::sort(stats.begin(), stats.end());
  return {plumb::metrics::PercentileSorted(stats, 2.5),
          plumb::metrics::PercentileSorted(stats, 97.5)};
}

}  // namespace

TEST_CASE("the percentile bootstrap matches resampling and sorting each resample") {
  // Times to first token with ties and an outlier, in no order.
  const std::vector<double> values = {212.5, 198.0, 250.25, 198.0, 205.0, 1900.0, 201.0,
                                      230.0, 199.5, 215.0,  240.0, 198.0, 260.0,  207.5};
  for (double p : {50.0, 95.0, 90.0, 0.0, 100.0}) {
    INFO("p " << p);
    const Interval got = BootstrapPercentileInterval(values, p, 500, 7);
    const Interval want = Direct(values, p, 500, 7);
    // Equal up to the last bits of the interpolation (the two compute it in different order
    // after inlining); a wrong draw or order statistic would be off by whole milliseconds.
    CHECK(got.low == Approx(want.low).epsilon(1e-12));
    CHECK(got.high == Approx(want.high).epsilon(1e-12));
    CHECK(got.low <= got.high);
  }
}

TEST_CASE("a percentile bootstrap of one value or of equal values is that value") {
  const Interval one = BootstrapPercentileInterval({320.0}, 95);
  CHECK(one.low == 320.0);
  CHECK(one.high == 320.0);
  const Interval same = BootstrapPercentileInterval({5.0, 5.0, 5.0, 5.0}, 50);
  CHECK(same.low == 5.0);
  CHECK(same.high == 5.0);
}

TEST_CASE("a percentile bootstrap of nothing or of a non-finite value is n/a") {
  CHECK(std::isnan(BootstrapPercentileInterval({}, 50).low));
  CHECK(std::isnan(BootstrapPercentileInterval({1.0, NAN}, 50).high));
}
