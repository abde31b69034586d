#include "metrics/unpaired_bootstrap.h"

#include <algorithm>
#include <cmath>
#include <limits>

#include "metrics/percentile.h"
#include "metrics/seeded_random.h"

namespace plumb::metrics {

RatioResult UnpairedBootstrapMeanRatio(const std::vector<double>& base,
                                       const std::vector<double>& cand, int resamples,
                                       uint64_t seed, double confidence) {
  const double nan = std::numeric_limits<double>::quiet_NaN();
  const RatioResult none{nan, {nan, nan}};
  if (base.empty() || cand.empty()) return none;
  auto usable = [](double v) { return std::isfinite(v) && v > 0; };
  if (!std::all_of(base.begin(), base.end(), usable) ||
      !std::all_of(cand.begin(), cand.end(), usable)) {
    return none;
  }
  auto mean = [](const std::vector<double>& values) {
    double total = 0;
    for (double v : values) total += v;
    return total / static_cast<double>(values.size());
  };
  RatioResult result;
  result.ratio = mean(cand) / mean(base);
  if (base.size() == 1 && cand.size() == 1) {
    result.interval = {nan, nan};  // one value a side: nothing varies, nothing to resample
    return result;
  }
  if (resamples < 1) {
    result.interval = {result.ratio, result.ratio};
    return result;
  }
  SeededRandom random(seed);
  auto resample_mean = [&](const std::vector<double>& values) {
    double total = 0;
    for (size_t i = 0; i < values.size(); ++i) total += values[random.UniformIndex(values.size())];
    return total / static_cast<double>(values.size());
  };
  std::vector<double> ratios(static_cast<size_t>(resamples));
  for (double& ratio : ratios) {
    const double b = resample_mean(base);
    ratio = resample_mean(cand) / b;
  }
  std::sort(ratios.begin(), ratios.end());
  const double tail = (1 - confidence) / 2;
  result.interval = {PercentileSorted(ratios, 100 * tail),
                     PercentileSorted(ratios, 100 * (1 - tail))};
  return result;
}

}  // namespace plumb::metrics
