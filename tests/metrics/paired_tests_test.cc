#include "metrics/paired_tests.h"

#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <vector>

#include "metrics/detectable_effect.h"

using plumb::metrics::HolmAdjust;
using plumb::metrics::McNemarExactP;
using plumb::metrics::MinimumDetectableEffect;
using plumb::metrics::WilcoxonSignedRankP;

TEST_CASE("Exact McNemar on small tables, worked by hand", "[paired_tests]") {
  // p = min(1, 2 P(X <= min(b, c))), X ~ Binomial(b + c, 1/2).
  // b = 1, c = 9: 2 (C(10,0) + C(10,1)) / 2^10 = 2 * 11 / 1024 = 0.021484375.
  CHECK(McNemarExactP(1, 9) == Approx(0.021484375).epsilon(1e-15));
  CHECK(McNemarExactP(9, 1) == Approx(0.021484375).epsilon(1e-15));
  // b = 2, c = 8: 2 (1 + 10 + 45) / 1024 = 0.109375.
  CHECK(McNemarExactP(2, 8) == Approx(0.109375).epsilon(1e-15));
  // All discordant pairs one way: 2 / 2^6 = 0.03125, 2 / 2^5 = 0.0625.
  CHECK(McNemarExactP(0, 6) == Approx(0.03125).epsilon(1e-15));
  CHECK(McNemarExactP(0, 5) == Approx(0.0625).epsilon(1e-15));
  // Balanced tables and no discordance at all give 1.
  CHECK(McNemarExactP(3, 3) == 1);
  CHECK(McNemarExactP(3, 4) == 1);  // 2 (1 + 7 + 21 + 35) / 128 = 1
  CHECK(McNemarExactP(0, 0) == 1);
  CHECK(McNemarExactP(0, 1) == 1);
  CHECK(std::isnan(McNemarExactP(-1, 3)));
}

TEST_CASE("Exact McNemar on a large table matches statsmodels", "[paired_tests]") {
  // statsmodels 0.13.5 (Debian 12 python3-statsmodels):
  // mcnemar([[0, 400], [480, 0]], exact=True).pvalue = 0.007707305043339113.
  CHECK(McNemarExactP(400, 480) == Approx(0.007707305043339113).epsilon(1e-12));
}

TEST_CASE("Wilcoxon signed-rank, exact, on the corn heights of scipy's docstring",
          "[paired_tests]") {
  // scipy 1.10.1 stats.wilcoxon docstring (Debian 12 python3-scipy), data from Wilcoxon (1945):
  // the two-sided exact p-value is 0.041259765625.
  const std::vector<double> d = {6, 8, 14, 16, 23, 24, 28, 29, 41, -48, 49, 56, 60, -67, 75};
  CHECK(WilcoxonSignedRankP(d) == Approx(0.041259765625).epsilon(1e-15));
}

TEST_CASE("Wilcoxon signed-rank, exact, worked by hand", "[paired_tests]") {
  // n = 5, ranks 1..5, 2^5 = 32 equally likely sign patterns under the null.
  // All positive: R+ = 15, only {1,2,3,4,5} reaches it: p = 2 * 1/32 = 0.0625.
  CHECK(WilcoxonSignedRankP({1, 2, 3, 4, 5}) == Approx(0.0625).epsilon(1e-15));
  // d = -1, 2, 3, 4, 5: R+ = 14; sums >= 14 are {2,3,4,5} and {1,2,3,4,5}: p = 2 * 2/32 = 0.125.
  CHECK(WilcoxonSignedRankP({-1, 2, 3, 4, 5}) == Approx(0.125).epsilon(1e-15));
  // d = 1, 2, -3: R+ = 3, the centre of the 0..6 range: p = 1.
  CHECK(WilcoxonSignedRankP({1, 2, -3}) == 1);
}

TEST_CASE("Wilcoxon signed-rank drops zeros and takes the normal approximation", "[paired_tests]") {
  // d = 0, 1, -2, 3, ..., 10: the zero is dropped, n = 10, ranks = |d|; R- = 2, R+ = 53, T = 2.
  // mean n(n+1)/4 = 27.5, sd sqrt(n(n+1)(2n+1)/24) = sqrt(96.25) = 9.810708435174291,
  // z = (2 - 27.5) / 9.810708435174291 = -2.5992006763318902, p = erfc(|z| / sqrt 2)
  // = 0.009344113002204894 (scipy.stats.wilcoxon gives 0.009344113002204883).
  const std::vector<double> d = {0, 1, -2, 3, 4, 5, 6, 7, 8, 9, 10};
  CHECK(WilcoxonSignedRankP(d) == Approx(0.009344113002204894).epsilon(1e-12));
}

