#ifndef PLUMB_RUNNER_RUN_ERROR_REASONS_H_
#define PLUMB_RUNNER_RUN_ERROR_REASONS_H_

/// The most common reasons cases errored, read back from a run's journal, so the terminal can
/// say why a run failed ("54  retrieved[0]: missing string field 'document'") instead of
/// pointing at a column of cases.jsonl. Used by FinishRun after the summary table.

#include <cstdint>
#include <string>
#include <vector>

namespace plumb {

struct ErrorReasonCount {
  std::string reason;  // as journaled: pipeline text inside it is untrusted
  int64_t count = 0;
};

/// Reads `journal_path` (cases.jsonl) and counts each distinct error reason; returns at most
/// `limit`, most common first (ties: the reason seen first). Lines that are not records, and a
/// missing file, count nothing.
std::vector<ErrorReasonCount> CountErrorReasons(const std::string& journal_path, size_t limit);

/// "errors by reason (top N of M errored):" and one line per reason, with control characters
/// shown as '?' (a reason may hold pipeline output, which must not drive the terminal) and
/// each reason cut at 200 characters with the number left out said.
std::string FormatErrorReasons(const std::vector<ErrorReasonCount>& reasons, int64_t errored);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_ERROR_REASONS_H_
