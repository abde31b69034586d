// metrics/paired_mean_ratio: the ratio of two runs' mean cost (or tokens) over the same cases,
// with a paired bootstrap interval. The point is checked by hand; the interval against a direct
// transcription of its definition in this file (the same seeded stream of case indices).

#include "metrics/paired_mean_ratio.h"

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

#include "metrics/percentile.h"
#include "metrics/seeded_random.h"

using plumb::metrics::PairedBootstrapMeanRatio;
using plumb::metrics::RatioResult;

TEST_CASE("the mean ratio is the ratio of the sums, with the resampled ratios' percentiles") {
  // Per-case cost in two runs (EUR): sums 0.0108 and 0.0162, so the ratio is 1.5 exactly by
  // hand (0.0162 / 0.0108), up to rounding of the decimal inputs.
  const std::vector<double> base = {0.0010, 0.0020, 0.0008, 0.0030, 0.0040};
  const std::vector<double> cand = {0.0015, 0.0030, 0.0012, 0.0045, 0.0060};
  const RatioResult r = PairedBootstrapMeanRatio(base, cand, 400, 11);
  CHECK(r.ratio == Approx(1.5).epsilon(1e-12));
  // Every case costs 1.5 times as much, so every resample's ratio is 1.5 too.
  CHECK(r.interval.low == Approx(1.5).epsilon(1e-12));
  CHECK(r.interval.high == Approx(1.5).epsilon(1e-12));

  const std::vector<double> in_base = {812, 640, 1020, 300, 95, 410};
  const std::vector<double> in_cand = {700, 700, 900, 800, 60, 415};
  const RatioResult t = PairedBootstrapMeanRatio(in_base, in_cand, 300, 5);
  CHECK(t.ratio == Approx(3575.0 / 3277.0));
  plumb::metrics::SeededRandom random(5);
  std::vector<double> ratios;
  for (int k = 0; k < 300; ++k) {
    double b = 0, c = 0;
    for (size_t j = 0; j < in_base.size(); ++j) {
      const size_t i = random.UniformIndex(in_base.size());
      b += in_base[i];
      c += in_cand[i];
    }
    ratios.push_back(c / b);
  }
  std::sort(ratios.begin(), ratios.end());
  CHECK(t.interval.low == plumb::metrics::PercentileSorted(ratios, 2.5));
  CHECK(t.interval.high == plumb::metrics::PercentileSorted(ratios, 97.5));
}

TEST_CASE("no mean ratio without a base amount, equal sizes and amounts at or above 0") {
  CHECK(std::isnan(PairedBootstrapMeanRatio({0, 0}, {1, 2}).ratio));
  CHECK(std::isnan(PairedBootstrapMeanRatio({1, 2}, {1}).ratio));
  CHECK(std::isnan(PairedBootstrapMeanRatio({1, -2}, {1, 2}).ratio));
  CHECK(std::isnan(PairedBootstrapMeanRatio({}, {}).ratio));
}
