#ifndef PLUMB_RUNNER_REPORT_MARKDOWN_COMPARE_H_
#define PLUMB_RUNNER_REPORT_MARKDOWN_COMPARE_H_

/// `plumb compare ... --markdown FILE`: the comparison of many runs as GitHub-flavoured Markdown
/// for a pull-request comment or a README: the exit line, the front and break-even sentences,
/// one table with a column per run (quality metrics with intervals, latency, time to first token,
/// warm-up, cost per 1,000 cases), and each later run against the first. Run names and labels
/// pass through MarkdownText (markdown_report.h), so a hostile name renders as literal text.

#include <string>

#include "runner/compare/comparison.h"

namespace plumb {

std::string FormatCompareMarkdown(const Comparison& comparison);
bool WriteCompareMarkdown(const Comparison& comparison, const std::string& path,
                          std::string* error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_MARKDOWN_COMPARE_H_
