#include "runner/report/html_compare_report.h"

#include <fmt/format.h>

#include <cmath>

#include "runner/compare/comparison_text.h"
#include "runner/report/html_escape.h"
#include "runner/report/html_page_assets.h"
#include "runner/report/svg_tradeoff_chart.h"

namespace plumb {
namespace {

void AppendCell(std::string* out, const std::string& text, const char* cls = "num") {
  out->append(std::string("<td class=\"") + cls + "\">");
  AppendHtmlText(out, text);
  out->append("</td>");
}

void AppendRunHeads(std::string* out, const Comparison& c, size_t from) {
  for (size_t i = from; i < c.runs.size(); ++i) {
    out->append("<th class=\"run\" scope=\"col\">");
    AppendHtmlText(out, c.runs[i].name);
    out->append("</th>");
  }
}

void AppendFiguresTable(std::string* out, const Comparison& c) {
  out->append(
      "<div class=\"scroll\"><table class=\"compare\" id=\"figures\"><thead><tr><th "
      "scope=\"col\">figure</th>");
  AppendRunHeads(out, c, 0);
  out->append("</tr></thead><tbody>");
  auto row = [&](const std::string& label, auto cell, const char* cls = "num") {
    out->append("<tr><th scope=\"row\">");
    AppendHtmlText(out, label);
    out->append("</th>");
    for (const ComparedRun& r : c.runs) AppendCell(out, cell(r), cls);
    out->append("</tr>");
  };
  for (const std::string& metric : c.metrics) {
    row(metric, [&](const ComparedRun& r) { return CompareMetricText(r, metric); });
  }
  row("latency p50", [](const ComparedRun& r) { return CompareTimeText(r.latency, "p50"); });
  row("latency p95", [](const ComparedRun& r) { return CompareTimeText(r.latency, "p95"); });
  row("latency mean", [](const ComparedRun& r) { return CompareTimeText(r.latency, "mean"); });
  row("time to first token p50",
      [](const ComparedRun& r) { return CompareTimeText(r.ttft, "p50"); });
  row("time to first token p95",
      [](const ComparedRun& r) { return CompareTimeText(r.ttft, "p95"); });
  row("warm-up", [](const ComparedRun& r) { return CompareWarmupText(r); });
  row("cost per 1,000 cases", [](const ComparedRun& r) { return CompareCostText(r); });
  row("cases", [](const ComparedRun& r) { return std::to_string(r.cases); });
  row("on the front", [](const ComparedRun& r) { return std::string(r.on_front ? "yes" : "no"); });
  // The reason can be long (every broken floor): it wraps instead of widening the column.
  row(
      "own verdict",
      [](const ComparedRun& r) {
        return "exit " + std::to_string(r.exit_code) +
               (r.verdict_reason.empty() ? "" : ": " + r.verdict_reason);
      },
      "txt");
  out->append("</tbody></table></div>");
}

void AppendVerdictTable(std::string* out, const Comparison& c) {
  out->append(
      "<div class=\"scroll\"><table class=\"compare\" id=\"verdicts\"><thead><tr><th "
      "scope=\"col\">metric</th>");
  AppendRunHeads(out, c, 1);
  out->append("</tr></thead><tbody>");
  for (const std::string& metric : c.metrics) {
    out->append("<tr><th scope=\"row\">");
    AppendHtmlText(out, metric);
    out->append("</th>");
    for (size_t i = 1; i < c.runs.size(); ++i) {
      const MetricDrift* m = c.against_first[i - 1].Find(metric);
      if (m == nullptr) {
        AppendCell(out, "n/a");
        continue;
      }
      const std::string verdict = VerdictName(m->verdict);
      out->append("<td class=\"num\">");
      AppendHtmlText(out, std::isfinite(m->delta) ? fmt::format("{:+.3f}", m->delta) : "n/a");
      if (std::isfinite(m->interval.low) && std::isfinite(m->interval.high)) {
        AppendHtmlText(out, fmt::format(" [{:+.3f}, {:+.3f}]", m->interval.low, m->interval.high));
      }
      out->append(" <span class=\"verd ");
      AppendHtmlAttribute(out, verdict);
      out->append("\">");
      AppendHtmlText(out, verdict + (m->gated ? " (gated)" : ""));
      out->append("</span></td>");
    }
    out->append("</tr>");
  }
  out->append("</tbody></table></div>");
}

}  // namespace

std::string RenderHtmlCompareReport(const Comparison& c) {
  std::string out;
  AppendPageStart(&out, "plumb compare: " + c.suite, "compare");
  out.append(c.exit_code == 0 ? "<header class=\"mast held\">" : "<header class=\"mast broken\">");
  out.append("<div class=\"wrap\"><div class=\"brand\">plumb <span>compare</span></div><h1>");
  out.append(c.exit_code == 0 ? "<span class=\"verdict good\">No regression</span>"
                              : "<span class=\"verdict bad\">Regressed</span>");
  AppendHtmlText(&out, c.suite + " \xC2\xB7 " + std::to_string(c.runs.size()) + " runs");
  out.append("</h1><p class=\"reason\">");
  AppendHtmlText(&out, "exit " + std::to_string(c.exit_code) + ": " + c.reason);
  out.append("</p><ul class=\"lines\" id=\"statements\"><li><strong>Front:</strong> ");
  AppendHtmlText(&out, FrontSentence(c));
  out.append("</li>");
  if (c.break_evens.empty()) {
    out.append(
        "<li class=\"breakeven\"><strong>Break-even:</strong> no pair of runs trades a longer "
        "start-up for a shorter time a case.</li>");
  }
  for (const BreakEvenStatement& b : c.break_evens) {
    out.append("<li class=\"breakeven\"><strong>Break-even:</strong> ");
    AppendHtmlText(&out, BreakEvenSentence(c, b));
    out.append("</li>");
  }
  out.append("</ul></div></header><main class=\"wrap\"><h2>Quality against latency</h2>");
  AppendTradeoffChart(&out, "tradeoff", c);
  out.append("<h2>The runs</h2>");
  AppendFiguresTable(&out, c);
  out.append(
      "<p class=\"note\">Intervals are 95%: Wilson for 0/1 metrics, a seeded bootstrap for the "
      "others, as each run recorded them. Latency counts a timed-out call at its timeout (\"at "
      "least\"). The break-even takes a worker's start-up (its warm-up; with first calls, the "
      "first call less the mean latency) and the mean latency of a case.</p>");
  out.append("<h2>Against the first run</h2><ul class=\"lines\">");
  for (size_t i = 1; i < c.runs.size(); ++i) {
    out.append("<li>");
    AppendHtmlText(&out, AgainstFirstSentence(c, i));
    out.append("</li>");
  }
  out.append("</ul>");
  AppendVerdictTable(&out, c);
  out.append(
      "<p class=\"note\">Cases paired by id; the delta is the later run's mean less the first "
      "run's, with a 95% paired-bootstrap interval; the verdict is plumb drift's rule (the "
      "interval clear of 0, |delta| at least the minimum effect, and the test's p at or below "
      "0.05 after the family correction of the gated metrics).</p>");
  out.append("<h2>Where the runs are</h2><ul class=\"lines\" id=\"where\">");
  for (const ComparedRun& r : c.runs) {
    out.append("<li><strong>");
    AppendHtmlText(&out, r.name);
    out.append("</strong> <code>");
    AppendHtmlText(&out, r.identity.dir);
    out.append("</code>");
    for (const auto& [key, value] : r.identity.labels) {
      out.append(" <code>");
      AppendHtmlText(&out, key + "=" + value);
      out.append("</code>");
    }
    if (!r.identity.started_at.empty()) AppendHtmlText(&out, " started " + r.identity.started_at);
    out.append("</li>");
  }
  out.append("</ul></main>");
  AppendPageEnd(&out);
  return out;
}

bool WriteHtmlCompareReport(const Comparison& c, const std::string& path, std::string* error) {
  return WriteHtmlPage(
      "HTML compare report", [&] { return RenderHtmlCompareReport(c); }, path, error);
}

}  // namespace plumb
