#include "metrics/binomial_sampler.h"

#include <catch2/catch.hpp>
#include <cmath>
#include <cstdint>
#include <limits>

#include "metrics/seeded_random.h"

using plumb::metrics::BinomialOdds;
using plumb::metrics::BinomialTables;
using plumb::metrics::LogFactorial;
using plumb::metrics::SampleBinomial;
using plumb::metrics::SeededRandom;

// The distribution itself is checked against scipy.stats.binom.pmf (chi-square over 200,000
// draws) and draw for draw against a transcription in tests/reference/statistics_reference.py.

TEST_CASE("LogFactorial is exact for small k and matches gammaln(k + 1) beyond", "[binomial]") {
  CHECK(LogFactorial(0) == 0.0);
  CHECK(LogFactorial(1) == 0.0);
  CHECK(LogFactorial(5) == std::log(120.0));
  // 20! = 2432902008176640000 is exact in a double (2^18 * an odd number below 2^53).
  CHECK(LogFactorial(20) == std::log(2432902008176640000.0));
  // scipy.special.gammaln(21.0), (33.0) and (20001.0), Debian's python3-scipy 1.10.1.
  CHECK(LogFactorial(20) == Approx(42.335616460753485).epsilon(1e-15));
  CHECK(LogFactorial(32) == Approx(81.55795945611503).epsilon(1e-15));
  CHECK(LogFactorial(20000) == Approx(178075.6217371987).epsilon(1e-15));
}

TEST_CASE("The tables hold LogFactorial and reciprocals", "[binomial]") {
  const BinomialTables tables(40);
  REQUIRE(tables.log_factorial.size() == 41);
  REQUIRE(tables.reciprocal.size() == 41);
  CHECK(tables.log_factorial[31] == LogFactorial(31));
  CHECK(tables.log_factorial[32] == LogFactorial(32));
  CHECK(tables.reciprocal[4] == 0.25);
}

TEST_CASE("Degenerate binomials are answered without touching the stream", "[binomial]") {
  const BinomialTables tables(10);
  SeededRandom random(5);
  const SeededRandom untouched = random;
  CHECK(SampleBinomial(random, 0, BinomialOdds(0.5), tables) == 0);
  CHECK(SampleBinomial(random, 10, BinomialOdds(0.0), tables) == 0);
  CHECK(SampleBinomial(random, 10, BinomialOdds(1.0), tables) == 10);
  CHECK(SampleBinomial(random, 10, BinomialOdds(std::numeric_limits<double>::quiet_NaN()),
                       tables) == 0);
  SeededRandom copy = untouched;
  CHECK(random.Next() == copy.Next());
}

TEST_CASE("Binomial(1, 0.3) is one inversion step: 0 below pmf(0) = 0.7, else 1", "[binomial]") {
  // By the header: the mode floor(2 * 0.3) = 0 has mass exp(log1p(-0.3)); u below it gives 0,
  // otherwise the one step up adds pmf(1) = 0.3 and u lands under the total.
  const BinomialTables tables(1);
  const BinomialOdds p(0.3);
  const double pmf_zero = std::exp(std::log1p(-0.3));
  SeededRandom random(20261201);
  SeededRandom shadow = random;
  int ones = 0;
  for (int i = 0; i < 1000; ++i) {
    const double u = static_cast<double>(shadow.Next() >> 11) * 0x1.0p-53;
    const uint64_t draw = SampleBinomial(random, 1, p, tables);
    CHECK(draw == (u < pmf_zero ? 0u : 1u));
    ones += static_cast<int>(draw);
  }
  // Not a statistical claim, only that both outcomes occur: 1000 draws at 0.3.
  CHECK(ones > 0);
  CHECK(ones < 1000);
}

TEST_CASE("Binomial draws stay in [0, n] and repeat for a seed", "[binomial]") {
  const BinomialTables tables(20000);
  for (double p : {1e-9, 1e-5, 0.37, 0.5, 0.9995, 1 - 1e-12}) {
    SeededRandom a(7), b(7);
    const BinomialOdds odds(p);
    for (int i = 0; i < 200; ++i) {
      const uint64_t x = SampleBinomial(a, 20000, odds, tables);
      CHECK(x <= 20000);
      CHECK(x == SampleBinomial(b, 20000, odds, tables));
    }
  }
}
