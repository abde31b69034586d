#include "metrics/interval.h"

#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

using plumb::metrics::Interval;
using plumb::metrics::NormalQuantile;
using plumb::metrics::PercentileBootstrapMean;
using plumb::metrics::WilsonInterval;

TEST_CASE("NormalQuantile matches scipy.special.ndtri", "[interval]") {
  // Expected values printed by Debian 12's python3-scipy 1.10.1, scipy.special.ndtri(p). The
  // Wilson z must be norm.ppf(0.975) to the last bit; elsewhere a few units in the last place.
  CHECK(NormalQuantile(0.975) == 1.959963984540054);
  CHECK(NormalQuantile(0.5) == 0.0);
  CHECK(NormalQuantile(0.025) == Approx(-1.9599639845400545).epsilon(1e-15));
  CHECK(NormalQuantile(0.8) == Approx(0.8416212335729143).epsilon(1e-15));
  CHECK(NormalQuantile(0.9) == Approx(1.2815515655446004).epsilon(1e-15));
  CHECK(NormalQuantile(0.995) == Approx(2.5758293035489004).epsilon(1e-15));
  CHECK(NormalQuantile(0.999) == Approx(3.090232306167813).epsilon(1e-15));
  CHECK(NormalQuantile(1e-10) == Approx(-6.361340902404056).epsilon(1e-15));
  CHECK(NormalQuantile(1e-300) == Approx(-37.0470962993612).epsilon(1e-15));
}

TEST_CASE("NormalQuantile at and beyond the ends of [0, 1]", "[interval]") {
  CHECK(NormalQuantile(0) == -INFINITY);
  CHECK(NormalQuantile(1) == INFINITY);
  CHECK(std::isnan(NormalQuantile(-0.1)));
  CHECK(std::isnan(NormalQuantile(1.5)));
  CHECK(std::isnan(NormalQuantile(NAN)));
}

TEST_CASE("Wilson interval for 8 of 10, worked by hand", "[interval]") {
  // Wilson (1927) score interval, z = 1.959963984540054 (norm.ppf(0.975)), p = 0.8, n = 10:
  //   z^2 = 3.8414588206941254, denominator = 1 + z^2/n = 1.3841458820694126
  //   centre = (p + z^2/(2n)) / denominator = 0.9920729410347063 / 1.3841458820694126
  //          = 0.7167401600411333
  //   half = z * sqrt(p(1-p)/n + z^2/(4n^2)) / denominator
  //        = 1.959963984540054 * sqrt(0.016 + 0.00960364705173531) / 1.3841458820694126
  //        = 1.959963984540054 * 0.16001139663078787 / 1.3841458820694126 = 0.22657768850449148
  //   interval = centre -/+ half = [0.49016247153664183, 0.9433178485456247]
  const Interval interval = WilsonInterval(8, 10);
  CHECK(interval.low == Approx(0.49016247153664183).epsilon(1e-14));
  CHECK(interval.high == Approx(0.9433178485456247).epsilon(1e-14));
}

TEST_CASE("Wilson interval reproduces Newcombe's examples", "[interval]") {
  // Newcombe, "Two-sided confidence intervals for the single proportion: comparison of seven
  // methods", Statistics in Medicine 17 (1998), Table II, method 3 (score, no continuity
  // correction), four decimals. From memory; statsmodels agrees (tests/reference).
  struct Example {
    int64_t successes, n;
    double low, high;
  };
  for (const Example& e : {Example{81, 263, 0.2553, 0.3662}, Example{15, 148, 0.0624, 0.1605},
                           Example{0, 20, 0.0, 0.1611}, Example{1, 29, 0.0061, 0.1718}}) {
    const Interval interval = WilsonInterval(e.successes, e.n);
    CHECK(interval.low == Approx(e.low).margin(5e-5));
    CHECK(interval.high == Approx(e.high).margin(5e-5));
  }
}

