#include "metrics/windowed_quantile_ratio.h"

#include <catch2/catch.hpp>
#include <cmath>
#include <map>
#include <vector>

#include "metrics/binomial_sampler.h"
#include "metrics/percentile.h"
#include "metrics/seeded_random.h"

using plumb::metrics::BinomialTables;
using plumb::metrics::PercentileSorted;
using plumb::metrics::SeededRandom;
using plumb::metrics::WindowedQuantileRatio;

namespace {

/// The exact distribution of the index bootstrap's ratio: every one of the n^n equally likely
/// index tuples enumerated; the cases outside the subset (positions >= subset size) carry no
/// latency, and a tuple drawing none of the subset has no ratio (left out, renormalised).
std::map<double, double> ExactRatios(const std::vector<double>& base,
                                     const std::vector<double>& cand, size_t n, double p) {
  std::map<double, double> mass;
  std::vector<size_t> tuple(n, 0);
  double total = 0;
  for (;;) {
    std::vector<double> b, c;
    for (size_t i : tuple) {
      if (i < base.size()) b.push_back(base[i]), c.push_back(cand[i]);
    }
    if (!b.empty()) {
      std::sort(b.begin(), b.end());
      std::sort(c.begin(), c.end());
      mass[PercentileSorted(c, p) / PercentileSorted(b, p)] += 1;
      total += 1;
    }
    size_t k = 0;
    while (k < n && ++tuple[k] == n) tuple[k++] = 0;
    if (k == n) break;
  }
  for (auto& [ratio, m] : mass) m /= total;
  return mass;
}

/// Draws `draws` ratios and checks every value's frequency against the exact probability within
/// 5 binomial standard errors (plus one draw), and that no other value occurs.
void CheckAgainstEnumeration(const std::vector<double>& base, const std::vector<double>& cand,
                             size_t n, double p) {
  const std::map<double, double> exact = ExactRatios(base, cand, n, p);
  const WindowedQuantileRatio ratio(base, cand, n, p);
  const BinomialTables tables(n);
  SeededRandom random(20261205);
  constexpr int kDraws = 40000;
  std::map<double, int> seen;
  int kept = 0;
  for (int r = 0; r < kDraws; ++r) {
    const double x = ratio.Draw(random, tables);
    if (std::isnan(x)) continue;
    ++seen[x];
    ++kept;
  }
  for (const auto& [value, count] : seen) {
    INFO("p " << p << " ratio " << value);
    CHECK(exact.count(value) == 1);
  }
  for (const auto& [value, probability] : exact) {
    const double expected = probability * kept;
    const double sd = std::sqrt(kept * probability * (1 - probability));
    INFO("p " << p << " ratio " << value << " expected " << expected);
    CHECK(std::abs(seen[value] - expected) <= 5 * sd + 1);
  }
}

}  // namespace

TEST_CASE("windowed quantile ratio has the index bootstrap's exact distribution") {
  // Five cases, every subset size and percentile below, against all 5^5 = 3125 index tuples.
  // At p = 100 the window holds the top 3 ranks only, so the 1% of resamples that draw none of
  // them take the fallback that draws every cell; p = 0 likewise at the bottom.
  const std::vector<double> base = {210, 150, 390, 260, 330};
  const std::vector<double> cand = {220, 171, 350, 300, 331};
  for (double p : {0.0, 50.0, 95.0, 100.0}) CheckAgainstEnumeration(base, cand, 5, p);
}

TEST_CASE("windowed quantile ratio over a subset of the drawn cases") {
  // Four cases with latencies among six: a resample draws Binomial(6, 4/6) of them, and none
  // in (2/6)^6 of resamples (then no ratio).
  const std::vector<double> base = {100, 300, 200, 400};
  const std::vector<double> cand = {130, 280, 260, 390};
  for (double p : {50.0, 95.0, 100.0}) CheckAgainstEnumeration(base, cand, 6, p);
}

TEST_CASE("windowed quantile ratio: window of 100,000 cases at p50 is narrow") {
  std::vector<double> base(100000), cand(100000);
  for (size_t i = 0; i < base.size(); ++i) {
    base[i] = 150 + static_cast<double>((i * 7919) % 100000) / 250;
    cand[i] = base[i] * 1.05;
  }
  const WindowedQuantileRatio ratio(base, cand, base.size(), 50);
  // Half-width ceil(7 sqrt(100000 / 4)) + 2 = 1109 ranks around 49999.
  CHECK(ratio.window_begin() == 49999 - 1109);
  CHECK(ratio.window_end() == 49999 + 1109 + 2);
  const BinomialTables tables(base.size());
  SeededRandom random(7);
  // Every candidate latency is 1.05 times its base: every resample's ratio is 1.05.
  for (int r = 0; r < 50; ++r) CHECK(ratio.Draw(random, tables) == Approx(1.05).epsilon(1e-12));
}
