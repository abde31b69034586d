#include "runner/report/html_interval_bar.h"

#include <algorithm>
#include <cstdio>

#include "runner/report/html_report_parts.h"

namespace plumb {
namespace {

constexpr double kWidth = 120;
constexpr double kHeight = 14;

std::string Num(double v) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.1f", v);
  return buffer;
}

// x position of `value` on a scale [from, to] across the bar.
double X(double value, double from, double to) {
  const double t = std::clamp((value - from) / (to - from), 0.0, 1.0);
  return 2 + t * (kWidth - 4);
}

void AppendBar(std::string* out, double mean, double low, double high, double from, double to,
               std::optional<double> tick, const char* tick_class, const std::string& title) {
  const double x0 = X(std::min(low, high), from, to);
  const double x1 = X(std::max(low, high), from, to);
  out->append("<svg class=\"iv\" width=\"" + Num(kWidth) + "\" height=\"" + Num(kHeight) +
              "\" viewBox=\"0 0 " + Num(kWidth) + " " + Num(kHeight) + "\" role=\"img\"><title>" +
              title + "</title>");
  out->append("<rect class=\"track\" x=\"0\" y=\"5\" width=\"" + Num(kWidth) +
              "\" height=\"4\" rx=\"2\"/>");
  out->append("<rect class=\"span\" x=\"" + Num(x0) + "\" y=\"3\" width=\"" +
              Num(std::max(1.5, x1 - x0)) + "\" height=\"8\" rx=\"2\"/>");
  if (tick) {
    out->append(std::string("<rect class=\"") + tick_class + "\" x=\"" +
                Num(X(*tick, from, to) - 1) + "\" y=\"0\" width=\"2\" height=\"" + Num(kHeight) +
                "\"/>");
  }
  out->append("<circle class=\"mean\" cx=\"" + Num(X(mean, from, to)) +
              "\" cy=\"7\" r=\"3.5\"/></svg>");
}

}  // namespace

void AppendUnitIntervalBar(std::string* out, double mean, double low, double high,
                           std::optional<double> floor) {
  std::string title = "mean " + FormatScore(mean) + ", 95% interval " + FormatScore(low) + " to " +
                      FormatScore(high);
  if (floor) title += ", floor " + FormatScore(*floor);
  AppendBar(out, mean, low, high, 0, 1, floor, "floor", title);
}

void AppendDeltaIntervalBar(std::string* out, double delta, double low, double high, double range) {
  if (!(range > 0)) range = 1;
  const std::string title = "delta " + FormatScore(delta) + ", 95% interval " + FormatScore(low) +
                            " to " + FormatScore(high);
  AppendBar(out, delta, low, high, -range, range, 0.0, "zero", title);
}

}  // namespace plumb
