#include "metrics/paired_bootstrap.h"

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdint>
#include <vector>

#include "metrics/interval.h"
#include "metrics/percentile.h"
#include "metrics/seeded_random.h"

using plumb::metrics::Interval;
using plumb::metrics::PairedBootstrapMeanDelta;
using plumb::metrics::PairedBootstrapQuantileRatio;
using plumb::metrics::PairedBootstrapResult;
using plumb::metrics::PercentileBootstrapMean;
using plumb::metrics::PercentileSorted;
using plumb::metrics::RatioResult;
using plumb::metrics::SeededRandom;
using plumb::metrics::SplitMix64Next;

TEST_CASE("SplitMix64 reproduces the published sequence for seed 1234567", "[seeded_random]") {
  // Rosetta Code, task "Pseudo-random numbers/Splitmix64" (from memory).
  uint64_t state = 1234567;
  CHECK(SplitMix64Next(&state) == 6457827717110365317u);
  CHECK(SplitMix64Next(&state) == 3203168211198807973u);
  CHECK(SplitMix64Next(&state) == 9817491932198370423u);
  CHECK(SplitMix64Next(&state) == 4593380528125082431u);
  CHECK(SplitMix64Next(&state) == 16408922859458223821u);
}

TEST_CASE("SeededRandom: one seed, one stream", "[seeded_random]") {
  SeededRandom a(20261201), b(20261201), c(20261202);
  bool any_difference = false;
  for (int i = 0; i < 100; ++i) {
    const uint64_t x = a.Next();
    CHECK(x == b.Next());
    if (x != c.Next()) any_difference = true;
  }
  CHECK(any_difference);
}

TEST_CASE("SeededRandom::UniformIndex stays in range and covers it", "[seeded_random]") {
  SeededRandom random(99);
  for (int i = 0; i < 1000; ++i) CHECK(random.UniformIndex(1) == 0);
  // 10000 draws over 10 values: each count is Binomial(10000, 0.1), mean 1000, sd 30; a count
  // outside 850..1150 (5 sd) would mean a broken mapping, not bad luck.
  std::vector<int> counts(10, 0);
  for (int i = 0; i < 10000; ++i) {
    const uint64_t x = random.UniformIndex(10);
    REQUIRE(x < 10);
    ++counts[x];
  }
  for (int count : counts) {
    CHECK(count > 850);
    CHECK(count < 1150);
  }
  // 2^63 + 1 makes Lemire's rejection step run on almost half the draws; the result must still
  // be below the bound, and both halves of the range must be reached.
  const uint64_t bound = (uint64_t{1} << 63) + 1;
  int high_half = 0;
  for (int i = 0; i < 1000; ++i) {
    const uint64_t x = random.UniformIndex(bound);
    REQUIRE(x < bound);
    if (x >= bound / 2) ++high_half;
  }
  CHECK(high_half > 400);
  CHECK(high_half < 600);
}

TEST_CASE("Paired bootstrap delta is the mean difference, worked by hand", "[paired_bootstrap]") {
  // base 0, 1, 1, 0 and cand 1, 1, 0, 1: differences 1, 0, -1, 1, mean 0.25.
  const PairedBootstrapResult r = PairedBootstrapMeanDelta({0, 1, 1, 0}, {1, 1, 0, 1});
  CHECK(r.delta == 0.25);
  CHECK(r.interval.low < 0.25);
  CHECK(r.interval.high > 0.25);
  CHECK(r.interval.low >= -1);
  CHECK(r.interval.high <= 1);
}

TEST_CASE("Paired bootstrap delta is the bootstrap of the differences", "[paired_bootstrap]") {
  const std::vector<double> base = {0.5, 0.75, 0.2, 1, 0.4, 0.9, 0.66, 0};
  const std::vector<double> cand = {0.6, 0.7, 0.5, 1, 0.35, 1, 0.66, 0.25};
  std::vector<double> differences;
  for (size_t i = 0; i < base.size(); ++i) differences.push_back(cand[i] - base[i]);
  const PairedBootstrapResult r = PairedBootstrapMeanDelta(base, cand, 4000, 17, 0.9);
  const Interval expected = PercentileBootstrapMean(differences, 4000, 17, 0.9);
  CHECK(r.interval.low == expected.low);
  CHECK(r.interval.high == expected.high);
}

