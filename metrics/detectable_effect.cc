#include "metrics/detectable_effect.h"

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <limits>
#include <unordered_map>

#include "metrics/binomial_distribution.h"
#include "metrics/interval.h"
#include "metrics/paired_tests.h"

namespace plumb::metrics {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

/// k(D) of McNemarPower for one n, level and min_effect, remembered across the bisection's
/// power evaluations (they visit overlapping ranges of D).
class CriticalLost {
 public:
  CriticalLost(int64_t n, double level, double min_effect) : level_(level) {
    // (lost - gained) / n >= min_effect, with lost - gained = 2 lost - D; the tolerance keeps a
    // delta that equals -min_effect in floating point on the failing side, as the verdict does.
    margin_ = static_cast<int64_t>(std::ceil(static_cast<double>(n) * min_effect - 1e-9));
    if (margin_ < 1) margin_ = 1;  // more lost than gained
  }

  /// The fewest lost cases out of d discordant ones that the gate calls a regression; d + 1
  /// when none does.
  int64_t operator()(int64_t d) {
    auto it = cache_.find(d);
    if (it != cache_.end()) return it->second;
    int64_t low = (d + margin_ + 1) / 2;  // 2 lost - d >= margin
    int64_t result = d + 1;
    if (low <= d && McNemarExactP(d, 0) <= level_) {
      // The p-value falls as lost grows, so the answer is the one c in [low, d] with p(c) <=
      // level and (c == low or p(c - 1) > level). A neighbouring d's answer is usually this
      // one's or one below it: checking those two first spares most of the bisection (the
      // same answer, found with two or four p-values instead of some twelve).
      auto rejects = [&](int64_t lost) { return McNemarExactP(lost, d - lost) <= level_; };
      auto near = cache_.find(d - 1);
      if (near == cache_.end()) near = cache_.find(d + 1);
      if (near != cache_.end()) {
        for (int64_t c : {near->second, near->second + 1}) {
          if (c < low || c > d || !rejects(c) || (c > low && rejects(c - 1))) continue;
          cache_.emplace(d, c);
          return c;
        }
      }
      int64_t high = d;  // McNemarExactP(high, d - high) <= level
      while (low < high) {
        const int64_t mid = low + (high - low) / 2;
        if (McNemarExactP(mid, d - mid) <= level_) {
          high = mid;
        } else {
          low = mid + 1;
        }
      }
      result = high;
    }
    cache_.emplace(d, result);
    return result;
  }

 private:
  double level_;
  int64_t margin_ = 1;
  std::unordered_map<int64_t, int64_t> cache_;
};

double Power(int64_t n, double lost_rate, double gained_rate, CriticalLost* critical) {
  const double discordant = std::min(1.0, lost_rate + gained_rate);
  if (discordant <= 0) return 0;
  const double share = std::min(1.0, lost_rate / discordant);
  const double mean = static_cast<double>(n) * discordant;
  const double spread = 10 * std::sqrt(mean * (1 - discordant)) + 2;
  const int64_t first = std::max<int64_t>(0, static_cast<int64_t>(std::floor(mean - spread)));
  const int64_t last = std::min<int64_t>(n, static_cast<int64_t>(std::ceil(mean + spread)));
  double power = 0;
  for (int64_t d = first; d <= last; ++d) {
    const int64_t k = (*critical)(d);
    if (k > d) continue;
    const double weight = BinomialProbability(d, n, discordant);
    if (weight == 0) continue;
    power += weight * BinomialUpperTail(k, d, share);
  }
  return std::min(1.0, power);
}

}  // namespace

double McNemarPower(int64_t n, double lost_rate, double gained_rate, double level,
                    double min_effect) {
  if (n < 1) return 0;
  CriticalLost critical(n, level, min_effect);
  return Power(n, lost_rate, gained_rate, &critical);
}

double McNemarDetectableDrop(int64_t n, double discordant_rate, double level, double min_effect,
                             double power, double max_drop) {
  if (n < 1 || !(discordant_rate >= 0) || !(max_drop > 0)) return kNaN;
  const double noise = std::min(1.0, discordant_rate) / 2;
  const double cap = std::min(max_drop, 1 - 2 * noise);
  if (!(cap > 0)) return kNaN;
  CriticalLost critical(n, level, min_effect);
  auto power_at = [&](double drop) { return Power(n, noise + drop, noise, &critical); };
  if (power_at(cap) < power) return kNaN;
  double low = 0, high = cap;
  while (high - low > 1e-6) {
    const double mid = 0.5 * (low + high);
    (power_at(mid) >= power ? high : low) = mid;
  }
  return high;
}

double ShiftDetectableDrop(const std::vector<double>& differences, double level, double min_effect,
                           double power, double max_drop) {
  const size_t n = differences.size();
  if (n < 2) return kNaN;
  // Every difference equal: no spread (the mean's rounding would leave a spurious tiny one).
  if (std::all_of(differences.begin(), differences.end(),
                  [&](double d) { return d == differences.front(); })) {
    return kNaN;
  }
  double total = 0;
  for (double d : differences) total += d;
  const double mean = total / static_cast<double>(n);
  double squares = 0;
  for (double d : differences) squares += (d - mean) * (d - mean);
  const double sd = std::sqrt(squares / static_cast<double>(n - 1));
  if (!(sd > 0)) return kNaN;
  const double se = sd / std::sqrt(static_cast<double>(n));
  const double drop =
      std::max(min_effect, NormalQuantile(1 - level / 2) * se) + NormalQuantile(power) * se;
  return drop <= max_drop ? drop : kNaN;
}

}  // namespace plumb::metrics
