#include "runner/run/token_cost.h"

namespace plumb {

std::optional<double> TokenCost(const TokenPrice& price, std::optional<int64_t> input_tokens,
                                std::optional<int64_t> output_tokens) {
  if (price.per <= 0) return std::nullopt;
  if ((price.input != 0 && !input_tokens) || (price.output != 0 && !output_tokens)) {
    return std::nullopt;
  }
  if (!input_tokens && !output_tokens) return std::nullopt;
  const double in = static_cast<double>(input_tokens.value_or(0));
  const double out = static_cast<double>(output_tokens.value_or(0));
  return (in * price.input + out * price.output) / price.per;
}

}  // namespace plumb
