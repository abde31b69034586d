#ifndef PLUMB_RUNNER_RUN_FRESHNESS_H_
#define PLUMB_RUNNER_RUN_FRESHNESS_H_

/// Freshness per corpus update (issue 23): for the cases asked after each update, the share
/// answered right against the new gold (`fresh`) and the share that still gave the old answer
/// (`stale`), each with a Wilson 95% interval, beside the pipeline's refresh time(s). run.json
/// keeps it as aggregates.freshness; reports, merge and drift read it from there.

#include <cstdint>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "metrics/metric_summary.h"
#include "runner/run/scheduler.h"
#include "runner/run/update_phases.h"
#include "runner/suite/suite.h"

namespace plumb {

struct UpdateFreshness {
  std::string update;
  int64_t cases = 0;  // distinct cases asked after it that finished
  std::optional<metrics::MetricSummary> fresh;
  std::optional<metrics::MetricSummary> stale;  // over the cases that give stale_answers
  /// The refreshes made for it: one per run, one per shard after `plumb merge`.
  std::vector<RefreshRecord> refreshes;
  /// The mean refresh_ms of the refreshes that were called; nullopt when none was.
  std::optional<double> MeanRefreshMs() const;
};

/// One entry per update of the suite, in suite order; an update no finished case is asked after
/// and no refresh names is left out. Per case, fresh and stale are first averaged over repeats.
std::vector<UpdateFreshness> SummarizeFreshness(const Suite& suite,
                                                const std::vector<CaseOutcome>& outcomes,
                                                const std::vector<RefreshRecord>& refreshes);

/// aggregates.freshness: {"updates": [{"update", "cases", "fresh", "stale", "refresh_ms",
/// "refreshes"}]}, metrics in the shape of aggregates.metrics; null for an empty list.
nlohmann::json FreshnessToJson(const std::vector<UpdateFreshness>& freshness);
/// Back from run.json; entries it cannot read are skipped.
std::vector<UpdateFreshness> FreshnessFromJson(const nlohmann::json& freshness);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_FRESHNESS_H_
