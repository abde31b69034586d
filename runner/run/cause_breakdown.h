#ifndef PLUMB_RUNNER_RUN_CAUSE_BREAKDOWN_H_
#define PLUMB_RUNNER_RUN_CAUSE_BREAKDOWN_H_

/// CauseBreakdown counts a run's (or a tag's) failed cases by FailureCause: for each cause the
/// count, its share of the group's cases and a 95% Wilson interval of that share. The share is
/// of all cases, not of the failed ones, so two pipelines' shares compare directly ("retrieval
/// miss on 12% of cases") and the shares of a group add up to its fail rate. Built by
/// AggregateRun; written to run.json's "failures" and shown first by every report.

#include <cstdint>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "metrics/interval.h"
#include "runner/run/failure_cause.h"

namespace plumb {

struct CauseCount {
  FailureCause cause = FailureCause::kNone;
  int64_t count = 0;
  double share = 0;            // count / cases
  metrics::Interval interval;  // Wilson 95% of count out of cases
};

struct CauseBreakdown {
  int64_t cases = 0;
  int64_t failed = 0;
  std::vector<CauseCount> causes;  // the causes with a count above 0, in classification order
};

/// The breakdown of a group whose cases have `causes` (kNone for a case that passed).
CauseBreakdown BreakDownCauses(const std::vector<FailureCause>& causes);

/// "7 retrieval miss, 3 reading miss": the counts, most common first (ties in classification
/// order); empty when nothing failed.
std::string CauseCountsText(const CauseBreakdown& breakdown);

/// {"cases", "failed", "causes": [{"cause", "label", "count", "share", "interval"}]}.
nlohmann::json CauseBreakdownToJson(const CauseBreakdown& breakdown);
/// Reads what CauseBreakdownToJson wrote; false when `json` is not of that shape or names an
/// unknown cause.
bool CauseBreakdownFromJson(const nlohmann::json& json, CauseBreakdown* breakdown);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_CAUSE_BREAKDOWN_H_
