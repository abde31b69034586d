#ifndef PLUMB_RUNNER_RUN_FAILURE_REASON_H_
#define PLUMB_RUNNER_RUN_FAILURE_REASON_H_

/// FailureReason says in a few words what a failed case's record shows under its cause, for
/// the reason column of the Markdown and JUnit reports and drift's lost cases: the error for
/// an errored case, how many retrieved items or citations missed the gold spans, the answer
/// metric that was short, the case_pass minimums that broke. Pipeline text (an error reason)
/// is passed through as is: the caller escapes it for its format.

#include <map>
#include <string>

#include "runner/run/case_record.h"

namespace plumb {

/// The reason for `record`'s cause (record.scores.cause); empty when the case passed.
std::string FailureReason(const CaseRecord& record, const std::map<std::string, double>& case_pass);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_FAILURE_REASON_H_
