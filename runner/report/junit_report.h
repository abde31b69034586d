#ifndef PLUMB_RUNNER_REPORT_JUNIT_REPORT_H_
#define PLUMB_RUNNER_REPORT_JUNIT_REPORT_H_

/// JUnit XML for a finished run (SPEC §10), the format CI test-result viewers read: one
/// <testsuite> named after the suite, one <testcase> per case (classname = suite name, name = case
/// id, time = mean latency in seconds). A case that failed carries a <failure> whose message
/// lists its scores; a case whose call errored carries an <error> with the reason, the scores and
/// the pipeline's output excerpts. With --repeat a case fails when any repeat failed. Written by
/// `--junit FILE` on run, score and report (through run_outputs.h).
///
/// Every string is escaped for XML 1.0: markup characters as entities, characters XML does not
/// allow (C0 controls other than tab and newline, U+FFFE, U+FFFF) and invalid UTF-8 as U+FFFD,
/// so any pipeline output yields a well-formed document.

#include <string>
#include <string_view>

#include "runner/run/run_reader.h"

namespace plumb {

std::string FormatJUnitReport(const LoadedRun& run);

/// Writes FormatJUnitReport(run) to `path` atomically; false with a sentence on failure.
bool WriteJUnitReport(const LoadedRun& run, const std::string& path, std::string* error);

/// `text` escaped for XML character data and attribute values (quotes included).
std::string XmlEscape(std::string_view text);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_JUNIT_REPORT_H_
