#ifndef PLUMB_RUNNER_REPORT_HTML_TAG_GRID_H_
#define PLUMB_RUNNER_REPORT_HTML_TAG_GRID_H_

/// The run page's tag x metric grid (runner/report/html_report.h): one row per tag, one narrow
/// column per metric, so twenty-odd metrics fit the page width without sideways scrolling. A
/// cell shows the mean to two decimals; its 95% interval, case count and any floor on it are in
/// the cell's title and in text that shows on hover and keyboard focus (every cell is
/// focusable). Cells are shaded by value, and a floor or ceiling on a cell is also marked with
/// a sign and a word, so colour is never the only signal.

#include <nlohmann/json.hpp>
#include <string>

namespace plumb {

/// Appends <section id="tags"> for run.json's `aggregates.tags` and the tag floors and ceilings
/// of `thresholds`; nothing when the run has no tags. `failures` is the run's cause breakdown
/// (runner/run/run_failures.h RunFailures): each cause that failed a case of the run gets a
/// column of counts per tag, before the metrics, with the share and its interval in words.
void AppendTagGrid(std::string* out, const nlohmann::json& record, const nlohmann::json& failures);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_HTML_TAG_GRID_H_
