#ifndef PLUMB_RUNNER_COMPARE_BREAK_EVEN_H_
#define PLUMB_RUNNER_COMPARE_BREAK_EVEN_H_

/// The break-even of `plumb compare`: when one run pays more at start-up (warm-up) and less per
/// case, after how many cases its total time becomes the smaller. The model is one worker that
/// warms up once and then answers n cases one after another: total(n) = warm-up + n * per-case
/// time.

#include <cstdint>
#include <optional>

namespace plumb {

struct TimeCost {
  double warmup_ms = 0;    // once per worker
  double per_case_ms = 0;  // the mean latency of a case
};

/// For `slow_start` with the higher warm-up and the lower per-case time than `quick_start`: the
/// smallest number of cases n >= 1 at which slow_start's total is strictly the smaller, i.e. the
/// smallest integer n > (W_slow - W_quick) / (L_quick - L_slow). nullopt when the pair does not
/// trade that way (slow_start's warm-up is not higher, or its per-case time not lower), or when
/// a value is not finite. Computed in floating point, then checked against both totals so that a
/// quotient that lands just below an integer does not move n by one.
std::optional<int64_t> BreakEvenCases(const TimeCost& slow_start, const TimeCost& quick_start);

}  // namespace plumb

#endif  // PLUMB_RUNNER_COMPARE_BREAK_EVEN_H_
