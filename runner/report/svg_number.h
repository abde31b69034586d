#ifndef PLUMB_RUNNER_REPORT_SVG_NUMBER_H_
#define PLUMB_RUNNER_REPORT_SVG_NUMBER_H_

/// Coordinates in the report's SVG charts (svg_latency_chart.h, svg_delta_chart.h): one decimal
/// is a tenth of a CSS pixel, finer than a screen draws and short in the file.

#include <cstdio>
#include <string>

namespace plumb {

inline std::string SvgNumber(double v) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.1f", v);
  return buffer;
}

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_SVG_NUMBER_H_
