// Prints plumb_metrics' statistics for inputs read from stdin, one command per line, so
// statistics_reference.py can recompute each value with numpy, scipy and statsmodels. Numbers
// travel as shortest round-trip decimal text on the way in (Python's repr) and as %.17g on the
// way out, so no value changes in transit. Commands (counts precede the lists they size):
//   quantile P                               -> NormalQuantile(P)
//   wilson SUCCESSES N CONFIDENCE            -> low high
//   percentile P N V...                      -> PercentileSorted(sorted V, P)
//   latency N V...                           -> n p50 p90 p95 p99 mean max
//   metric BINARY RESAMPLES SEED N V...      -> mean n low high wilson
//   bootstrap RESAMPLES SEED CONFIDENCE N V...  -> low high
//   grouped RESAMPLES SEED CONFIDENCE N V... -> low high (GroupedBootstrapMean), then the plan:
//                                               index_resampling distinct binomial_values
//                                               tail_cases
//   plan-costs                               -> kBinomialDrawCost kBinomialSdCost
//   binomial SEED N P COUNT                  -> COUNT draws of SampleBinomial(N, P), one stream
//   logfactorial N K...                      -> LogFactorial(K) for each K
//   draw SEED BOUND COUNT                    -> COUNT of SeededRandom(SEED).UniformIndex(BOUND)
//   next SEED COUNT                          -> COUNT values of SeededRandom(SEED).Next()
//   mcnemar B C                              -> p
//   wilcoxon N D...                          -> p
//   holm N P...                              -> adjusted p-values
//   delta RESAMPLES SEED CONFIDENCE N BASE... CAND...       -> delta low high
//   ratio P RESAMPLES SEED CONFIDENCE N BASE... CAND...     -> ratio low high
//   shiftdrop LEVEL MIN_EFFECT POWER MAX N D... -> ShiftDetectableDrop
//   mcnemarpower N LOST GAINED LEVEL MIN_EFFECT  -> McNemarPower
//   mcnemardrop N DISCORDANT LEVEL MIN_EFFECT POWER MAX -> McNemarDetectableDrop
//   binomtail K N P                          -> BinomialProbability(K; N, P) BinomialUpperTail
//   subsetmean RESAMPLES SEED N_ALL K V...   -> low high: 95% percentile interval of the drift
//                                               bootstrap's mean over a K-case subset of N_ALL
//                                               (draws in the subset ~ Binomial(N_ALL, K/N_ALL),
//                                               then GroupedSum; resamples drawing none left out)
//   windowed P RESAMPLES SEED N_ALL K BASE... CAND... -> low high: the same for
//                                               WindowedQuantileRatio's resamples
#include <algorithm>
#include <cinttypes>
#include <cstdio>
#include <cstdlib>
#include <iostream>
#include <sstream>
#include <string>
#include <vector>

#include "metrics/binomial_distribution.h"
#include "metrics/binomial_sampler.h"
#include "metrics/detectable_effect.h"
#include "metrics/grouped_bootstrap.h"
#include "metrics/interval.h"
#include "metrics/metric_summary.h"
#include "metrics/paired_bootstrap.h"
#include "metrics/paired_tests.h"
#include "metrics/percentile.h"
#include "metrics/seeded_random.h"
#include "metrics/windowed_quantile_ratio.h"

