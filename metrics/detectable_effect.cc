#include "metrics/detectable_effect.h"

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <limits>

#include "metrics/interval.h"
#include "metrics/paired_tests.h"

namespace plumb::metrics {

double MinimumDetectableEffect(const std::vector<double>& differences, bool binary, double alpha,
                               double power) {
  const size_t n = differences.size();
  if (n < 2) return std::numeric_limits<double>::infinity();
  double total = 0;
  for (double d : differences) total += d;
  const double mean = total / static_cast<double>(n);
  double squares = 0;
  for (double d : differences) squares += (d - mean) * (d - mean);
  const double sd = std::sqrt(squares / static_cast<double>(n - 1));
  const double z = NormalQuantile(1 - alpha / 2) + NormalQuantile(power);
  double effect = z * sd / std::sqrt(static_cast<double>(n));
  if (binary) {
    int64_t fewest_discordant = 1;
    while (McNemarExactP(0, fewest_discordant) > alpha && fewest_discordant < 64) {
      ++fewest_discordant;
    }
    effect = std::max(effect, static_cast<double>(fewest_discordant) / static_cast<double>(n));
  }
  return effect;
}

}  // namespace plumb::metrics
