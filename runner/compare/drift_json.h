#ifndef PLUMB_RUNNER_COMPARE_DRIFT_JSON_H_
#define PLUMB_RUNNER_COMPARE_DRIFT_JSON_H_

/// The drift report as one JSON object: what `plumb drift --json` prints and what the HTML drift
/// report reads. Top-level keys (schema "plumb_drift": 1): base, cand, suite, changed,
/// paired_cases, only_in_base, only_in_cand, gold_changed, metrics, tags, latency,
/// min_detectable_effect, lost, gained, unstable, gate, settings. Numbers that are not finite
/// (an interval over no resamples, a detectable effect below two pairs) are null.

#include <nlohmann/json.hpp>

#include "runner/compare/drift.h"

namespace plumb {

nlohmann::json DriftReportToJson(const DriftReport& report);

}  // namespace plumb

#endif  // PLUMB_RUNNER_COMPARE_DRIFT_JSON_H_
