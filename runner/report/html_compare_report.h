#ifndef PLUMB_RUNNER_REPORT_HTML_COMPARE_REPORT_H_
#define PLUMB_RUNNER_REPORT_HTML_COMPARE_REPORT_H_

/// The compare page (`plumb compare ... --html FILE`): one self-contained page for two or more
/// runs of one suite. The verdict against the first run, the chart of quality against latency
/// with the front (svg_tradeoff_chart.h), the break-evens, then the table of every run's figures
/// and each later run's metric verdicts against the first. Same page frame as the run and drift
/// pages (html_page_assets.h): the Content-Security-Policy, the style sheet, the footer with the
/// caution; run names, labels and directories are escaped.

#include <string>

#include "runner/compare/comparison.h"

namespace plumb {

/// The page as a string.
std::string RenderHtmlCompareReport(const Comparison& comparison);

/// Writes the page to `path` (atomically; "-" is standard output). False with a sentence naming
/// the path when it cannot be written.
bool WriteHtmlCompareReport(const Comparison& comparison, const std::string& path,
                            std::string* error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_HTML_COMPARE_REPORT_H_
