#ifndef PLUMB_RUNNER_COMPARE_COMPARISON_TEXT_H_
#define PLUMB_RUNNER_COMPARE_COMPARISON_TEXT_H_

/// The words and figures of a comparison of many runs (comparison.h), shared by its terminal
/// table, its Markdown and its HTML page so that all three say the same thing the same way.
/// Every function returns plain text that may hold run names (untrusted: a pipeline's name is
/// whatever run.json says): the caller escapes it for its medium.

#include <string>

#include "runner/compare/comparison.h"

namespace plumb {

/// "0.223 [0.160, 0.302]"; "n/a" when the run does not measure `metric`.
std::string CompareMetricText(const ComparedRun& run, const std::string& metric);
/// "12.4 ms", "at least 30000 ms"; "n/a" when not available. `which` is "p50", "p95" or "mean".
std::string CompareTimeText(const ComparedTime& time, const char* which);
/// "412.0 ms (ready line, 2 workers)", "first call 14.2 ms (1 worker)"; "n/a" without records.
std::string CompareWarmupText(const ComparedRun& run);
/// "0.42 EUR [0.40, 0.44]"; "n/a" when the run recorded no cost.
std::string CompareCostText(const ComparedRun& run);
/// One sentence: who takes less time in total from how many cases on, with the figures used.
std::string BreakEvenSentence(const Comparison& comparison, const BreakEvenStatement& b);
/// One sentence naming the runs on the front, fastest first (or why there is none).
std::string FrontSentence(const Comparison& comparison);
/// How run `i` (>= 1) differs from the first run, by the drift verdict rule: the metrics that
/// improved or regressed with their deltas and intervals, then how many stayed steady.
std::string AgainstFirstSentence(const Comparison& comparison, size_t i);
/// A time in milliseconds for the reports: "0.42 ms", "12.4 ms", "4210 ms".
std::string CompareMilliseconds(double ms);

}  // namespace plumb

#endif  // PLUMB_RUNNER_COMPARE_COMPARISON_TEXT_H_
