#ifndef PLUMB_RUNNER_REPORT_MARKDOWN_REPORT_H_
#define PLUMB_RUNNER_REPORT_MARKDOWN_REPORT_H_

/// GitHub-flavoured Markdown summaries fit for a pull-request comment (SPEC §10): the verdict
/// and exit code first, then why cases failed (a run's cause breakdown with intervals; a
/// drift's lost cases by cause and the lost cases themselves, before its metric table), a
/// compact metric table with 95% intervals, then the cases a reviewer should read. At most ten
/// cases are shown, chosen across causes (the first of each cause, then the second, ...), with
/// their gold answers and the reason under their cause. The last line is a hidden marker,
/// "<!-- plumb:report suite=S pipeline=P -->", the same for a run's and a drift's summary of
/// one pipeline, so a CI step can find and update its one comment. Written by `--markdown FILE`
/// through run_outputs.h.
///
/// Everything that comes from a suite, a label or a pipeline is untrusted: it is escaped so it
/// renders as the literal text (no markup, HTML, table breaks or @-mentions), put on one line,
/// and cut to a bounded length, so a hostile answer can neither forge the comment nor grow it
/// past what a reviewer reads.

#include <cstddef>
#include <string>
#include <string_view>

#include "runner/compare/drift.h"
#include "runner/run/run_reader.h"

namespace plumb {

std::string FormatRunMarkdown(const LoadedRun& run);
std::string FormatDriftMarkdown(const DriftReport& report);

bool WriteRunMarkdown(const LoadedRun& run, const std::string& path, std::string* error);
bool WriteDriftMarkdown(const DriftReport& report, const std::string& path, std::string* error);

/// `text` as literal Markdown inline text (also safe inside a table cell): ASCII punctuation
/// that Markdown or HTML could read as syntax is backslash-escaped, "@" is followed by a word
/// joiner (U+2060) so no one is mentioned, line breaks and other control characters become
/// spaces, invalid UTF-8 becomes U+FFFD, and beyond `max_code_points` the text is cut with "…".
std::string MarkdownText(std::string_view text, size_t max_code_points = 120);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_MARKDOWN_REPORT_H_
