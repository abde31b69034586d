#include "runner/compare/break_even.h"

#include <cmath>

namespace plumb {

std::optional<int64_t> BreakEvenCases(const TimeCost& slow_start, const TimeCost& quick_start) {
  const double ws = slow_start.warmup_ms, ls = slow_start.per_case_ms;
  const double wq = quick_start.warmup_ms, lq = quick_start.per_case_ms;
  if (!std::isfinite(ws) || !std::isfinite(ls) || !std::isfinite(wq) || !std::isfinite(lq)) {
    return std::nullopt;
  }
  if (!(ws > wq) || !(ls < lq)) return std::nullopt;
  const double crossing = (ws - wq) / (lq - ls);
  if (!(crossing < 9e15)) return std::nullopt;  // beyond any count of cases
  auto smaller = [&](double n) { return ws + n * ls < wq + n * lq; };
  int64_t n = static_cast<int64_t>(std::floor(crossing)) + 1;
  while (n > 1 && smaller(static_cast<double>(n - 1))) --n;
  while (!smaller(static_cast<double>(n))) ++n;
  return n;
}

}  // namespace plumb
