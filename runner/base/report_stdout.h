#ifndef PLUMB_RUNNER_BASE_REPORT_STDOUT_H_
#define PLUMB_RUNNER_BASE_REPORT_STDOUT_H_

/// A report file named "-" (`--markdown -`, `--junit -`, `--html -`) goes to standard output,
/// so a CI step can pipe it. For the pipe to carry the report alone, main calls
/// ReserveStdoutForReport before any command runs: from then on everything plumb prints to
/// stdout (the summary table) goes to stderr, and WriteReportToStdout writes to the original
/// standard output. Not thread-safe; main calls Reserve once, the writers run after it.

#include <string>
#include <string_view>

namespace plumb {

/// The file name that means standard output.
inline constexpr std::string_view kStdoutPath = "-";

/// Moves stdout onto stderr and keeps the original for WriteReportToStdout. False with a
/// sentence when the descriptors cannot be duplicated.
bool ReserveStdoutForReport(std::string* error);

/// Writes `text` whole to the reserved stdout (or to stdout itself when nothing was reserved).
/// False with a sentence on a write error (a closed pipe, a full disk).
bool WriteReportToStdout(std::string_view text, std::string* error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_BASE_REPORT_STDOUT_H_
