#ifndef PLUMB_RUNNER_RUN_SESSION_AGGREGATES_H_
#define PLUMB_RUNNER_RUN_SESSION_AGGREGATES_H_

/// What a run says about its multi-turn sessions (issue 22), beside the per-turn metrics every
/// case gets: how many sessions and turns, `session_pass` (the share of sessions whose every
/// turn passed in every repeat, with its Wilson interval), how many were run again from turn 1
/// after their worker was replaced, and the latency split into first turns and follow-ups (p50
/// and p95, each with a bootstrap interval, and follow-up / first-turn ratios with unpaired
/// bootstrap intervals). run.json keeps it under "sessions"; runs without sessions have none.

#include <cstdint>
#include <nlohmann/json.hpp>
#include <optional>
#include <vector>

#include "metrics/metric_summary.h"
#include "metrics/paired_bootstrap.h"
#include "metrics/sample_percentile_bootstrap.h"
#include "runner/run/scheduler.h"
#include "runner/suite/suite.h"

namespace plumb {

/// One group of turns' latencies: calls that did not error, and timed-out calls at their
/// timeout; a fresh worker's first call (its start-up) stays out, as in the run's latency.
struct TurnLatency {
  int64_t n = 0;
  metrics::PercentileEstimate p50;
  metrics::PercentileEstimate p95;
};

struct SessionAggregates {
  int64_t count = 0;     // sessions with at least one finished turn
  int64_t turns = 0;     // their distinct turns
  int64_t passed = 0;    // sessions whose every turn passed in every repeat
  int64_t restarts = 0;  // sessions run again from turn 1 (their worker was replaced)
  metrics::Interval session_pass_interval;  // Wilson, of passed / count
  TurnLatency first_turn;
  TurnLatency follow_up;
  metrics::RatioResult p50_ratio;  // follow-up p50 / first-turn p50
  metrics::RatioResult p95_ratio;
  /// Sessions that failed, by id, in suite order (the reports list them).
  std::vector<std::string> failed;

  double SessionPass() const { return count == 0 ? 0 : static_cast<double>(passed) / count; }
};

/// Null when no outcome is a session's turn.
std::optional<SessionAggregates> AggregateSessions(const Suite& suite,
                                                   const std::vector<CaseOutcome>& outcomes);

nlohmann::json SessionsToJson(const SessionAggregates& sessions);
/// run.json's "sessions" back; null for a run without it.
std::optional<SessionAggregates> SessionsFromJson(const nlohmann::json& sessions);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_SESSION_AGGREGATES_H_
