#ifndef PLUMB_RUNNER_REPORT_ERROR_REASON_GROUPS_H_
#define PLUMB_RUNNER_REPORT_ERROR_REASON_GROUPS_H_

/// Errored cases grouped by the reason their call failed, most common reason first: the run page
/// lists errored cards under one heading per reason and its cause breakdown names the top
/// reasons, so a run where 54 of 55 calls failed the same way says so at the top.

#include <cstddef>
#include <string>
#include <vector>

namespace plumb {

struct ErrorReasonGroup {
  std::string reason;           // the group's most frequent exact error text
  size_t variants = 1;          // distinct exact texts in the group
  std::vector<size_t> members;  // indexes into the input, in input order
};

/// Groups `errors` (one error text per errored case) by reason. Two texts are one reason when
/// they differ only in their runs of ASCII digits ("retrieved[0]: ..." and "retrieved[3]: ...",
/// "timed out after 30 s" on every case). Groups come largest first; ties keep the order in
/// which their first member appears. An empty text is the reason "no reason recorded".
std::vector<ErrorReasonGroup> GroupErrorReasons(const std::vector<std::string>& errors);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_ERROR_REASON_GROUPS_H_