TEST_CASE("Wilson interval at the boundaries", "[interval]") {
  // 0 of n: centre and half width are both z^2 / (2 (n + z^2)), so the interval is
  // [0, z^2 / (n + z^2)]; for n = 20, 3.8414588206941254 / 23.841458820694125.
  const Interval none = WilsonInterval(0, 20);
  CHECK(none.low == 0.0);
  CHECK(none.high == Approx(0.16112515805281938).epsilon(1e-14));
  // n of n mirrors it.
  const Interval all = WilsonInterval(20, 20);
  CHECK(all.low == Approx(1 - 0.16112515805281938).epsilon(1e-14));
  CHECK(all.high == 1.0);
  // Nothing observed: nothing excluded.
  const Interval empty = WilsonInterval(0, 0);
  CHECK(empty.low == 0.0);
  CHECK(empty.high == 1.0);
}

TEST_CASE("Wilson interval narrows as confidence falls", "[interval]") {
  const Interval wide = WilsonInterval(30, 100, 0.99);
  const Interval usual = WilsonInterval(30, 100, 0.95);
  const Interval narrow = WilsonInterval(30, 100, 0.90);
  CHECK(wide.low < usual.low);
  CHECK(usual.low < narrow.low);
  CHECK(narrow.high < usual.high);
  CHECK(usual.high < wide.high);
}

TEST_CASE("Percentile bootstrap of the mean: degenerate samples", "[interval]") {
  const Interval empty = PercentileBootstrapMean({});
  CHECK(empty.low == 0.0);
  CHECK(empty.high == 0.0);
  const Interval one = PercentileBootstrapMean({0.7});
  CHECK(one.low == 0.7);
  CHECK(one.high == 0.7);
  // Every resample of a constant sample has that constant as its mean.
  const Interval constant = PercentileBootstrapMean({0.25, 0.25, 0.25, 0.25, 0.25});
  CHECK(constant.low == 0.25);
  CHECK(constant.high == 0.25);
  // No interval is claimed around a value that is not a number.
  const Interval broken = PercentileBootstrapMean({0.5, NAN, 0.25});
  CHECK(std::isnan(broken.low));
  CHECK(std::isnan(broken.high));
}

TEST_CASE("Percentile bootstrap of the mean of {0, 1} spans [0, 1]", "[interval]") {
  // Worked by hand: a resample of {0, 1} of size 2 has mean 0 with probability 1/4, 1/2 with
  // probability 1/2, 1 with probability 1/4. Of 2000 resamples about 500 have mean 0 and 500 mean
  // 1, far more than the 50 below the 2.5th or above the 97.5th percentile, so those percentiles
  // are exactly 0 and 1.
  const Interval interval = PercentileBootstrapMean({0.0, 1.0});
  CHECK(interval.low == 0.0);
  CHECK(interval.high == 1.0);
}

TEST_CASE("Percentile bootstrap of the mean is deterministic and seeded", "[interval]") {
  const std::vector<double> values = {0.1, 0.9, 0.35, 0.6, 0.72, 0.05, 0.44, 0.81, 0.3, 0.57};
  const Interval first = PercentileBootstrapMean(values);
  const Interval again = PercentileBootstrapMean(values);
  CHECK(first.low == again.low);
  CHECK(first.high == again.high);
  // The sample mean is 0.484; the 95% interval lies around it and inside the sample's range.
  CHECK(first.low < 0.484);
  CHECK(first.high > 0.484);
  CHECK(first.low > 0.05);
  CHECK(first.high < 0.9);
  const Interval other_seed = PercentileBootstrapMean(values, 2000, 7);
  CHECK((other_seed.low != first.low || other_seed.high != first.high));
  // A wider confidence level gives a wider interval from the same resamples.
  const Interval wider = PercentileBootstrapMean(values, 2000, 20261201, 0.99);
  CHECK(wider.low <= first.low);
  CHECK(wider.high >= first.high);
}