namespace {

using namespace plumb::metrics;

double ReadDouble(std::istream& in) {
  std::string text;
  in >> text;
  return std::strtod(text.c_str(), nullptr);
}

std::vector<double> ReadCount(std::istream& in, size_t n) {
  std::vector<double> values(n);
  for (double& v : values) v = ReadDouble(in);
  return values;
}

// A count followed by that many values.
std::vector<double> ReadValues(std::istream& in) {
  size_t n = 0;
  in >> n;
  return ReadCount(in, n);
}

void Print(const std::vector<double>& values) {
  for (size_t i = 0; i < values.size(); ++i) std::printf(i ? " %.17g" : "%.17g", values[i]);
  std::printf("\n");
}

bool Run(const std::string& line) {
  std::istringstream in(line);
  std::string command;
  in >> command;
  if (command == "quantile") {
    Print({NormalQuantile(ReadDouble(in))});
  } else if (command == "wilson") {
    int64_t successes = 0, n = 0;
    in >> successes >> n;
    const Interval interval = WilsonInterval(successes, n, ReadDouble(in));
    Print({interval.low, interval.high});
  } else if (command == "percentile") {
    const double p = ReadDouble(in);
    std::vector<double> values = ReadValues(in);
    std::sort(values.begin(), values.end());
    Print({PercentileSorted(values, p)});
  } else if (command == "latency") {
    const LatencySummary s = SummarizeLatency(ReadValues(in));
    Print({static_cast<double>(s.n), s.p50, s.p90, s.p95, s.p99, s.mean, s.max});
  } else if (command == "metric") {
    int binary = 0, resamples = 0;
    uint64_t seed = 0;
    in >> binary >> resamples >> seed;
    const MetricSummary s = SummarizeMetric(ReadValues(in), binary != 0, resamples, seed);
    Print(
        {s.mean, static_cast<double>(s.n), s.interval.low, s.interval.high, s.wilson ? 1.0 : 0.0});
  } else if (command == "bootstrap") {
    int resamples = 0;
    uint64_t seed = 0;
    in >> resamples >> seed;
    const double confidence = ReadDouble(in);
    const Interval interval = PercentileBootstrapMean(ReadValues(in), resamples, seed, confidence);
    Print({interval.low, interval.high});
  } else if (command == "grouped") {
    int resamples = 0;
    uint64_t seed = 0;
    in >> resamples >> seed;
    const double confidence = ReadDouble(in);
    const std::vector<double> values = ReadValues(in);
    const Interval interval = GroupedBootstrapMean(values, resamples, seed, confidence);
    const GroupedBootstrapPlan plan = PlanGroupedBootstrap(values);
    Print({interval.low, interval.high, plan.index_resampling ? 1.0 : 0.0,
           static_cast<double>(plan.distinct_values), static_cast<double>(plan.binomial_values),
           static_cast<double>(plan.tail_cases)});
  } else if (command == "plan-costs") {
    Print({kBinomialDrawCost, kBinomialSdCost});
  } else if (command == "binomial") {
    uint64_t seed = 0, n = 0, count = 0;
    in >> seed >> n;
    const BinomialOdds odds(ReadDouble(in));
    in >> count;
    const BinomialTables tables(n);
    SeededRandom random(seed);
    for (uint64_t i = 0; i < count; ++i) {
      std::printf(i ? " %" PRIu64 : "%" PRIu64, SampleBinomial(random, n, odds, tables));
    }
    std::printf("\n");
  } else if (command == "logfactorial") {
    size_t n = 0;
    in >> n;
    std::vector<double> out(n);
    for (double& v : out) {
      uint64_t k = 0;
      in >> k;
      v = LogFactorial(k);
    }
    Print(out);
  } else if (command == "draw" || command == "next") {
    uint64_t seed = 0, bound = 0, count = 0;
    in >> seed;
    if (command == "draw") in >> bound;
    in >> count;
    SeededRandom random(seed);
    for (uint64_t i = 0; i < count; ++i) {
      const uint64_t value = command == "draw" ? random.UniformIndex(bound) : random.Next();
      std::printf(i ? " %" PRIu64 : "%" PRIu64, value);
    }
    std::printf("\n");
  } else if (command == "mcnemar") {
    int64_t b = 0, c = 0;
    in >> b >> c;
    Print({McNemarExactP(b, c)});
  } else if (command == "wilcoxon") {
    Print({WilcoxonSignedRankP(ReadValues(in))});
  } else if (command == "holm") {
    Print(HolmAdjust(ReadValues(in)));
  } else if (command == "subsetmean" || command == "windowed") {
    const double p = command == "windowed" ? ReadDouble(in) : 0;
    int resamples = 0;
    uint64_t seed = 0, n_all = 0;
    size_t k = 0;
    in >> resamples >> seed >> n_all >> k;
    const std::vector<double> base = ReadCount(in, k);
    const BinomialTables tables(n_all);
    SeededRandom random(seed);
    std::vector<double> stats;
    if (command == "windowed") {
      const WindowedQuantileRatio ratio(base, ReadCount(in, k), n_all, p);
      for (int r = 0; r < resamples; ++r) {
        const double x = ratio.Draw(random, tables);
        if (x == x) stats.push_back(x);
      }
    } else {
      const GroupedSum sum(base);
      const BinomialOdds in_subset(static_cast<double>(k) / static_cast<double>(n_all));
      for (int r = 0; r < resamples; ++r) {
        const uint64_t drawn =
            k == n_all ? n_all : SampleBinomial(random, n_all, in_subset, tables);
        if (drawn > 0) stats.push_back(sum.Sum(drawn, random, tables) / static_cast<double>(drawn));
      }
    }
    std::sort(stats.begin(), stats.end());
    Print({PercentileSorted(stats, 2.5), PercentileSorted(stats, 97.5)});
  } else if (command == "delta" || command == "ratio") {
    const double p = command == "ratio" ? ReadDouble(in) : 0;
    int resamples = 0;
    uint64_t seed = 0;
    size_t n = 0;
    in >> resamples >> seed;
    const double confidence = ReadDouble(in);
    in >> n;
    const std::vector<double> base = ReadCount(in, n);
    const std::vector<double> cand = ReadCount(in, n);
    if (command == "delta") {
      const PairedBootstrapResult r =
          PairedBootstrapMeanDelta(base, cand, resamples, seed, confidence);
      Print({r.delta, r.interval.low, r.interval.high});
    } else {
      const RatioResult r =
          PairedBootstrapQuantileRatio(base, cand, p, resamples, seed, confidence);
      Print({r.ratio, r.interval.low, r.interval.high});
    }
  } else if (command == "shiftdrop") {
    const double level = ReadDouble(in), min_effect = ReadDouble(in), power = ReadDouble(in);
    const double max_drop = ReadDouble(in);
    Print({ShiftDetectableDrop(ReadValues(in), level, min_effect, power, max_drop)});
  } else if (command == "mcnemarpower") {
    int64_t n = 0;
    in >> n;
    const double lost = ReadDouble(in), gained = ReadDouble(in), level = ReadDouble(in);
    const double min_effect = ReadDouble(in);
    Print({McNemarPower(n, lost, gained, level, min_effect)});
  } else if (command == "mcnemardrop") {
    int64_t n = 0;
    in >> n;
    const double discordant = ReadDouble(in), level = ReadDouble(in);
    const double min_effect = ReadDouble(in), power = ReadDouble(in), max_drop = ReadDouble(in);
    Print({McNemarDetectableDrop(n, discordant, level, min_effect, power, max_drop)});
  } else if (command == "binomtail") {
    int64_t k = 0, n = 0;
    in >> k >> n;
    const double p = ReadDouble(in);
    Print({BinomialProbability(k, n, p), BinomialUpperTail(k, n, p)});
  } else {
    std::fprintf(stderr, "statistics_driver: unknown command '%s'\n", command.c_str());
    return false;
  }
  return !in.fail();
}

}  // namespace

int main() {
  std::string line;
  while (std::getline(std::cin, line)) {
    if (line.empty()) continue;
    if (!Run(line)) {
      std::fprintf(stderr, "statistics_driver: cannot read the command: %s\n", line.c_str());
      return 2;
    }
    std::fflush(stdout);
  }
  return 0;
}