TEST_CASE("Wilcoxon signed-rank gives ties their average rank and corrects the variance",
          "[paired_tests]") {
  // d = 1, 1, -2, 2, 3, 0: zero dropped, |d| = 1, 1, 2, 2, 3 ranked 1.5, 1.5, 3.5, 3.5, 5;
  // R+ = 1.5 + 1.5 + 3.5 + 5 = 11.5, R- = 3.5, T = 3.5, mean 7.5;
  // variance (5 * 6 * 11 - (2^3 - 2 + 2^3 - 2) / 2) / 24 = (330 - 6) / 24 = 13.5;
  // z = -4 / sqrt(13.5) = -1.0886621079036347, p = 0.2763029173374835
  // (scipy.stats.wilcoxon gives 0.27630291733748347).
  CHECK(WilcoxonSignedRankP({1, 1, -2, 2, 3, 0}) == Approx(0.2763029173374835).epsilon(1e-12));
}

TEST_CASE("Wilcoxon signed-rank with nothing to rank", "[paired_tests]") {
  CHECK(WilcoxonSignedRankP({}) == 1);
  CHECK(WilcoxonSignedRankP({0, 0, 0}) == 1);
  // NaN differences are ignored: the rest is the hand-worked all-positive n = 5 case.
  CHECK(WilcoxonSignedRankP({1, NAN, 2, 3, 4, 5}) == Approx(0.0625).epsilon(1e-15));
}

TEST_CASE("Holm adjustment, worked by hand", "[paired_tests]") {
  // Sorted 0.005, 0.01, 0.03, 0.04 times 4, 3, 2, 1: 0.02, 0.03, 0.06, 0.04; running maximum
  // 0.02, 0.03, 0.06, 0.06; back in input order:
  const std::vector<double> adjusted = HolmAdjust({0.01, 0.04, 0.03, 0.005});
  REQUIRE(adjusted.size() == 4);
  CHECK(adjusted[0] == Approx(0.03).epsilon(1e-15));
  CHECK(adjusted[1] == Approx(0.06).epsilon(1e-15));
  CHECK(adjusted[2] == Approx(0.06).epsilon(1e-15));
  CHECK(adjusted[3] == Approx(0.02).epsilon(1e-15));
}

TEST_CASE("Holm adjustment caps at 1 and keeps a single p-value", "[paired_tests]") {
  // 0.5 * 2 = 1, 0.6 * 1 = 0.6 raised to the running maximum 1.
  const std::vector<double> capped = HolmAdjust({0.6, 0.5});
  CHECK(capped[0] == 1);
  CHECK(capped[1] == 1);
  CHECK(HolmAdjust({0.042}) == std::vector<double>{0.042});
  CHECK(HolmAdjust({}).empty());
}

TEST_CASE("Holm adjustment counts a missing p-value as 1", "[paired_tests]") {
  // NaN sorts last: 0.01 * 2 = 0.02, then the NaN as 1.
  const std::vector<double> adjusted = HolmAdjust({NAN, 0.01});
  CHECK(adjusted[0] == 1);
  CHECK(adjusted[1] == Approx(0.02).epsilon(1e-15));
}

TEST_CASE("Minimum detectable effect of a continuous metric, worked by hand",
          "[detectable_effect]") {
  // 100 differences alternating +1, -1: mean 0, sample sd sqrt(100 / 99) = 1.0050378152592121.
  // z_0.975 + z_0.8 = 1.959963984540054 + 0.8416212335729143 = 2.8015852181129683
  // (scipy.stats.norm.ppf); MDE = 2.8015852181129683 * 1.0050378152592121 / 10 = 0.28156990868747.
  std::vector<double> d;
  for (int i = 0; i < 100; ++i) d.push_back(i % 2 ? -1.0 : 1.0);
  CHECK(MinimumDetectableEffect(d, false) == Approx(0.28156990868747).epsilon(1e-12));
}

TEST_CASE("Minimum detectable effect of a 0/1 metric has the exact-test floor",
          "[detectable_effect]") {
  // 41 cases, one gained: sd = sqrt(1/41), normal MDE 2.8016 * 0.15617 / 6.4031 = 0.0683; but
  // the exact McNemar test needs 6 one-way discordant pairs (2 / 2^6 = 0.03125 <= 0.05, while
  // 2 / 2^5 = 0.0625 is not), so nothing below 6 / 41 = 0.14634 can be declared.
  std::vector<double> d(40, 0.0);
  d.push_back(1.0);
  CHECK(MinimumDetectableEffect(d, true) == Approx(6.0 / 41).epsilon(1e-15));
  // Read as continuous, the same differences give the normal figure:
  // 2.8015852181129683 * sqrt(1/41) / sqrt(41) = 2.8015852181129683 / 41.
  CHECK(MinimumDetectableEffect(d, false) == Approx(2.8015852181129683 / 41).epsilon(1e-14));
}

TEST_CASE("Minimum detectable effect with too few cases or no noise", "[detectable_effect]") {
  CHECK(MinimumDetectableEffect({}, false) == std::numeric_limits<double>::infinity());
  CHECK(MinimumDetectableEffect({0.3}, true) == std::numeric_limits<double>::infinity());
  CHECK(MinimumDetectableEffect({0.25, 0.25, 0.25}, false) == 0);
}
