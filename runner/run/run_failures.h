#ifndef PLUMB_RUNNER_RUN_RUN_FAILURES_H_
#define PLUMB_RUNNER_RUN_RUN_FAILURES_H_

/// Why a loaded run's cases failed, for the reports that read runs back (`plumb report`,
/// Markdown, HTML, JUnit, drift): run.json's "failures" when it is there, else the same
/// breakdown computed from the journal (a run recorded before causes were).

#include <nlohmann/json.hpp>
#include <string>

#include "runner/run/cause_breakdown.h"
#include "runner/run/failure_cause.h"
#include "runner/run/run_reader.h"

namespace plumb {

/// run.json's "failures" (runner/run/run_aggregates.h FailuresToJson), or one computed from
/// `run`'s records: each case with a record counts once, with its first failed repeat's cause.
nlohmann::json RunFailures(const LoadedRun& run);

/// The run-level breakdown of RunFailures; an empty one when it does not read.
CauseBreakdown RunCauseBreakdown(const LoadedRun& run);

/// The cause of case `id` in `run`: its first failed repeat's (by repeat number); kNone when
/// every repeat passed or the case has no record.
FailureCause CaseCause(const LoadedRun& run, const std::string& id);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_RUN_FAILURES_H_
