#ifndef PLUMB_RUNNER_REPORT_SVG_LATENCY_CHART_H_
#define PLUMB_RUNNER_REPORT_SVG_LATENCY_CHART_H_

/// The latency chart of the HTML report's run and drift pages (runner/report/html_report.h): the
/// cumulative distribution of reply latencies on a logarithmic time axis, one line per run (the
/// drift page overlays base and candidate). Drawn by plumb as inline SVG: geometry in attributes,
/// the look in the page's one style sheet, so the page's Content-Security-Policy needs nothing
/// new. Both axes are labelled, each line has a name in a legend and a dash pattern of its own
/// (not only a colour), and <title>/<desc> give the percentiles in words.

#include <string>
#include <string_view>
#include <vector>

#include "runner/run/run_reader.h"

namespace plumb {

/// One run's latencies in milliseconds: one per reply that did not error, and one per call that
/// timed out, at its timeout (a lower bound of the latency, as the run's percentiles count it).
/// `name` is shown in the legend and the description; it is escaped.
struct LatencySeries {
  std::string name;
  std::vector<double> latencies_ms;
  std::vector<double> lower_bounds_ms;
};

/// The latencies of `run`'s replies that did not error and of its timed-out calls (every
/// repeat): the ones its percentiles count.
LatencySeries RunLatencies(std::string name, const LoadedRun& run);

/// Appends the chart as <figure class="chart"> with `id` (plain ASCII, unique in the page) on
/// its <svg>. At most two series are drawn (solid, then dashed), each over its measured values
/// and lower bounds together; the legend says how many timed out. A latency of 0 or less is
/// drawn at the axis's left end. A series with no latency is named in a note instead of drawn; when
/// none has one, only the note is appended.
void AppendLatencyChart(std::string* out, std::string_view id,
                        const std::vector<LatencySeries>& series);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_SVG_LATENCY_CHART_H_
