#include "metrics/binomial_sampler.h"

#include <algorithm>
#include <cmath>

namespace plumb::metrics {
namespace {

constexpr uint64_t kStirlingFrom = 32;
constexpr double kHalfLog2Pi = 0.91893853320467274178;  // ln(2 pi) / 2

}  // namespace

double LogFactorial(uint64_t k) {
  if (k < kStirlingFrom) {
    double product = 1;
    for (uint64_t i = 2; i <= k; ++i) product *= static_cast<double>(i);
    return std::log(product);
  }
  const double x = static_cast<double>(k);
  const double r = 1 / x;
  const double r2 = r * r;
  // ln k! = (k + 1/2) ln k - k + ln(2 pi) / 2 + 1/(12k) - 1/(360k^3) + 1/(1260k^5) - ...
  const double series = r * (1.0 / 12 - r2 * (1.0 / 360 - r2 * (1.0 / 1260)));
  return (x + 0.5) * std::log(x) - x + kHalfLog2Pi + series;
}

BinomialTables::BinomialTables(uint64_t max_trials)
    : log_factorial(max_trials + 1), reciprocal(max_trials + 1) {
  for (uint64_t k = 0; k <= max_trials; ++k) {
    log_factorial[k] = LogFactorial(k);
    reciprocal[k] = 1 / static_cast<double>(k);
  }
}

BinomialOdds::BinomialOdds(double probability)
    : p(probability),
      log_p(std::log(probability)),
      log_q(std::log1p(-probability)),
      odds(probability / (1 - probability)),
      inverse_odds((1 - probability) / probability) {}

uint64_t SampleBinomial(SeededRandom& random, uint64_t n, const BinomialOdds& p,
                        const BinomialTables& tables) {
  if (n == 0 || !(p.p > 0)) return 0;  // also a NaN p
  if (p.p >= 1) return n;
  const double* log_factorial = tables.log_factorial.data();
  const double* reciprocal = tables.reciprocal.data();
  const double trials = static_cast<double>(n);
  const uint64_t mode = std::min(n, static_cast<uint64_t>((trials + 1) * p.p));
  const double mode_d = static_cast<double>(mode);
  const double pmf_mode =
      std::exp(log_factorial[n] - log_factorial[mode] - log_factorial[n - mode] + mode_d * p.log_p +
               (trials - mode_d) * p.log_q);
  for (;;) {
    const double u = static_cast<double>(random.Next() >> 11) * 0x1.0p-53;
    if (u < pmf_mode) return mode;
    // The mass past the mode is summed per side, above (mass_up) and below (mass_down), and u
    // less the mode's mass is compared with their sum once per round: the two sums do not wait
    // on each other, which keeps the walk about twice as fast as one running total.
    const double w = u - pmf_mode;
    uint64_t up = mode, down = mode;
    double pmf_up = pmf_mode, pmf_down = pmf_mode, mass_up = 0, mass_down = 0;
    const uint64_t rounds = std::min(n - mode, mode);
    for (uint64_t r = 0; r < rounds; ++r) {
      pmf_up *= static_cast<double>(n - up) * reciprocal[up + 1] * p.odds;
      pmf_down *= static_cast<double>(down) * reciprocal[n - down + 1] * p.inverse_odds;
      ++up;
      --down;
      const double mass_down_before = mass_down;
      mass_up += pmf_up;
      mass_down += pmf_down;
      if (w < mass_up + mass_down) return w < mass_up + mass_down_before ? up : down;
    }
    // One side is at its end; the other goes on alone. Mass that underflowed to 0 adds nothing
    // (past the mode both sides fall), so a side stops there.
    while (up < n && pmf_up > 0) {
      pmf_up *= static_cast<double>(n - up) * reciprocal[up + 1] * p.odds;
      ++up;
      mass_up += pmf_up;
      if (w < mass_up + mass_down) return up;
    }
    while (down > 0 && pmf_down > 0) {
      pmf_down *= static_cast<double>(down) * reciprocal[n - down + 1] * p.inverse_odds;
      --down;
      mass_down += pmf_down;
      if (w < mass_up + mass_down) return down;
    }
    // u lies above the whole computed mass (by rounding): try again with the next u.
  }
}

}  // namespace plumb::metrics
