#include "metrics/unpaired_bootstrap.h"

#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

using plumb::metrics::RatioResult;
using plumb::metrics::UnpairedBootstrapMeanRatio;

TEST_CASE("Constant samples give their ratio and a point interval", "[unpaired_bootstrap]") {
  // Every resample of {100, 100} has mean 100 and of {200, 200, 200} mean 200: ratio 2 always.
  const RatioResult r = UnpairedBootstrapMeanRatio({100, 100}, {200, 200, 200});
  CHECK(r.ratio == 2);
  CHECK(r.interval.low == 2);
  CHECK(r.interval.high == 2);
}

TEST_CASE("One base worker against two candidate workers, worked by hand", "[unpaired_bootstrap]") {
  // base {100} never varies. A resample of cand {100, 300} has mean 100, 200 or 300 with
  // probability 1/4, 1/2, 1/4, so the ratio is 1, 2 or 3. Over 10,000 resamples the 2.5th and
  // 97.5th percentiles fall among the many 1s and 3s (about 2,500 each): the interval is [1, 3].
  // The point estimate is mean(cand) / mean(base) = 200 / 100.
  const RatioResult r = UnpairedBootstrapMeanRatio({100}, {100, 300});
  CHECK(r.ratio == 2);
  CHECK(r.interval.low == 1);
  CHECK(r.interval.high == 3);
}

TEST_CASE("One worker on each side gives the ratio and no interval", "[unpaired_bootstrap]") {
  // Every resample of {100} and {250} is the same pair, so a percentile interval would be the
  // point [2.5, 2.5]: a spread of zero that nothing measured. The interval is left undefined.
  const RatioResult r = UnpairedBootstrapMeanRatio({100}, {250});
  CHECK(r.ratio == 2.5);
  CHECK(std::isnan(r.interval.low));
  CHECK(std::isnan(r.interval.high));
}

TEST_CASE("The same seed gives the same interval", "[unpaired_bootstrap]") {
  const std::vector<double> base = {2010, 2035, 1990, 2100};
  const std::vector<double> cand = {4020, 3980, 4105};
  const RatioResult a = UnpairedBootstrapMeanRatio(base, cand, 2000, 7);
  const RatioResult b = UnpairedBootstrapMeanRatio(base, cand, 2000, 7);
  CHECK(a.interval.low == b.interval.low);
  CHECK(a.interval.high == b.interval.high);
  CHECK(a.interval.low <= a.ratio);
  CHECK(a.ratio <= a.interval.high);
}

TEST_CASE("No ratio without positive values on both sides", "[unpaired_bootstrap]") {
  CHECK(std::isnan(UnpairedBootstrapMeanRatio({}, {1}).ratio));
  CHECK(std::isnan(UnpairedBootstrapMeanRatio({0}, {1}).ratio));
  CHECK(std::isnan(UnpairedBootstrapMeanRatio({1}, {-1}).interval.low));
}
