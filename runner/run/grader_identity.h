#ifndef PLUMB_RUNNER_RUN_GRADER_IDENTITY_H_
#define PLUMB_RUNNER_RUN_GRADER_IDENTITY_H_

/// A grader's identity: the SHA-256 of everything that decides what grade an answer gets from
/// it, short of the answer itself. Two graders with equal identities give a request the same
/// grade, so the verdict cache keys on it (with the request), and a calibration of the grader
/// holds as long as it does not change. Secrets are not part of it: the pipeline config is taken
/// with every `${VAR}` expansion redacted, so rotating a token keeps the cached grades.

#include <string>

#include "runner/suite/suite.h"

namespace plumb {

/// Hex SHA-256 over, in this order with a newline after each: "plumb-grader-v1", the grader's
/// name, the grader pipeline's redacted config (compact JSON, keys sorted; without jobs,
/// timeout, retries and rate, which change how calls are made, not the grade), the scale, the
/// verdict pattern, and the rubric text. `pipeline` is the pipeline the grader names.
std::string GraderIdentity(const GraderConfig& grader, const PipelineConfig& pipeline);

/// The cache key of one grader call: hex SHA-256 of the identity and the exact request line
/// (which carries the repeat index).
std::string GradeKey(const std::string& identity, const std::string& request_line);

/// "pass-fail" | "unit" | "1-5".
const char* GradeScaleName(GradeScale scale);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_GRADER_IDENTITY_H_
