// Times the drift statistics (SPEC §7) at a large suite's scale: 100,000 paired cases, B = 10000
// resamples. Prints one line per statistic with the wall time, so figures can be compared across
// changes. Not a test: the machine's load changes the numbers. Usage: drift_stats_bench [PAIRS]
// [RESAMPLES]
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <vector>

#include "metrics/paired_bootstrap.h"
#include "metrics/paired_tests.h"
#include "metrics/seeded_random.h"

namespace {

using Clock = std::chrono::steady_clock;

double SecondsSince(Clock::time_point start) {
  return std::chrono::duration<double>(Clock::now() - start).count();
}

}  // namespace

int main(int argc, char** argv) {
  using namespace plumb::metrics;
  const size_t pairs = argc > 1 ? std::strtoull(argv[1], nullptr, 10) : 100000;
  const int resamples = argc > 2 ? std::atoi(argv[2]) : 10000;

  // Invented runs: a token-F1-like score in [0, 1] that the candidate moves a little, and
  // latencies of a few hundred milliseconds.
  SeededRandom random(7);
  auto uniform = [&] { return static_cast<double>(random.Next() >> 11) * 0x1.0p-53; };
  std::vector<double> base(pairs), cand(pairs), base_ms(pairs), cand_ms(pairs);
  std::vector<double> differences(pairs);
  int64_t lost = 0, gained = 0;
  for (size_t i = 0; i < pairs; ++i) {
    base[i] = uniform();
    cand[i] = std::fmin(1.0, std::fmax(0.0, base[i] + 0.2 * (uniform() - 0.52)));
    differences[i] = cand[i] - base[i];
    base_ms[i] = 200 + 300 * uniform();
    cand_ms[i] = base_ms[i] * (0.9 + 0.3 * uniform());
    if (base[i] >= 0.5 && cand[i] < 0.5) ++lost;
    if (base[i] < 0.5 && cand[i] >= 0.5) ++gained;
  }
  std::printf("drift_stats_bench: %zu pairs, B = %d\n", pairs, resamples);

  Clock::time_point start = Clock::now();
  const PairedBootstrapResult delta = PairedBootstrapMeanDelta(base, cand, resamples);
  double seconds = SecondsSince(start);
  std::printf("PairedBootstrapMeanDelta      %8.3f s  %6.2f ns/draw  delta %.6f [%.6f, %.6f]\n",
              seconds, 1e9 * seconds / (static_cast<double>(pairs) * resamples), delta.delta,
              delta.interval.low, delta.interval.high);

  for (double p : {50.0, 95.0}) {
    start = Clock::now();
    const RatioResult ratio = PairedBootstrapQuantileRatio(base_ms, cand_ms, p, resamples);
    seconds = SecondsSince(start);
    std::printf(
        "PairedBootstrapQuantileRatio  %8.3f s  %6.2f ns/draw  p%.0f ratio %.6f [%.6f, %.6f]\n",
        seconds, 1e9 * seconds / (static_cast<double>(pairs) * resamples), p, ratio.ratio,
        ratio.interval.low, ratio.interval.high);
  }

  start = Clock::now();
  const double wilcoxon = WilcoxonSignedRankP(differences);
  seconds = SecondsSince(start);
  std::printf("WilcoxonSignedRankP           %8.3f s  p %.6g\n", seconds, wilcoxon);

  start = Clock::now();
  const double mcnemar = McNemarExactP(lost, gained);
  seconds = SecondsSince(start);
  std::printf("McNemarExactP(%lld, %lld)     %8.6f s  p %.6g\n", static_cast<long long>(lost),
              static_cast<long long>(gained), seconds, mcnemar);
  return 0;
}
