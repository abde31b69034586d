#include "metrics/paired_mean_ratio.h"

#include <algorithm>
#include <cmath>
#include <limits>

#include "metrics/percentile.h"
#include "metrics/seeded_random.h"

namespace plumb::metrics {

RatioResult PairedBootstrapMeanRatio(const std::vector<double>& base,
                                     const std::vector<double>& cand, int resamples, uint64_t seed,
                                     double confidence) {
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  const RatioResult none{kNaN, {kNaN, kNaN}};
  const size_t n = base.size();
  if (n == 0 || cand.size() != n) return none;
  double base_sum = 0, cand_sum = 0;
  for (size_t i = 0; i < n; ++i) {
    if (!(std::isfinite(base[i]) && base[i] >= 0 && std::isfinite(cand[i]) && cand[i] >= 0)) {
      return none;
    }
    base_sum += base[i];
    cand_sum += cand[i];
  }
  if (base_sum == 0) return none;
  RatioResult result;
  result.ratio = cand_sum / base_sum;
  result.interval = {kNaN, kNaN};
  if (resamples < 1) return result;
  SeededRandom random(seed);
  std::vector<double> ratios;
  ratios.reserve(static_cast<size_t>(resamples));
  for (int r = 0; r < resamples; ++r) {
    double b = 0, c = 0;
    for (size_t k = 0; k < n; ++k) {
      const size_t i = static_cast<size_t>(random.UniformIndex(n));
      b += base[i];
      c += cand[i];
    }
    if (b > 0) ratios.push_back(c / b);
  }
  if (ratios.empty()) return result;
  std::sort(ratios.begin(), ratios.end());
  const double tail = (1 - confidence) / 2;
  result.interval = {PercentileSorted(ratios, 100 * tail),
                     PercentileSorted(ratios, 100 * (1 - tail))};
  return result;
}

}  // namespace plumb::metrics
