#ifndef PLUMB_RUNNER_RUN_GRADE_REPLY_H_
#define PLUMB_RUNNER_RUN_GRADE_REPLY_H_

/// Reads a grader's reply into a grade in [0, 1]. A reply is a JSON object with "score" (a
/// number on the grader's scale) or "verdict" ("pass" or "fail", any case) and an optional
/// "reason" string. With a `verdict_pattern`, a reply that is not such an object is searched as
/// text (for an HTTP grader: `text` is the reply mapping's answer), and the pattern's first
/// group is the verdict or the score, so free-text replies ("VERDICT: PASS") work unchanged.
/// Scales: pass-fail takes a verdict or a score of 0 or 1; unit a score in [0, 1]; 1-5 a score
/// in [1, 5], mapped to (score - 1) / 4. A verdict is 1 or 0 on every scale.

#include <string>
#include <string_view>

#include "runner/pipeline/reply_mapping.h"
#include "runner/suite/suite.h"

namespace plumb {

struct GradeReply {
  double grade = 0;    // in [0, 1]
  std::string reason;  // the grader's "reason", or "" (untrusted text: escape it to show it)
};

/// False with a sentence naming what was wrong (a bounded excerpt of the reply included) when
/// the reply holds no usable grade. `mapping`, for a grader pipeline with a `reply:` block
/// (an HTTP service in its own shape), first takes the text at its answer pointer out of the
/// reply; that text is then read as above (a JSON grade, or free text for verdict_pattern).
/// Null: the body is read as it is.
bool ParseGradeReply(std::string_view body, const GraderConfig& grader, const ReplyMapping* mapping,
                     GradeReply* out, std::string* error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_GRADE_REPLY_H_
