#include "runner/report/svg_delta_chart.h"

#include <algorithm>
#include <cmath>

#include "runner/report/html_bounded_text.h"
#include "runner/report/html_escape.h"
#include "runner/report/html_report_parts.h"
#include "runner/report/svg_number.h"

namespace plumb {
namespace {

constexpr double kWidth = 380;
constexpr double kLeft = 118, kRight = 26, kTop = 8, kBottom = 44;
constexpr double kRowHeight = 16;
constexpr double kPlotWidth = kWidth - kLeft - kRight;
// Tag labels longer than this are cut (the whole tag is in the row's <title>).
constexpr size_t kLabelCodePoints = 16;

// Half the scale: the smallest of 0.05, 0.1, 0.2, 0.25, 0.5, 1 (then doubling) that holds
// `reach`.
double NiceRange(double reach) {
  for (double r : {0.05, 0.1, 0.2, 0.25, 0.5, 1.0}) {
    if (reach <= r) return r;
  }
  double r = 1;
  while (r < reach) r *= 2;
  return r;
}

std::string TickLabel(double v) {
  if (v == 0) return "0";
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%+.3g", v);
  std::string s = buffer;
  if (s[0] == '-') s = "\xE2\x88\x92" + s.substr(1);
  return s;
}

// The row in words, for <title> and <desc>.
std::string RowWords(const DeltaRow& row) {
  std::string s = row.label + ": ";
  if (!row.delta) return s + "not compared";
  s += "delta " + FormatSignedScore(*row.delta);
  if (row.low && row.high) {
    s += ", 95% interval " + FormatSignedScore(*row.low) + " to " + FormatSignedScore(*row.high);
  }
  if (!row.verdict.empty()) s += ", " + row.verdict;
  return s;
}

}  // namespace

void AppendDeltaChart(std::string* out, std::string_view id, std::string_view metric,
                      const std::vector<DeltaRow>& rows, double min_effect) {
  double reach = 2 * std::max(min_effect, 0.0);
  for (const DeltaRow& r : rows) {
    for (const std::optional<double>& v : {r.delta, r.low, r.high}) {
      if (v && std::isfinite(*v)) reach = std::max(reach, std::abs(*v));
    }
  }
  const double range = NiceRange(reach);
  const double plot_height = std::max<double>(1, rows.size()) * kRowHeight + 8;
  const double height = kTop + plot_height + kBottom;
  auto x = [&](double v) {
    return kLeft + (std::clamp(v, -range, range) + range) / (2 * range) * kPlotWidth;
  };
  const std::string sid(id);
  const std::string name(metric);

  out->append("<figure class=\"chart\"><svg class=\"deltas\" id=\"" + sid + "\" viewBox=\"0 0 " +
              SvgNumber(kWidth) + " " + SvgNumber(height) + "\" role=\"img\" aria-labelledby=\"" +
              sid + "-t " + sid + "-d\"><title id=\"" + sid + "-t\">");
  AppendHtmlText(out, name + ": candidate minus base, by tag");
  out->append("</title><desc id=\"" + sid + "-d\">");
  std::string desc = "Zero line and the band of plus or minus min_effect " +
                     FormatScore(min_effect) + ", inside which no change counts. ";
  for (size_t i = 0; i < rows.size(); ++i) desc += (i ? "; " : "") + RowWords(rows[i]);
  AppendHtmlText(out, desc + ".");
  out->append("</desc><g class=\"axis\">");
  const double bottom = kTop + plot_height;
  // The min-effect band, the ticks with their labels, and the zero line over them.
  out->append("<rect class=\"band\" x=\"" + SvgNumber(x(-min_effect)) + "\" y=\"" +
              SvgNumber(kTop) + "\" width=\"" +
              SvgNumber(std::max(1.0, x(min_effect) - x(-min_effect))) + "\" height=\"" +
              SvgNumber(plot_height) + "\"/>");
  for (int k = -2; k <= 2; ++k) {
    const double v = range * k / 2;
    out->append("<line class=\"gl\" x1=\"" + SvgNumber(x(v)) + "\" x2=\"" + SvgNumber(x(v)) +
                "\" y1=\"" + SvgNumber(kTop) + "\" y2=\"" + SvgNumber(bottom) +
                "\"/><text class=\"xl\" x=\"" + SvgNumber(x(v)) + "\" y=\"" +
                SvgNumber(bottom + 14) + "\">" + TickLabel(v) + "</text>");
  }
  out->append("<line class=\"zero\" x1=\"" + SvgNumber(x(0)) + "\" x2=\"" + SvgNumber(x(0)) +
              "\" y1=\"" + SvgNumber(kTop) + "\" y2=\"" + SvgNumber(bottom) + "\"/>");
  out->append("<text class=\"xt\" x=\"" + SvgNumber(kLeft + kPlotWidth / 2) + "\" y=\"" +
              SvgNumber(height - 10) + "\">");
  AppendHtmlText(out, name + " delta, candidate \xE2\x88\x92 base");
  out->append("</text></g>");
  for (size_t i = 0; i < rows.size(); ++i) {
    const DeltaRow& r = rows[i];
    const double y = kTop + 4 + kRowHeight * (i + 0.5);
    out->append("<g class=\"row " +
                std::string(r.verdict == "regressed"  ? "down"
                            : r.verdict == "improved" ? "up"
                                                      : "flat") +
                "\"><title>");
    AppendHtmlText(out, RowWords(r));
    out->append("</title><text class=\"lab\" x=\"" + SvgNumber(kLeft - 6) + "\" y=\"" +
                SvgNumber(y + 4) + "\">");
    AppendClippedText(out, r.label, kLabelCodePoints);
    out->append("</text>");
    if (r.low && r.high) {
      out->append("<line class=\"ci\" x1=\"" + SvgNumber(x(*r.low)) + "\" x2=\"" +
                  SvgNumber(x(*r.high)) + "\" y1=\"" + SvgNumber(y) + "\" y2=\"" + SvgNumber(y) +
                  "\"/>");
    }
    if (r.delta) {
      const double cx = x(*r.delta);
      if (r.verdict == "regressed" || r.verdict == "improved") {
        const double dy = r.verdict == "regressed" ? 5 : -5;  // points down or up
        out->append("<path class=\"mk\" d=\"M" + SvgNumber(cx - 5) + " " + SvgNumber(y - dy) + "H" +
                    SvgNumber(cx + 5) + "L" + SvgNumber(cx) + " " + SvgNumber(y + dy) + "Z\"/>");
      } else {
        out->append("<circle class=\"mk\" cx=\"" + SvgNumber(cx) + "\" cy=\"" + SvgNumber(y) +
                    "\" r=\"3.5\"/>");
      }
    }
    out->append("</g>");
  }
  out->append("</svg></figure>");
}

}  // namespace plumb
