#ifndef PLUMB_RUNNER_REPORT_SVG_TRADEOFF_CHART_H_
#define PLUMB_RUNNER_REPORT_SVG_TRADEOFF_CHART_H_

/// The chart of the compare page (html_compare_report.h): quality (`correct`, its mean with its
/// 95% interval as an error bar) against latency p95 on a logarithmic axis, one labelled mark per
/// run, and the front (the runs no other run beats on both axes) joined by a line, fastest first.
/// Drawn by plumb as inline SVG, like svg_latency_chart.h: geometry in attributes, the look in the
/// page's style sheet. Marks on the front are filled, the others hollow, so the front does not
/// depend on colour; <title>/<desc> say the figures in words. Run names are untrusted: escaped,
/// and cut to kTradeoffLabelMax code points on the chart (whole in the mark's <title>).

#include <cstddef>
#include <string>
#include <string_view>

#include "runner/compare/comparison.h"

namespace plumb {

inline constexpr size_t kTradeoffLabelMax = 28;

/// Appends <figure class="chart"> with the chart (its <svg> has `id`, plain ASCII) and a
/// caption; runs without `correct` or a latency are named in a note instead of drawn, and when
/// none can be drawn only the note is appended.
void AppendTradeoffChart(std::string* out, std::string_view id, const Comparison& comparison);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_SVG_TRADEOFF_CHART_H_
