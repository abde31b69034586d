#ifndef PLUMB_RUNNER_REPORT_SVG_DELTA_CHART_H_
#define PLUMB_RUNNER_REPORT_SVG_DELTA_CHART_H_

/// The drift page's per-tag chart of one gated metric (runner/report/html_report.h): a row per
/// tag (and one for all cases) with the delta (candidate minus base) as a mark and its 95%
/// interval as a line, over a zero line and the band |delta| < min_effect, inside which no change
/// counts. Inline SVG drawn by plumb, labelled axes, and <title>/<desc> with every row in words.
/// A regressed row's mark points down and an improved one's up, so the verdict does not rest on
/// colour.

#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace plumb {

struct DeltaRow {
  std::string label;  // a tag, or "all cases"; escaped when drawn
  std::optional<double> delta;
  std::optional<double> low, high;  // the 95% interval, when there is one
  std::string verdict;              // "regressed", "improved", "steady", "too few cases", ...
};

/// Appends <figure class="chart"> holding the chart of `metric` with `rows` in order. `id` is
/// plain ASCII and unique in the page. The scale is symmetric around zero and wide enough for
/// every interval and twice `min_effect`.
void AppendDeltaChart(std::string* out, std::string_view id, std::string_view metric,
                      const std::vector<DeltaRow>& rows, double min_effect);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_SVG_DELTA_CHART_H_
