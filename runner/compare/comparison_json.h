#ifndef PLUMB_RUNNER_COMPARE_COMPARISON_JSON_H_
#define PLUMB_RUNNER_COMPARE_COMPARISON_JSON_H_

/// The comparison of many runs (comparison.h) as one JSON object: what `plumb compare --json`
/// prints. Top-level keys (schema "plumb_compare": 1): suite, quality_metric, runs (each: name,
/// dir, pipeline, labels, cases, metrics, latency_ms, ttft_ms, warmup, startup_ms,
/// cost_per_1000_cases, verdict, on_front), against_first (each later run's verdicts against
/// the first: per metric the delta, interval, p, verdict; latency ratios), front (names, fastest
/// first), break_even, gate, settings. Numbers that are not finite are null; a figure a run did
/// not record (TTFT without streaming, cost without a price) is null.

#include <nlohmann/json.hpp>

#include "runner/compare/comparison.h"

namespace plumb {

nlohmann::json ComparisonToJson(const Comparison& comparison);

}  // namespace plumb

#endif  // PLUMB_RUNNER_COMPARE_COMPARISON_JSON_H_
