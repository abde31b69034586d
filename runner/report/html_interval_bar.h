#ifndef PLUMB_RUNNER_REPORT_HTML_INTERVAL_BAR_H_
#define PLUMB_RUNNER_REPORT_HTML_INTERVAL_BAR_H_

/// Small inline SVG drawings of a mean and its 95% interval for the HTML report's metric tables
/// (runner/report/html_report.h). SVG geometry is attributes, not style, so the bars need nothing
/// from the page's Content-Security-Policy beyond its one style sheet; each carries a <title> in
/// words for readers who cannot see it.

#include <optional>
#include <string>

namespace plumb {

/// A bar over [0, 1]: the interval [low, high] as a band, the mean as a dot, and `floor` as a
/// tick when given. Values outside [0, 1] are clamped to the edge.
void AppendUnitIntervalBar(std::string* out, double mean, double low, double high,
                           std::optional<double> floor);

/// A bar for a difference, centred on zero over [-range, range], with the interval [low, high]
/// as a band and the delta as a dot.
void AppendDeltaIntervalBar(std::string* out, double delta, double low, double high, double range);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_HTML_INTERVAL_BAR_H_
