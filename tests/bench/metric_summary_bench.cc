// Times the run-level interval of one metric (SPEC §6.6) at a large suite's scale: SummarizeMetric
// over 20,000 invented per-case values with B = 2000, against the index bootstrap it used before
// (PercentileBootstrapMean, which SummarizeMetric called directly). Also prints the costs the
// grouped bootstrap's plan rule charges (metrics/grouped_bootstrap.h) as measured here: one
// SampleBinomial call and one standard deviation of its walk, in index draws. Not a test: the
// machine's load changes the numbers; each figure is the fastest of several runs.
// Usage: metric_summary_bench [CASES] [RESAMPLES]
#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <string>
#include <vector>

#include "metrics/binomial_sampler.h"
#include "metrics/grouped_bootstrap.h"
#include "metrics/interval.h"
#include "metrics/metric_summary.h"
#include "metrics/seeded_random.h"

namespace {

using namespace plumb::metrics;
using Clock = std::chrono::steady_clock;

constexpr int kRuns = 5;

template <typename F>
double FastestSeconds(F&& f) {
  double best = 1e300;
  for (int run = 0; run < kRuns; ++run) {
    const Clock::time_point start = Clock::now();
    f();
    best = std::min(best, std::chrono::duration<double>(Clock::now() - start).count());
  }
  return best;
}

double Uniform(SeededRandom& random) {
  return static_cast<double>(random.Next() >> 11) * 0x1.0p-53;
}

// Invented samples: `shares` gives the fraction of cases holding each of `levels`.
std::vector<double> Discrete(size_t n, const std::vector<double>& levels,
                             const std::vector<double>& shares, SeededRandom& random) {
  std::vector<double> values(n);
  for (double& v : values) {
    double u = Uniform(random);
    size_t i = 0;
    while (i + 1 < levels.size() && u >= shares[i]) u -= shares[i++];
    v = levels[i];
  }
  return values;
}

void Compare(const char* name, const std::vector<double>& values, int resamples) {
  const GroupedBootstrapPlan plan = PlanGroupedBootstrap(values);
  Interval before, after;
  const double before_s =
      FastestSeconds([&] { before = PercentileBootstrapMean(values, resamples); });
  MetricSummary summary;
  const double after_s =
      FastestSeconds([&] { summary = SummarizeMetric(values, false, resamples); });
  after = summary.interval;
  std::printf("%-34s d=%-6zu plan %s J=%zu tail=%zu\n", name, plan.distinct_values,
              plan.index_resampling ? "index" : "grouped", plan.binomial_values, plan.tail_cases);
  std::printf("  before PercentileBootstrapMean %9.3f ms  [%.6f, %.6f]\n", 1e3 * before_s,
              before.low, before.high);
  std::printf("  after  SummarizeMetric         %9.3f ms  [%.6f, %.6f]  (%.1fx)\n", 1e3 * after_s,
              after.low, after.high, before_s / after_s);
}

}  // namespace

int main(int argc, char** argv) {
  const size_t n = argc > 1 ? std::strtoull(argv[1], nullptr, 10) : 20000;
  const int resamples = argc > 2 ? std::atoi(argv[2]) : 2000;
  std::printf("metric_summary_bench: %zu cases, B = %d\n", n, resamples);
  SeededRandom random(11);

  // One index draw, as PercentileBootstrapMean's inner loop spends it.
  const std::vector<double> uniform_values = [&] {
    std::vector<double> v(n);
    for (double& x : v) x = Uniform(random);
    return v;
  }();
  const double index_s =
      FastestSeconds([&] { PercentileBootstrapMean(uniform_values, resamples); });
  const double index_ns = 1e9 * index_s / (static_cast<double>(n) * resamples);
  std::printf("index draw: %.3f ns\n", index_ns);

  // SampleBinomial: time per call against the binomial's standard deviation.
  const BinomialTables tables(n);
  std::printf("SampleBinomial (in index draws: cost per call, and per sd beyond the first):\n");
  double first_ns = 0, first_sd = 0;
  for (double p : {1e-4, 1e-3, 0.01, 0.1, 0.5}) {
    const BinomialOdds odds(p);
    const int draws = 200000;
    volatile uint64_t sink = 0;
    SeededRandom stream(3);
    const double s = FastestSeconds([&] {
      uint64_t total = 0;
      for (int i = 0; i < draws; ++i) total += SampleBinomial(stream, n, odds, tables);
      sink = total;
    });
    const double ns = 1e9 * s / draws;
    const double sd = std::sqrt(static_cast<double>(n) * p * (1 - p));
    if (first_ns == 0) {
      first_ns = ns;
      first_sd = sd;
    }
    std::printf("  n=%zu p=%-6g sd %7.2f  %7.2f ns = %6.2f index draws", n, p, sd, ns,
                ns / index_ns);
    if (sd > first_sd)
      std::printf("  slope %.2f per sd", (ns - first_ns) / (sd - first_sd) / index_ns);
    std::printf("\n");
  }

  // ~10 distinct values as token F1 gives them: many 0s and 1s, a few common fractions.
  const std::vector<double> ten =
      Discrete(n, {0, 1, 0.5, 2.0 / 3, 0.4, 0.8, 0.25, 0.75, 1.0 / 3, 0.6},
               {0.35, 0.3, 0.08, 0.06, 0.05, 0.05, 0.04, 0.03, 0.02, 0.02}, random);
  Compare("~10 distinct (token-F1-like)", ten, resamples);
  // recall@k-like: fractions of at most 5 gold spans.
  std::vector<double> levels, shares;
  for (int g = 1; g <= 5; ++g) {
    for (int h = 0; h <= g; ++h) levels.push_back(static_cast<double>(h) / g);
  }
  std::sort(levels.begin(), levels.end());
  levels.erase(std::unique(levels.begin(), levels.end()), levels.end());
  for (size_t i = 0; i < levels.size(); ++i)
    shares.push_back(1.0 / static_cast<double>(levels.size()));
  Compare("11 distinct, equal shares", Discrete(n, levels, shares, random), resamples);
  // ~200 distinct: a heavy 0 and 1 and a long tail of fractions a / b, b <= 20.
  levels = {0, 1};
  shares = {0.3, 0.25};
  std::vector<double> tail;
  for (int b = 2; b <= 20; ++b) {
    for (int a = 1; a < b; ++a) tail.push_back(static_cast<double>(a) / b);
  }
  std::sort(tail.begin(), tail.end());
  tail.erase(std::unique(tail.begin(), tail.end()), tail.end());
  for (double t : tail) {
    levels.push_back(t);
    shares.push_back(0.45 / static_cast<double>(tail.size()));
  }
  Compare(("~" + std::to_string(levels.size()) + " distinct (long tail)").c_str(),
          Discrete(n, levels, shares, random), resamples);
  Compare("all distinct (latency-like)", uniform_values, resamples);
  return 0;
}
