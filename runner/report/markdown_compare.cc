#include "runner/report/markdown_compare.h"

#include "runner/compare/comparison_text.h"
#include "runner/report/markdown_report.h"
#include "runner/run/run_record.h"

namespace plumb {

std::string FormatCompareMarkdown(const Comparison& c) {
  std::string out = "### plumb compare: " + MarkdownText(c.suite) + ", " +
                    std::to_string(c.runs.size()) + " runs\n\n";
  out += "**exit " + std::to_string(c.exit_code) + "**: " + MarkdownText(c.reason, 2000) + "\n\n";
  out += "- " + MarkdownText(FrontSentence(c), 2000) + "\n";
  if (c.break_evens.empty()) {
    out += "- Break-even: no pair of runs trades a longer start-up for a shorter time a case.\n";
  }
  for (const BreakEvenStatement& b : c.break_evens) {
    out += "- Break-even: " + MarkdownText(BreakEvenSentence(c, b), 2000) + "\n";
  }
  out += "\n| figure |";
  std::string rule = "|---|";
  for (const ComparedRun& r : c.runs) {
    out += " " + MarkdownText(r.name, 40) + " |";
    rule += "---|";
  }
  out += "\n" + rule + "\n";
  auto row = [&](const std::string& label, auto cell) {
    out += "| " + MarkdownText(label) + " |";
    for (const ComparedRun& r : c.runs) out += " " + MarkdownText(cell(r)) + " |";
    out += "\n";
  };
  for (const std::string& metric : c.metrics) {
    row(metric, [&](const ComparedRun& r) { return CompareMetricText(r, metric); });
  }
  row("latency p50", [](const ComparedRun& r) { return CompareTimeText(r.latency, "p50"); });
  row("latency p95", [](const ComparedRun& r) { return CompareTimeText(r.latency, "p95"); });
  row("ttft p50", [](const ComparedRun& r) { return CompareTimeText(r.ttft, "p50"); });
  row("warm-up", [](const ComparedRun& r) { return CompareWarmupText(r); });
  row("cost / 1,000 cases", [](const ComparedRun& r) { return CompareCostText(r); });
  row("on the front", [](const ComparedRun& r) { return std::string(r.on_front ? "yes" : "no"); });
  out += "\n";
  for (size_t i = 1; i < c.runs.size(); ++i) {
    out += "- " + MarkdownText(AgainstFirstSentence(c, i), 4000) + "\n";
  }
  out +=
      "\nIntervals are 95%. A suite score is evidence about this suite only; it certifies "
      "nothing for medical, legal or safety-critical use.\n";
  return out;
}

bool WriteCompareMarkdown(const Comparison& c, const std::string& path, std::string* error) {
  if (!WriteFileAtomically(path, FormatCompareMarkdown(c), error)) {
    *error = "cannot write the Markdown compare summary: " + *error;
    return false;
  }
  return true;
}

}  // namespace plumb
