#ifndef PLUMB_RUNNER_RUN_RUN_AGGREGATES_H_
#define PLUMB_RUNNER_RUN_RUN_AGGREGATES_H_

/// RunAggregates summarizes a run's CaseOutcomes (SPEC §6.6): for each metric the mean over the
/// cases where it is defined, the count and a 95% interval (Wilson for 0/1 metrics, seeded
/// percentile bootstrap otherwise), the same per tag, latency percentiles and token usage.
/// With repeats, each case's value is first averaged over its repeats. The suite's floors and
/// ceilings (latency and error_rate) are evaluated against these aggregates.

#include <cstdint>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "metrics/metric_summary.h"
#include "metrics/percentile.h"
#include "runner/run/cause_breakdown.h"
#include "runner/run/freshness.h"
#include "runner/run/scheduler.h"
#include "runner/run/session_aggregates.h"
#include "runner/suite/suite.h"

namespace plumb {

struct MetricAggregate {
  std::string metric;
  metrics::MetricSummary summary;
};

struct TagAggregate {
  std::string tag;
  int64_t cases = 0;
  std::vector<MetricAggregate> metrics;
  CauseBreakdown causes;
};

struct RunAggregates {
  int64_t cases = 0;                     // distinct cases with at least one finished repeat
  int64_t items = 0;                     // finished (case, repeat) items
  int64_t errored = 0;                   // errored items
  int64_t passed = 0;                    // cases whose every repeat passed
  std::vector<MetricAggregate> metrics;  // in display order
  std::vector<TagAggregate> tags;        // sorted by tag
  metrics::LatencySummary latency;       // items that did not error, and timeouts as lower bounds
  int64_t input_tokens = 0;
  int64_t output_tokens = 0;
  int64_t usage_items = 0;  // items whose reply carried a token count
  /// Streamed replies' time to first token (issue 21): percentiles as for latency_ms (no lower
  /// bounds: a reply that errored has none), and bootstrap intervals of p50 and p95.
  metrics::LatencySummary ttft;
  metrics::Interval ttft_p50_interval, ttft_p95_interval;
  /// What the replies cost at the pipeline's price (issue 21): the items with a cost, their sum,
  /// and the mean per case (repeats averaged) with its bootstrap interval. `price` is the
  /// pipeline's (FinishRun sets it from the recorded config); without one there is no cost.
  std::optional<TokenPrice> price;
  int64_t cost_items = 0;
  double cost_total = 0;
  metrics::MetricSummary cost_per_case;
  std::vector<std::string> unstable_cases;  // pass/fail differs between repeats
  /// Failed cases (not every repeat passed) by cause; a case's cause is its first failed
  /// repeat's.
  CauseBreakdown causes;
  /// Multi-turn sessions (issue 22); null when the run has none.
  std::optional<SessionAggregates> sessions;
  /// This invocation's worker start-ups (not AggregateRun's: FinishRun adds the adapter's).
  std::vector<WorkerWarmup> warmups;
  /// Per corpus update (issue 23): fresh and stale rates and refresh times; FinishRun adds it.
  std::vector<UpdateFreshness> freshness;

  /// The aggregate for `metric` at run level (`tag` empty) or for a tag; null when absent.
  const metrics::MetricSummary* Find(const std::string& metric, const std::string& tag = "") const;
  double ErrorRate() const { return items == 0 ? 0 : static_cast<double>(errored) / items; }
};

RunAggregates AggregateRun(const Suite& suite, const std::vector<CaseOutcome>& outcomes);

/// The workers' start-ups at a glance: the signal ("ready_line", "ready_url", "first_call"; empty
/// without records), how many (restarts included, counted apart too), their mean and max.
struct WarmupSummary {
  std::string signal;
  int64_t n = 0;
  int64_t restarts = 0;
  double mean_ms = 0;
  double max_ms = 0;
};
/// The price a run's recorded pipeline config names (`price:` as written), or nullopt.
std::optional<TokenPrice> PriceFromConfig(const nlohmann::json& pipeline_config);

WarmupSummary SummarizeWarmups(const std::vector<WorkerWarmup>& warmups);
/// run.json's aggregates.warmup back into records; entries it cannot read are skipped.
std::vector<WorkerWarmup> WarmupsFromJson(const nlohmann::json& warmup);

/// One floor or ceiling of the suite and whether it held.
struct ThresholdOutcome {
  std::string tag;  // empty: run level
  std::string metric;
  double limit = 0;
  bool ceiling = false;         // latency_*_ms and error_rate: the value must stay at or below
  std::optional<double> value;  // absent when no case defines the metric (counts as broken)
  bool held = false;
};

/// True for the metric ids whose limit is a ceiling rather than a floor.
bool IsCeilingMetric(const std::string& metric);

/// "2 floors", "1 ceiling", "2 floors and 1 ceiling": how the reports count limits. Empty when
/// both counts are 0.
std::string CountFloorsAndCeilings(int floors, int ceilings);

std::vector<ThresholdOutcome> EvaluateThresholds(const Thresholds& thresholds,
                                                 const RunAggregates& aggregates);

nlohmann::json AggregatesToJson(const RunAggregates& aggregates);
/// run.json's "failures": the run's CauseBreakdown and, under "tags", each tag's.
nlohmann::json FailuresToJson(const RunAggregates& aggregates);
nlohmann::json ThresholdsToJson(const std::vector<ThresholdOutcome>& outcomes);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_RUN_AGGREGATES_H_
