#include "metrics/paired_tests.h"

#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <vector>

#include "metrics/detectable_effect.h"

using plumb::metrics::HolmAdjust;
using plumb::metrics::McNemarDetectableDrop;
using plumb::metrics::McNemarExactP;
using plumb::metrics::McNemarPower;
using plumb::metrics::ShiftDetectableDrop;
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

TEST_CASE("Wilcoxon signed-rank drops zeros and stays exact", "[paired_tests]") {
  // d = 0, 1, -2, 3, ..., 10: the zero is dropped, n = 10, ranks = |d|; R- = 2. Of the 2^10 sign
  // patterns, those with R- <= 2 are the negative sets {}, {1}, {2}: p = 2 * 3 / 1024
  // = 0.005859375 (scipy.stats.permutation_test((d,), R+, permutation_type="samples") agrees;
  // scipy.stats.wilcoxon switches to the normal approximation with a zero and gives 0.00934).
  const std::vector<double> d = {0, 1, -2, 3, 4, 5, 6, 7, 8, 9, 10};
  CHECK(WilcoxonSignedRankP(d) == 0.005859375);
}

TEST_CASE("Wilcoxon signed-rank gives ties their average rank and stays exact", "[paired_tests]") {
  // d = 1, 1, -2, 2, 3, 0: zero dropped, |d| = 1, 1, 2, 2, 3 ranked 1.5, 1.5, 3.5, 3.5, 5;
  // R- = 3.5. Sign patterns with R- <= 3.5: negative sets {}, {1.5}, {1.5'}, {1.5, 1.5'},
  // {3.5}, {3.5'}: 6 of 32, p = 2 * 6 / 32 = 0.375 (by hand; the normal approximation with tie
  // correction would give 0.276).
  CHECK(WilcoxonSignedRankP({1, 1, -2, 2, 3, 0}) == 0.375);
}

TEST_CASE("Wilcoxon signed-rank on k identical differences is 2 / 2^k, not the normal value",
          "[paired_tests]") {
  // Every sign pattern of k equal differences is equally likely; all positive is 1 of 2^k, so
  // the two-sided p is 2 / 2^k: 0.5, 0.25, 0.125, 0.0625, 0.03125 for k = 2..6. The normal
  // approximation printed 0.157, 0.083, 0.046, 0.025, 0.014 (issue 15).
  for (int k = 2; k <= 6; ++k) {
    const std::vector<double> d(static_cast<size_t>(k), -0.25);
    CHECK(WilcoxonSignedRankP(d) == std::ldexp(1.0, 1 - k));
  }
  // With zeros beside them (unchanged cases): the zeros change nothing.
  std::vector<double> d(40, 0.0);
  d.insert(d.end(), 5, -0.5);
  CHECK(WilcoxonSignedRankP(d) == 0.0625);
}

TEST_CASE("Wilcoxon signed-rank is exact up to 50 non-zero differences", "[paired_tests]") {
  // 50 differences of -1, all tied: 2 / 2^50. From 51 on, the normal approximation.
  CHECK(WilcoxonSignedRankP(std::vector<double>(50, -1.0)) == std::ldexp(1.0, -49));
  // scipy.stats.wilcoxon([-1.0] * 51, method="approx").pvalue = 9.236596617174027e-13.
  CHECK(WilcoxonSignedRankP(std::vector<double>(51, -1.0)) ==
        Approx(9.236596617174027e-13).epsilon(1e-9));
}

