#include "runner/report/svg_tradeoff_chart.h"

#include <algorithm>
#include <cmath>
#include <vector>

#include "metrics/utf8.h"
#include "runner/compare/comparison_text.h"
#include "runner/report/html_escape.h"
#include "runner/report/svg_number.h"

namespace plumb {
namespace {

// SVG user units (CSS pixels at 100%): the plot area and the margins that hold the axis labels.
constexpr double kWidth = 720, kHeight = 380;
constexpr double kLeft = 64, kRight = 24, kTop = 16, kBottom = 52;
constexpr double kPlotWidth = kWidth - kLeft - kRight;
constexpr double kPlotHeight = kHeight - kTop - kBottom;
// A label's line height and a generous width per code point at the chart's 11px type.
constexpr double kLabelHeight = 13;
constexpr double kCharWidth = 7;

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

struct Axes {
  int low = 0, high = 1;         // decades of latency
  double q_low = 0, q_high = 1;  // quality range
  double step = 0.1;             // quality grid step
  double X(double ms) const {
    const double lg = ms > 0 ? std::log10(ms) : low;
    return kLeft + std::clamp((lg - low) / (high - low), 0.0, 1.0) * kPlotWidth;
  }
  double Y(double q) const {
    return kTop + (1 - std::clamp((q - q_low) / (q_high - q_low), 0.0, 1.0)) * kPlotHeight;
  }
};

size_t CodePoints(const std::string& text);

/// `text` cut to `max` code points, the last of them an ellipsis when anything was cut.
std::string Cut(const std::string& text, size_t max) {
  if (CodePoints(text) <= max) return text;
  std::string out;
  size_t pos = 0;
  for (size_t n = 0; n + 1 < max && pos < text.size(); ++n) {
    metrics::AppendUtf8(metrics::NextCodePoint(text, &pos), &out);
  }
  return out + "\xE2\x80\xA6";
}

size_t CodePoints(const std::string& text) {
  size_t pos = 0, n = 0;
  while (pos < text.size()) {
    metrics::NextCodePoint(text, &pos);
    ++n;
  }
  return n;
}

struct Mark {
  size_t run = 0;
  double x = 0, y = 0, y_low = 0, y_high = 0;
  std::string label;  // cut
  double label_x = 0, label_y = 0;
  bool anchor_end = false;
};

void AppendAxes(std::string* out, const Axes& a) {
  out->append("<g class=\"axis\">");
  const int steps = static_cast<int>(std::lround((a.q_high - a.q_low) / a.step));
  for (int k = 0; k <= steps; ++k) {
    const double q = a.q_low + k * a.step;
    const double y = a.Y(q);
    char label[16];
    std::snprintf(label, sizeof label, a.step < 0.1 ? "%.2f" : "%.1f", q);
    out->append("<line class=\"gl\" x1=\"" + SvgNumber(kLeft) + "\" x2=\"" +
                SvgNumber(kLeft + kPlotWidth) + "\" y1=\"" + SvgNumber(y) + "\" y2=\"" +
                SvgNumber(y) + "\"/><text class=\"yl\" x=\"" + SvgNumber(kLeft - 6) + "\" y=\"" +
                SvgNumber(y + 4) + "\">" + label + "</text>");
  }
  for (int e = a.low; e <= a.high; ++e) {
    const double x = a.X(std::pow(10, e));
    out->append("<line class=\"gl\" x1=\"" + SvgNumber(x) + "\" x2=\"" + SvgNumber(x) + "\" y1=\"" +
                SvgNumber(kTop) + "\" y2=\"" + SvgNumber(kTop + kPlotHeight) +
                "\"/><text class=\"xl\" x=\"" + SvgNumber(x) + "\" y=\"" +
                SvgNumber(kTop + kPlotHeight + 16) + "\">" + DecadeLabel(e) + "</text>");
    if (e == a.high || a.high - a.low > 5) continue;
    for (int m = 2; m <= 9; ++m) {
      const double xm = a.X(m * std::pow(10, e));
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
              "\">latency p95 (logarithmic scale)</text><text class=\"yt\" "
              "transform=\"translate(14 " +
              SvgNumber(kTop + kPlotHeight / 2) + ") rotate(-90)\">" + kCompareQualityMetric +
              " (mean and 95% interval)</text></g>");
}

/// Places labels beside their marks: right of the mark in the left 60% of the plot, left of it
/// beyond; a label that would overlap one placed before (same side, overlapping x) moves down a
/// line, or up when it would leave the plot.
void PlaceLabels(std::vector<Mark>* marks) {
  std::vector<size_t> order(marks->size());
  for (size_t i = 0; i < order.size(); ++i) order[i] = i;
  std::sort(order.begin(), order.end(), [&](size_t a, size_t b) {
    return (*marks)[a].y != (*marks)[b].y ? (*marks)[a].y < (*marks)[b].y : a < b;
  });
  struct Box {
    double x0, x1, y;
  };
  std::vector<Box> placed;
  for (size_t k : order) {
    Mark& m = (*marks)[k];
    const double width = CodePoints(m.label) * kCharWidth;
    m.anchor_end = m.x > kLeft + 0.6 * kPlotWidth;
    m.label_x = m.anchor_end ? m.x - 9 : m.x + 9;
    const double x0 = m.anchor_end ? m.label_x - width : m.label_x;
    const double x1 = m.anchor_end ? m.label_x : m.label_x + width;
    double y = m.y + 4;
    auto clashes = [&](double at) {
      for (const Box& b : placed) {
        if (x0 < b.x1 && b.x0 < x1 && std::fabs(at - b.y) < kLabelHeight) return true;
      }
      return false;
    };
    const double bottom = kTop + kPlotHeight - 3;
    while (clashes(y) && y + kLabelHeight <= bottom) y += kLabelHeight;
    if (clashes(y)) {
      y = m.y + 4;
      while (clashes(y) && y - kLabelHeight >= kTop + kLabelHeight) y -= kLabelHeight;
    }
    m.label_y = std::clamp(y, kTop + kLabelHeight - 2, bottom);
    placed.push_back({x0, x1, m.label_y});
  }
}

}  // namespace

void AppendTradeoffChart(std::string* out, std::string_view id, const Comparison& c) {
  std::vector<Mark> marks;
  std::string missing;
  double lat_low = 0, lat_high = 0, q_low = 1, q_high = 0;
  for (size_t i = 0; i < c.runs.size(); ++i) {
    const ComparedRun& r = c.runs[i];
    auto q = r.metrics.find(kCompareQualityMetric);
    const bool has_q = q != r.metrics.end() && std::isfinite(q->second.mean);
    const bool has_l = r.latency.available && std::isfinite(r.latency.p95) && r.latency.p95 > 0;
    if (!has_q || !has_l) {
      missing += (missing.empty() ? "" : ", ") + r.name + " (no " +
                 (has_q ? std::string("latency") : std::string(kCompareQualityMetric)) + ")";
      continue;
    }
    Mark m;
    m.run = i;
    const metrics::Interval iv = q->second.interval;
    const double lo = std::isfinite(iv.low) ? iv.low : q->second.mean;
    const double hi = std::isfinite(iv.high) ? iv.high : q->second.mean;
    m.label = Cut(r.name, kTradeoffLabelMax);
    marks.push_back(m);
    lat_low = lat_low == 0 ? r.latency.p95 : std::min(lat_low, r.latency.p95);
    lat_high = std::max(lat_high, r.latency.p95);
    q_low = std::min({q_low, lo, q->second.mean});
    q_high = std::max({q_high, hi, q->second.mean});
  }
  out->append("<figure class=\"chart tradeoff\">");
  if (!marks.empty()) {
    Axes a;
    a.low = static_cast<int>(std::floor(std::log10(lat_low)));
    a.high = static_cast<int>(std::ceil(std::log10(lat_high)));
    if (a.high <= a.low) a.high = a.low + 1;
    // Quality: whole tenths around the intervals, at least 0.2 wide, within [0, 1].
    a.q_low = std::max(0.0, std::floor(q_low * 10 - 1e-9) / 10);
    a.q_high = std::min(1.0, std::ceil(q_high * 10 + 1e-9) / 10);
    if (a.q_high - a.q_low < 0.2) {
      a.q_high = std::min(1.0, a.q_low + 0.2);
      a.q_low = std::max(0.0, a.q_high - 0.2);
    }
    a.step = a.q_high - a.q_low <= 0.3 ? 0.05 : 0.1;
    for (Mark& m : marks) {
      const ComparedRun& r = c.runs[m.run];
      const ComparedMetric& q = r.metrics.at(kCompareQualityMetric);
      m.x = a.X(r.latency.p95);
      m.y = a.Y(q.mean);
      m.y_low = a.Y(std::isfinite(q.interval.low) ? q.interval.low : q.mean);
      m.y_high = a.Y(std::isfinite(q.interval.high) ? q.interval.high : q.mean);
    }
    PlaceLabels(&marks);

    const std::string sid(id);
    std::string desc;
    for (const Mark& m : marks) {
      const ComparedRun& r = c.runs[m.run];
      desc += (desc.empty() ? "" : ". ") + r.name + ": " + kCompareQualityMetric + " " +
              CompareMetricText(r, kCompareQualityMetric) + ", latency p95 " +
              CompareTimeText(r.latency, "p95") + (r.on_front ? ", on the front" : "");
    }
    out->append("<svg class=\"tradeoff\" id=\"" + sid + "\" viewBox=\"0 0 " + SvgNumber(kWidth) +
                " " + SvgNumber(kHeight) + "\" role=\"img\" aria-labelledby=\"" + sid + "-t " +
                sid + "-d\"><title id=\"" + sid + "-t\">" + kCompareQualityMetric +
                " against latency p95, one mark per run</title><desc id=\"" + sid + "-d\">");
    AppendHtmlText(out, desc + ". " + FrontSentence(c));
    out->append("</desc>");
    AppendAxes(out, a);
    // The front, fastest first.
    std::string points;
    for (size_t i : c.front) {
      for (const Mark& m : marks) {
        if (m.run == i)
          points += (points.empty() ? "" : " ") + SvgNumber(m.x) + "," + SvgNumber(m.y);
      }
    }
    if (!points.empty()) out->append("<polyline class=\"front\" points=\"" + points + "\"/>");
    for (const Mark& m : marks) {
      const ComparedRun& r = c.runs[m.run];
      out->append(std::string("<g class=\"run") + (r.on_front ? " on" : " off") + "\" data-run=\"" +
                  std::to_string(m.run) + "\"><title>");
      AppendHtmlText(out, r.name + ": " + kCompareQualityMetric + " " +
                              CompareMetricText(r, kCompareQualityMetric) + ", latency p95 " +
                              CompareTimeText(r.latency, "p95") +
                              (r.on_front ? " (on the front)" : ""));
      out->append("</title><line class=\"eb\" x1=\"" + SvgNumber(m.x) + "\" x2=\"" +
                  SvgNumber(m.x) + "\" y1=\"" + SvgNumber(m.y_low) + "\" y2=\"" +
                  SvgNumber(m.y_high) + "\"/>");
      for (double y : {m.y_low, m.y_high}) {
        out->append("<line class=\"eb\" x1=\"" + SvgNumber(m.x - 4) + "\" x2=\"" +
                    SvgNumber(m.x + 4) + "\" y1=\"" + SvgNumber(y) + "\" y2=\"" + SvgNumber(y) +
                    "\"/>");
      }
      out->append("<circle class=\"mk\" cx=\"" + SvgNumber(m.x) + "\" cy=\"" + SvgNumber(m.y) +
                  "\" r=\"5\"/><text class=\"nm" + (m.anchor_end ? " end" : "") + "\" x=\"" +
                  SvgNumber(m.label_x) + "\" y=\"" + SvgNumber(m.label_y) + "\">");
      AppendHtmlText(out, m.label);
      out->append("</text></g>");
    }
    out->append("</svg><figcaption><span>");
    AppendHtmlText(out,
                   "Each mark is a run: up is more often correct, left is faster (the 95th "
                   "percentile of its latency). Bars are the 95% intervals of " +
                       std::string(kCompareQualityMetric) +
                       ". Filled marks are on the front, joined by the line: no other run is "
                       "both more correct and faster.");
    out->append("</span></figcaption>");
  }
  if (!missing.empty()) {
    out->append("<p class=\"note\">Not drawn: ");
    AppendHtmlText(out, missing);
    out->append(".</p>");
  }
  out->append("</figure>");
}

}  // namespace plumb
