#include "metrics/sample_percentile_bootstrap.h"

#include <algorithm>
#include <cmath>
#include <limits>

#include "metrics/percentile.h"
#include "metrics/seeded_random.h"

namespace plumb::metrics {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// Q_p of a resample of `sorted` given as how often each sorted position was drawn: the
// order statistics `rank.lower` and `rank.lower + 1` are read off the running counts.
double ResamplePercentile(const std::vector<double>& sorted, const std::vector<uint32_t>& count,
                          const PercentileRank& rank) {
  double below = kNaN, above = kNaN;
  size_t seen = 0;
  for (size_t i = 0; i < sorted.size(); ++i) {
    seen += count[i];
    if (std::isnan(below) && seen > rank.lower) below = sorted[i];
    if (seen > rank.lower + 1) {
      above = sorted[i];
      break;
    }
  }
  if (std::isnan(above)) above = below;
  return InterpolateBetween(below, above, rank.gamma);
}

// Draws one resample of `sorted` (its size) into `count` and returns its Q_p.
double Resample(const std::vector<double>& sorted, const PercentileRank& rank, SeededRandom* random,
                std::vector<uint32_t>* count) {
  std::fill(count->begin(), count->end(), 0);
  for (size_t i = 0; i < sorted.size(); ++i) ++(*count)[random->UniformIndex(sorted.size())];
  return ResamplePercentile(sorted, *count, rank);
}

Interval TailsOf(std::vector<double>* draws, double confidence) {
  std::sort(draws->begin(), draws->end());
  const double tail = (1 - confidence) / 2;
  return {PercentileSorted(*draws, 100 * tail), PercentileSorted(*draws, 100 * (1 - tail))};
}

bool AllFinite(const std::vector<double>& values, bool positive) {
  return std::all_of(values.begin(), values.end(),
                     [&](double v) { return std::isfinite(v) && (!positive || v > 0); });
}

}  // namespace

PercentileEstimate BootstrapPercentile(const std::vector<double>& values, double p, int resamples,
                                       uint64_t seed, double confidence) {
  if (values.empty() || !AllFinite(values, false)) return {kNaN, {kNaN, kNaN}};
  std::vector<double> sorted = values;
  std::sort(sorted.begin(), sorted.end());
  PercentileEstimate out;
  out.value = PercentileSorted(sorted, p);
  if (resamples < 1 || sorted.size() == 1) {
    out.interval = {out.value, out.value};
    return out;
  }
  const PercentileRank rank = PercentileRankType7(sorted.size(), p);
  SeededRandom random(seed);
  std::vector<uint32_t> count(sorted.size());
  std::vector<double> draws(static_cast<size_t>(resamples));
  for (double& draw : draws) draw = Resample(sorted, rank, &random, &count);
  out.interval = TailsOf(&draws, confidence);
  return out;
}

RatioResult UnpairedBootstrapPercentileRatio(const std::vector<double>& den,
                                             const std::vector<double>& num, double p,
                                             int resamples, uint64_t seed, double confidence) {
  const RatioResult none{kNaN, {kNaN, kNaN}};
  if (den.empty() || num.empty() || !AllFinite(den, true) || !AllFinite(num, true)) return none;
  std::vector<double> sorted_den = den, sorted_num = num;
  std::sort(sorted_den.begin(), sorted_den.end());
  std::sort(sorted_num.begin(), sorted_num.end());
  RatioResult out;
  out.ratio = PercentileSorted(sorted_num, p) / PercentileSorted(sorted_den, p);
  if (resamples < 1) {
    out.interval = {out.ratio, out.ratio};
    return out;
  }
  const PercentileRank rank_den = PercentileRankType7(den.size(), p);
  const PercentileRank rank_num = PercentileRankType7(num.size(), p);
  SeededRandom random(seed);
  std::vector<uint32_t> count_den(den.size()), count_num(num.size());
  std::vector<double> draws(static_cast<size_t>(resamples));
  for (double& draw : draws) {
    const double d = Resample(sorted_den, rank_den, &random, &count_den);
    draw = Resample(sorted_num, rank_num, &random, &count_num) / d;
  }
  out.interval = TailsOf(&draws, confidence);
  return out;
}

}  // namespace plumb::metrics