TEST_CASE("Six paired cases are the fewest that can reach p <= 0.05", "[paired_tests]") {
  // 2 / 2^5 = 0.0625 > 0.05, 2 / 2^6 = 0.03125 <= 0.05; at alpha 0.01: 2 / 2^8 = 0.0078.
  CHECK(plumb::metrics::FewestPairsForSignificance(0.05) == 6);
  CHECK(plumb::metrics::FewestPairsForSignificance(0.01) == 8);
  CHECK(plumb::metrics::FewestPairsForSignificance(0.05 / 3) == 7);
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

TEST_CASE("Detectable drop of a continuous metric, worked by hand", "[detectable_effect]") {
  // 100 differences alternating +1, -1: mean 0, sample sd sqrt(100 / 99) = 1.0050378152592121,
  // standard error 0.10050378152592121. z_0.975 + z_0.8 = 1.959963984540054 + 0.8416212335729143
  // (scipy.stats.norm.ppf); the drop is 2.8015852181129683 * 0.10050378152592121
  // = 0.28156990868747 (min_effect 0.005 is below the critical 0.197).
  std::vector<double> d;
  for (int i = 0; i < 100; ++i) d.push_back(i % 2 ? -1.0 : 1.0);
  CHECK(ShiftDetectableDrop(d, 0.05, 0.005, 0.8, 1.0) == Approx(0.28156990868747).epsilon(1e-12));
  // A min_effect above the critical value takes its place: 0.25 + 0.8416212335729143 * 0.1005...
  CHECK(ShiftDetectableDrop(d, 0.05, 0.25, 0.8, 1.0) ==
        Approx(0.25 + 0.8416212335729143 * 0.10050378152592121).epsilon(1e-12));
  // Holm's first step over three gated metrics tests at 0.05 / 3: z_{1 - 0.05/6} =
  // 2.3939797998185104 (scipy.stats.norm.ppf), (2.39398 + 0.84162) * 0.1005038 = 0.325191.
  CHECK(ShiftDetectableDrop(d, 0.05 / 3, 0.005, 0.8, 1.0) ==
        Approx((2.3939797998185104 + 0.8416212335729143) * 0.10050378152592121).epsilon(1e-9));
  // Beyond the metric's range: n/a.
  CHECK(std::isnan(ShiftDetectableDrop(d, 0.05, 0.005, 0.8, 0.2)));
}

TEST_CASE("Detectable drop of a continuous metric that cannot be estimated",
          "[detectable_effect]") {
  CHECK(std::isnan(ShiftDetectableDrop({}, 0.05, 0.005, 0.8, 1.0)));
  CHECK(std::isnan(ShiftDetectableDrop({0.3}, 0.05, 0.005, 0.8, 1.0)));
  // Nothing changed: no spread to estimate from (0 would claim any change is detectable).
  CHECK(std::isnan(ShiftDetectableDrop({0.0, 0.0, 0.0, 0.0}, 0.05, 0.005, 0.8, 1.0)));
}

TEST_CASE("Exact McNemar power with no noise is a binomial tail, worked by hand",
          "[detectable_effect]") {
  // n = 6 cases, none flipping by chance (discordant rate 0): only all six lost gives
  // p = 2 / 2^6 = 0.031 <= 0.05, so the power at a drop d is d^6, and 0.8 needs
  // d = 0.8^(1/6) = 0.9634924839989961.
  CHECK(McNemarPower(6, 0.5, 0, 0.05, 0) == Approx(std::pow(0.5, 6)).epsilon(1e-13));
  CHECK(McNemarDetectableDrop(6, 0, 0.05, 0, 0.8, 1.0) == Approx(0.9634924839989961).margin(2e-6));
  // n = 10: six or more lost (and none gained) reject, so the power is P(Binomial(10, d) >= 6);
  // scipy.optimize.brentq on scipy.stats.binom.sf(5, 10, d) - 0.8 gives d = 0.6731718214777694.
  CHECK(McNemarDetectableDrop(10, 0, 0.05, 0, 0.8, 1.0) == Approx(0.6731718214777694).margin(2e-6));
  // A metric whose base mean is 0.5 cannot drop by 0.67: n/a.
  CHECK(std::isnan(McNemarDetectableDrop(10, 0, 0.05, 0, 0.8, 0.5)));
  // Five cases can never reach p <= 0.05.
  CHECK(McNemarPower(5, 1, 0, 0.05, 0) == 0);
  CHECK(std::isnan(McNemarDetectableDrop(5, 0, 0.05, 0, 0.8, 1.0)));
}

TEST_CASE("Exact McNemar power honours min_effect", "[detectable_effect]") {
  // n = 100, no noise, min_effect 0.1: the gate needs lost - gained >= 10 as well as p <= 0.05
  // (six lost suffice for the test), so the power is P(Binomial(100, d) >= 10).
  const double power = McNemarPower(100, 0.08, 0, 0.05, 0.1);
  double tail = 0;  // P(X >= 10), X ~ Binomial(100, 0.08), summed here term by term
  for (int k = 10; k <= 100; ++k) {
    tail += std::exp(std::lgamma(101) - std::lgamma(k + 1) - std::lgamma(101 - k) +
                     k * std::log(0.08) + (100 - k) * std::log(0.92));
  }
  CHECK(power == Approx(tail).epsilon(1e-10));
}
