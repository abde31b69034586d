#include "runner/compare/comparison_table.h"

#include <fmt/format.h>

#include <algorithm>

#include "metrics/utf8.h"
#include "runner/base/terminal_palette.h"
#include "runner/compare/comparison_text.h"

namespace plumb {
namespace {

constexpr size_t kNameWidth = 24;

/// `text` with C0/C1 controls and DEL as '?', cut to `max` code points ("..." after).
std::string Plain(const std::string& text, size_t max = 80) {
  std::string out;
  size_t pos = 0, count = 0;
  while (pos < text.size()) {
    if (count++ == max) {
      out += "...";
      break;
    }
    const char32_t cp = metrics::NextCodePoint(text, &pos);
    if (cp < 0x20 || (cp >= 0x7F && cp < 0xA0)) {
      out += '?';
    } else {
      metrics::AppendUtf8(cp, &out);
    }
  }
  return out;
}

/// Code points, as the terminal is assumed to show them (one column each).
size_t Width(const std::string& text) {
  size_t pos = 0, n = 0;
  while (pos < text.size()) {
    metrics::NextCodePoint(text, &pos);
    ++n;
  }
  return n;
}

std::string Pad(const std::string& text, size_t width) {
  const size_t w = Width(text);
  return w >= width ? text : text + std::string(width - w, ' ');
}

}  // namespace

std::string FormatComparisonTable(const Comparison& c, bool colour) {
  const Palette p = MakePalette(colour);
  std::string out =
      fmt::format("{}compare{}: suite {}, {} runs; verdicts against the first, {}\n", p.bold,
                  p.reset, Plain(c.suite), c.runs.size(), Plain(c.runs[0].name, kNameWidth));
  for (size_t i = 0; i < c.runs.size(); ++i) {
    const ComparedRun& r = c.runs[i];
    std::string line = fmt::format("  {}. {} ({}), {} cases", i + 1, Plain(r.name, kNameWidth),
                                   Plain(r.identity.dir), r.cases);
    std::string labels;
    for (const auto& [key, value] : r.identity.labels) {
      labels += (labels.empty() ? "" : ", ") + Plain(key + "=" + value, 40);
    }
    if (!labels.empty()) line += "  labels: " + labels;
    out += line + "\n";
  }

  // The table: a row per figure, a column per run.
  std::vector<std::pair<std::string, std::vector<std::string>>> rows;
  auto row = [&](const std::string& label, auto cell) {
    std::vector<std::string> cells;
    for (const ComparedRun& r : c.runs) cells.push_back(cell(r));
    rows.emplace_back(label, std::move(cells));
  };
  for (const std::string& metric : c.metrics) {
    row(metric, [&](const ComparedRun& r) { return CompareMetricText(r, metric); });
  }
  row("latency p50", [](const ComparedRun& r) { return CompareTimeText(r.latency, "p50"); });
  row("latency p95", [](const ComparedRun& r) { return CompareTimeText(r.latency, "p95"); });
  row("ttft p50", [](const ComparedRun& r) { return CompareTimeText(r.ttft, "p50"); });
  row("ttft p95", [](const ComparedRun& r) { return CompareTimeText(r.ttft, "p95"); });
  row("warm-up", [](const ComparedRun& r) { return CompareWarmupText(r); });
  row("cost / 1,000 cases", [](const ComparedRun& r) { return CompareCostText(r); });
  row("on the front", [](const ComparedRun& r) { return std::string(r.on_front ? "yes" : "no"); });
  row("own verdict", [](const ComparedRun& r) { return "exit " + std::to_string(r.exit_code); });

  size_t label_width = 6;
  for (const auto& [label, cells] : rows) label_width = std::max(label_width, Width(label));
  std::vector<size_t> widths;
  for (size_t i = 0; i < c.runs.size(); ++i) {
    size_t w = Width(Plain(c.runs[i].name, kNameWidth));
    for (const auto& [label, cells] : rows) w = std::max(w, Width(cells[i]));
    widths.push_back(w);
  }
  out += "\n  " + Pad("", label_width);
  for (size_t i = 0; i < c.runs.size(); ++i) {
    const std::string name = Plain(c.runs[i].name, kNameWidth);
    out += "   " + std::string(p.bold) + name + p.reset;
    if (i + 1 < c.runs.size()) out += std::string(widths[i] - Width(name), ' ');
  }
  out += "\n";
  for (const auto& [label, cells] : rows) {
    std::string line = "  " + Pad(label, label_width);
    for (size_t i = 0; i < cells.size(); ++i) line += "   " + Pad(cells[i], widths[i]);
    while (!line.empty() && line.back() == ' ') line.pop_back();
    out += line + "\n";
  }

  out += "\n";
  for (size_t i = 1; i < c.runs.size(); ++i) out += Plain(AgainstFirstSentence(c, i), 2000) + "\n";
  out += Plain(FrontSentence(c), 2000) + "\n";
  if (c.break_evens.empty()) {
    out += "Break-even: no pair of runs trades a longer start-up for a shorter time a case.\n";
  } else {
    for (const BreakEvenStatement& b : c.break_evens) {
      out += "Break-even: " + Plain(BreakEvenSentence(c, b), 2000) + "\n";
    }
  }
  out += fmt::format("\n{}exit {}: {}{}\n", c.exit_code == 0 ? p.good : p.bad, c.exit_code,
                     Plain(c.reason, 4000), p.reset);
  return out;
}

}  // namespace plumb
