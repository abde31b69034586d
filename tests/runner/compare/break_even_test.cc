// BreakEvenCases (runner/compare/break_even.h) with totals worked by hand: total(n) = W + n * L
// for one worker, and the answer is the first n where the slow starter's total is the smaller.
#include "runner/compare/break_even.h"

#include <catch2/catch.hpp>
#include <limits>

using plumb::BreakEvenCases;
using plumb::TimeCost;

TEST_CASE("a 4 s preload at 20 ms a case overtakes a 50 ms start at 100 ms a case after 50") {
  // (4000 - 50) / (100 - 20) = 3950 / 80 = 49.375.
  // n = 49: 4000 + 49 * 20 = 4980 against 50 + 49 * 100 = 4950 (the quick start is ahead);
  // n = 50: 4000 + 50 * 20 = 5000 against 50 + 50 * 100 = 5050 (the preload is ahead).
  const TimeCost preload{4000, 20};
  const TimeCost retrieve{50, 100};
  REQUIRE(BreakEvenCases(preload, retrieve).has_value());
  CHECK(*BreakEvenCases(preload, retrieve) == 50);
}

TEST_CASE("at an exact tie the slow starter is not yet the smaller: one more case") {
  // (1000 - 0) / (20 - 10) = 100: at n = 100 both totals are 2000; at 101, 2010 < 2020.
  CHECK(*BreakEvenCases({1000, 10}, {0, 20}) == 101);
  // A quotient that floating point rounds just below an integer: (0.3 - 0) / (0.2 - 0.1) is
  // 2.9999999999999996 in doubles; by the totals, n = 3 ties (0.3 + 0.3 against 0.6, in
  // doubles 0.6 < 0.6000000000000001), so the check against the totals decides.
  const auto n = BreakEvenCases({0.3, 0.1}, {0, 0.2});
  REQUIRE(n.has_value());
  CHECK(*n >= 3);
  CHECK(*n <= 4);
  CHECK(0.3 + *n * 0.1 < *n * 0.2);
  CHECK_FALSE(0.3 + (*n - 1) * 0.1 < (*n - 1) * 0.2);
}

TEST_CASE("a slow starter that pays back at once breaks even after one case") {
  // (10 - 5) / (100 - 1) = 0.05: after one case 10 + 1 = 11 < 5 + 100 = 105.
  CHECK(*BreakEvenCases({10, 1}, {5, 100}) == 1);
}

TEST_CASE("pairs that do not trade warm-up for per-case time have no break-even") {
  // Lower warm-up and lower per-case time: faster at every count, nothing to break even.
  CHECK_FALSE(BreakEvenCases({10, 10}, {20, 20}).has_value());
  // Higher warm-up and higher per-case time: never ahead.
  CHECK_FALSE(BreakEvenCases({20, 20}, {10, 10}).has_value());
  // Equal warm-ups or equal per-case times: no crossing.
  CHECK_FALSE(BreakEvenCases({10, 5}, {10, 20}).has_value());
  CHECK_FALSE(BreakEvenCases({30, 20}, {10, 20}).has_value());
  const double nan = std::numeric_limits<double>::quiet_NaN();
  CHECK_FALSE(BreakEvenCases({nan, 5}, {10, 20}).has_value());
}
