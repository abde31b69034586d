#ifndef PLUMB_RUNNER_RUN_TOKEN_COST_H_
#define PLUMB_RUNNER_RUN_TOKEN_COST_H_

/// What one reply cost (issue 21): its token counts at the pipeline's `price:`. The scheduler
/// journals it per case; the run's total and mean per case come from it.

#include <cstdint>
#include <optional>

#include "runner/suite/suite.h"

namespace plumb {

/// (input_tokens * price.input + output_tokens * price.output) / price.per. A count whose price
/// is not 0 must be known: a reply without it has no cost (nullopt), rather than a cost that
/// leaves those tokens out.
std::optional<double> TokenCost(const TokenPrice& price, std::optional<int64_t> input_tokens,
                                std::optional<int64_t> output_tokens);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_TOKEN_COST_H_
