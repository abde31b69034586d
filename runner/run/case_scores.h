#ifndef PLUMB_RUNNER_RUN_CASE_SCORES_H_
#define PLUMB_RUNNER_RUN_CASE_SCORES_H_

/// CaseScores holds every metric defined on one case for one reply (SPEC §6), keyed by metric
/// id ("exact_match", "recall@5", ...). A metric that does not apply to the case (pattern_match
/// without patterns, citation_precision without citations) is absent, not zero: aggregates
/// average over the cases where a metric is defined.

#include <string>
#include <vector>

#include "runner/run/failure_cause.h"
#include "runner/run/metric_values.h"

namespace plumb {

struct CaseScores {
  MetricValues values;
  bool abstained = false;             // the reply abstained or normalized to no tokens
  bool abstention_case = false;       // the case's gold is "abstain" (answers: [])
  bool errored = false;               // the call failed; answer metrics are 0
  bool pass = false;                  // every case_pass minimum held (never for an errored case)
  std::vector<std::string> warnings;  // e.g. a quote citation not found in its document
  FailureCause cause = FailureCause::kNone;  // why the case failed (ClassifyFailure); kNone: passed
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_CASE_SCORES_H_