TEST_CASE("Paired bootstrap delta of a constant shift has no spread", "[paired_bootstrap]") {
  // Every difference is exactly 0.5 (all values are binary fractions), so is every resample mean.
  const PairedBootstrapResult r = PairedBootstrapMeanDelta({0.25, 0, 0.5}, {0.75, 0.5, 1});
  CHECK(r.delta == 0.5);
  CHECK(r.interval.low == 0.5);
  CHECK(r.interval.high == 0.5);
  const PairedBootstrapResult same = PairedBootstrapMeanDelta({0.3, 0.7}, {0.3, 0.7});
  CHECK(same.delta == 0);
  CHECK(same.interval.low == 0);
  CHECK(same.interval.high == 0);
}

TEST_CASE("Paired bootstrap delta without pairs", "[paired_bootstrap]") {
  const PairedBootstrapResult empty = PairedBootstrapMeanDelta({}, {});
  CHECK(empty.delta == 0);
  CHECK(empty.interval.low == 0);
  CHECK(empty.interval.high == 0);
  const PairedBootstrapResult mismatched = PairedBootstrapMeanDelta({1, 2}, {1});
  CHECK(std::isnan(mismatched.delta));
  CHECK(std::isnan(mismatched.interval.low));
}

TEST_CASE("Quantile ratio of a doubled latency is exactly 2", "[paired_bootstrap]") {
  // Doubling is exact in binary floating point and commutes with definition 7's interpolation,
  // so every resample's ratio is exactly 2 as well.
  const std::vector<double> base = {120, 95.5, 310, 150, 101, 99.25, 180};
  std::vector<double> cand;
  for (double v : base) cand.push_back(2 * v);
  for (double p : {50.0, 95.0}) {
    const RatioResult r = PairedBootstrapQuantileRatio(base, cand, p, 1000, 3);
    CHECK(r.ratio == 2);
    CHECK(r.interval.low == 2);
    CHECK(r.interval.high == 2);
  }
}

TEST_CASE("Quantile ratio of the medians, worked by hand", "[paired_bootstrap]") {
  // base 100, 200, 300, 400: median 250; cand 100, 200, 300, 800: median 250 -> ratio 1.
  // The maxima (p = 100) are 400 and 800 -> ratio 2.
  CHECK(PairedBootstrapQuantileRatio({100, 200, 300, 400}, {100, 200, 300, 800}, 50).ratio == 1);
  CHECK(PairedBootstrapQuantileRatio({100, 200, 300, 400}, {100, 200, 300, 800}, 100).ratio == 2);
}

TEST_CASE("Quantile ratio reads the same order statistics as sorting each resample",
          "[paired_bootstrap]") {
  // The header's contract spelled out: resample after resample, n indices from
  // SeededRandom(seed).UniformIndex(n), the ratio of definition-7 percentiles of the resampled
  // values, then definition-7 percentiles of the ratios. Ties included on purpose.
  const std::vector<double> base = {210, 180, 180, 450, 200, 199, 260, 310, 180, 205, 222};
  const std::vector<double> cand = {190, 185, 240, 480, 200, 150, 270, 290, 170, 206, 500};
  const int resamples = 500;
  const uint64_t seed = 41;
  for (double p : {0.0, 10.0, 50.0, 90.0, 95.0, 100.0}) {
    SeededRandom random(seed);
    const size_t n = base.size();
    std::vector<double> ratios;
    for (int r = 0; r < resamples; ++r) {
      std::vector<double> b, c;
      for (size_t i = 0; i < n; ++i) {
        const uint64_t k = random.UniformIndex(n);
        b.push_back(base[k]);
        c.push_back(cand[k]);
      }
      std::sort(b.begin(), b.end());
      std::sort(c.begin(), c.end());
      ratios.push_back(PercentileSorted(c, p) / PercentileSorted(b, p));
    }
    std::sort(ratios.begin(), ratios.end());
    const RatioResult r = PairedBootstrapQuantileRatio(base, cand, p, resamples, seed);
    const double tail = (1 - 0.95) / 2;
    CHECK(r.interval.low == PercentileSorted(ratios, 100 * tail));
    CHECK(r.interval.high == PercentileSorted(ratios, 100 * (1 - tail)));
  }
}

TEST_CASE("Quantile ratio is undefined for non-positive or missing latencies",
          "[paired_bootstrap]") {
  CHECK(std::isnan(PairedBootstrapQuantileRatio({}, {}, 50).ratio));
  CHECK(std::isnan(PairedBootstrapQuantileRatio({0, 10}, {5, 10}, 50).ratio));
  CHECK(std::isnan(PairedBootstrapQuantileRatio({10, 20}, {5}, 50).ratio));
  CHECK(std::isnan(PairedBootstrapQuantileRatio({10, NAN}, {5, 6}, 50).interval.low));
}
