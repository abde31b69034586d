#include "runner/report/svg_latency_chart.h"

#include <algorithm>
#include <cmath>

#include "metrics/metric_summary.h"
#include "runner/report/html_escape.h"
#include "runner/report/html_report_parts.h"
#include "runner/report/svg_number.h"

namespace plumb {
namespace {

// The drawing, in SVG user units (CSS pixels at 100%): the plot area and the margins that hold
// the axis labels.
constexpr double kWidth = 720, kHeight = 280;
constexpr double kLeft = 64, kRight = 32, kTop = 12, kBottom = 52;
constexpr double kPlotWidth = kWidth - kLeft - kRight;
constexpr double kPlotHeight = kHeight - kTop - kBottom;

// A decade label: "0.1 ms", "10 ms", "1 s", "100 s".
std::string DecadeLabel(int exponent) {
  if (exponent >= 3) {
    const int s = exponent - 3;
    return s <= 3 ? std::to_string(static_cast<int>(std::pow(10, s))) + " s"
                  : "1e" + std::to_string(s) + " s";
  }
  if (exponent >= 0) return std::to_string(static_cast<int>(std::pow(10, exponent))) + " ms";
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.*f ms", -exponent, std::pow(10, exponent));
  return buffer;
}

struct LogAxis {
  int low = 0, high = 1;  // decades 10^low .. 10^high
  double X(double ms) const {
    const double lg = ms > 0 ? std::log10(ms) : low;
    return kLeft + std::clamp((lg - low) / (high - low), 0.0, 1.0) * kPlotWidth;
  }
};

double Y(double share) { return kTop + (1 - share) * kPlotHeight; }

void AppendAxes(std::string* out, const LogAxis& axis) {
  out->append("<g class=\"axis\">");
  // Horizontal grid lines and the share labels.
  for (int q = 0; q <= 4; ++q) {
    const double y = Y(q / 4.0);
    out->append("<line class=\"gl\" x1=\"" + SvgNumber(kLeft) + "\" x2=\"" +
                SvgNumber(kLeft + kPlotWidth) + "\" y1=\"" + SvgNumber(y) + "\" y2=\"" +
                SvgNumber(y) + "\"/><text class=\"yl\" x=\"" + SvgNumber(kLeft - 6) + "\" y=\"" +
                SvgNumber(y + 4) + "\">" + std::to_string(q * 25) + "%</text>");
  }
  // Decade lines with labels; minor ticks at 2..9 when there are few decades.
  for (int e = axis.low; e <= axis.high; ++e) {
    const double x = axis.X(std::pow(10, e));
    out->append("<line class=\"gl\" x1=\"" + SvgNumber(x) + "\" x2=\"" + SvgNumber(x) + "\" y1=\"" +
                SvgNumber(kTop) + "\" y2=\"" + SvgNumber(kTop + kPlotHeight) +
                "\"/><text class=\"xl\" x=\"" + SvgNumber(x) + "\" y=\"" +
                SvgNumber(kTop + kPlotHeight + 16) + "\">" + DecadeLabel(e) + "</text>");
    if (e == axis.high || axis.high - axis.low > 5) continue;
    for (int m = 2; m <= 9; ++m) {
      const double xm = axis.X(m * std::pow(10, e));
      out->append("<line class=\"tick\" x1=\"" + SvgNumber(xm) + "\" x2=\"" + SvgNumber(xm) +
                  "\" y1=\"" + SvgNumber(kTop + kPlotHeight) + "\" y2=\"" +
                  SvgNumber(kTop + kPlotHeight + 4) + "\"/>");
    }
  }
  out->append("<rect class=\"frame\" x=\"" + SvgNumber(kLeft) + "\" y=\"" + SvgNumber(kTop) +
              "\" width=\"" + SvgNumber(kPlotWidth) + "\" height=\"" + SvgNumber(kPlotHeight) +
              "\"/>");
  out->append("<text class=\"xt\" x=\"" + SvgNumber(kLeft + kPlotWidth / 2) + "\" y=\"" +
              SvgNumber(kHeight - 8) +
              "\">latency of a reply (logarithmic scale)</text><text class=\"yt\" "
              "transform=\"translate(14 " +
              SvgNumber(kTop + kPlotHeight / 2) + ") rotate(-90)\">replies at or below</text></g>");
}

// The empirical distribution as a step line, one vertex pair per distinct tenth of a pixel, so
// 10,000 replies make a path of at most a few thousand points.
void AppendSeries(std::string* out, const LogAxis& axis, std::vector<double> values, int index) {
  std::sort(values.begin(), values.end());
  const double n = static_cast<double>(values.size());
  std::string d;
  for (size_t i = 0; i < values.size(); ++i) {
    const std::string x = SvgNumber(axis.X(values[i]));
    // Rise at the last of the values that land on this x.
    if (i + 1 < values.size() && SvgNumber(axis.X(values[i + 1])) == x) continue;
    d += d.empty() ? "M" + x + " " + SvgNumber(Y(0)) : "H" + x;
    d += "V" + SvgNumber(Y((i + 1) / n));
  }
  out->append("<path class=\"cdf s" + std::to_string(index) + "\" d=\"" + d + "\"/>");
}

std::string Percentiles(const LatencySeries& series) {
  const metrics::LatencySummary s =
      metrics::SummarizeLatency(series.latencies_ms, series.lower_bounds_ms);
  auto at = [](bool at_least, double ms) {
    return (at_least ? "at least " : "") + FormatMilliseconds(ms);
  };
  std::string words = std::to_string(s.n) + " replies, p50 " + at(s.p50_at_least, s.p50) +
                      ", p90 " + at(s.p90_at_least, s.p90) + ", p95 " + at(s.p95_at_least, s.p95) +
                      ", p99 " + at(s.p99_at_least, s.p99) + ", max " +
                      at(s.mean_at_least(), s.max);
  if (s.lower_bounds > 0) {
    words += "; " + std::to_string(s.lower_bounds) +
             " timed out, drawn at their timeout (a lower bound)";
  }
  return words;
}

std::vector<double> AllValues(const LatencySeries& series) {
  std::vector<double> all = series.latencies_ms;
  all.insert(all.end(), series.lower_bounds_ms.begin(), series.lower_bounds_ms.end());
  return all;
}

}  // namespace

LatencySeries RunLatencies(std::string name, const LoadedRun& run) {
  LatencySeries series{std::move(name), {}, {}};
  for (const CaseRecord& r : run.records) {
    if (r.latency_lower_bound) {
      series.lower_bounds_ms.push_back(r.latency_ms);
    } else if (r.error.empty()) {
      series.latencies_ms.push_back(r.latency_ms);
    }
  }
  return series;
}

void AppendLatencyChart(std::string* out, std::string_view id,
                        const std::vector<LatencySeries>& series) {
  std::vector<const LatencySeries*> drawn;
  std::string missing;
  double low = 0, high = 0;
  for (const LatencySeries& s : series) {
    if (drawn.size() == 2) break;
    double top = 0, bottom = 0;
    for (double v : AllValues(s)) {
      if (!(v > 0) || !std::isfinite(v)) continue;
      top = std::max(top, v);
      bottom = bottom == 0 ? v : std::min(bottom, v);
    }
    if (top == 0) {
      missing += (missing.empty() ? "" : ", ") + s.name;
      continue;
    }
    drawn.push_back(&s);
    low = low == 0 ? bottom : std::min(low, bottom);
    high = std::max(high, top);
  }
  out->append("<figure class=\"chart\">");
  if (!drawn.empty()) {
    LogAxis axis;
    axis.low = static_cast<int>(std::floor(std::log10(low)));
    axis.high = static_cast<int>(std::ceil(std::log10(high)));
    if (axis.high <= axis.low) axis.high = axis.low + 1;
    const std::string sid(id);
    std::string desc;
    for (const LatencySeries* s : drawn) {
      desc += (desc.empty() ? "" : ". ") + s->name + ": " + Percentiles(*s);
    }
    out->append("<svg class=\"latency\" id=\"" + sid + "\" viewBox=\"0 0 " + SvgNumber(kWidth) +
                " " + SvgNumber(kHeight) + "\" role=\"img\" aria-labelledby=\"" + sid + "-t " +
                sid + "-d\"><title id=\"" + sid +
                "-t\">Latency: share of replies answered within a given time</title><desc id=\"" +
                sid + "-d\">");
    AppendHtmlText(out, desc + ".");
    out->append("</desc>");
    AppendAxes(out, axis);
    for (size_t i = 0; i < drawn.size(); ++i) AppendSeries(out, axis, AllValues(*drawn[i]), i);
    out->append("</svg><figcaption>");
    for (size_t i = 0; i < drawn.size(); ++i) {
      out->append(
          "<span class=\"key\"><svg class=\"swatch\" width=\"28\" height=\"10\" "
          "aria-hidden=\"true\"><line class=\"cdf s" +
          std::to_string(i) + "\" x1=\"0\" x2=\"28\" y1=\"5\" y2=\"5\"/></svg>");
      AppendHtmlText(out, drawn[i]->name + (i == 0 ? " (solid)" : " (dashed)") + ": " +
                              Percentiles(*drawn[i]));
      out->append("</span>");
    }
    out->append("</figcaption>");
  }
  if (!missing.empty()) {
    out->append("<p class=\"note\">No latency recorded for ");
    AppendHtmlText(out, missing);
    out->append(".</p>");
  }
  out->append("</figure>");
}

}  // namespace plumb
