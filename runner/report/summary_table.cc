#include "runner/report/summary_table.h"

#include <fmt/format.h>

#include <cmath>

#include "runner/base/terminal_palette.h"
#include "runner/report/freshness_report.h"

namespace plumb {
namespace {

std::string ThresholdCell(const std::vector<ThresholdOutcome>& thresholds, const std::string& tag,
                          const std::string& metric, const Palette& p) {
  for (const ThresholdOutcome& t : thresholds) {
    if (t.tag != tag || t.metric != metric) continue;
    return fmt::format("{} {:<6.4g} {}{}{}", t.ceiling ? "ceiling" : "floor  ", t.limit,
                       t.held ? p.good : p.bad, t.held ? "held" : "BROKEN", p.reset);
  }
  return "";
}

void AppendMetricRows(std::string* out, const std::vector<MetricAggregate>& metrics,
                      const std::vector<ThresholdOutcome>& thresholds, const std::string& tag,
                      const std::string& indent, const Palette& p,
                      const std::map<std::string, std::string>& grade_notes = {}) {
  for (const MetricAggregate& m : metrics) {
    const metrics::MetricSummary& s = m.summary;
    std::string row = fmt::format("{}{:<20} {:>7.3f}   [{:.3f}, {:.3f}] {:>6}   {}", indent,
                                  m.metric, s.mean, s.interval.low, s.interval.high, s.n,
                                  ThresholdCell(thresholds, tag, m.metric, p));
    // A grade shows how far its grader can be trusted: kappa and the base rate, or that it
    // was never checked against a person's labels.
    if (auto note = grade_notes.find(m.metric); note != grade_notes.end()) {
      const bool trusted = note->second.rfind("kappa", 0) == 0;
      row += fmt::format("{}{}{}{}", row.back() == ' ' ? "" : "   ", trusted ? p.dim : p.bad,
                         note->second, p.reset);
    } else if (m.metric.rfind("grade.", 0) == 0) {
      row += fmt::format("{}{}uncalibrated{}", row.back() == ' ' ? "" : "   ", p.bad, p.reset);
    }
    *out += row + "\n";
  }
}

}  // namespace

std::string FormatMoney(double amount, const std::string& currency) {
  // Per-case costs are often fractions of a cent: six significant digits, never rounded to 0.
  const std::string number = fmt::format("{:.6g}", amount);
  return currency.empty() ? number : number + " " + currency;
}

std::string FormatCostLine(const TokenPrice& price, int64_t items, double total,
                           const metrics::MetricSummary& per_case) {
  if (items == 0) {
    return fmt::format("  {:<20} no reply carried the token counts its price needs\n", "cost");
  }
  return fmt::format(
      "  {:<20} {} in all over {} replies; per case mean {} [{}, {}] (n {})\n", "cost",
      FormatMoney(total, price.currency), items, FormatMoney(per_case.mean, price.currency),
      FormatMoney(per_case.interval.low, ""), FormatMoney(per_case.interval.high, ""), per_case.n);
}

std::string FormatCauseRows(const CauseBreakdown& causes, const Palette& p) {
  if (causes.failed == 0) return fmt::format("  all {} cases passed\n", causes.cases);
  std::string out = fmt::format("  {}failed {} of {} cases{}: {}\n", p.bad, causes.failed,
                                causes.cases, p.reset, CauseCountsText(causes));
  out += fmt::format("  {}{:<26} {:>6} {:>7}   {}{}\n", p.dim, "cause", "cases", "share",
                     "95% interval", p.reset);
  for (const CauseCount& c : causes.causes) {
    out += fmt::format("  {:<26} {:>6} {:>7.3f}   [{:.3f}, {:.3f}]\n", FailureCauseLabel(c.cause),
                       c.count, c.share, c.interval.low, c.interval.high);
  }
  return out;
}

std::string FormatSessionRows(const SessionAggregates& s) {
  auto number = [](double v) {
    return std::isfinite(v) ? fmt::format("{:.2f}", v) : std::string("n/a");
  };
  auto estimate = [&](const char* name, const metrics::PercentileEstimate& e) {
    return fmt::format("{} {} [{}, {}]", name, number(e.value), number(e.interval.low),
                       number(e.interval.high));
  };
  auto ratio = [&](const char* name, const metrics::RatioResult& r) {
    return fmt::format("{} x{} [{}, {}]", name, number(r.ratio), number(r.interval.low),
                       number(r.interval.high));
  };
  std::string out =
      fmt::format("\n  {:<20} {} session{}, {} turns; session_pass {:.3f} [{:.3f}, {:.3f}]",
                  "sessions", s.count, s.count == 1 ? "" : "s", s.turns, s.SessionPass(),
                  s.session_pass_interval.low, s.session_pass_interval.high);
  if (s.restarts > 0) out += fmt::format("; {} run again from turn 1", s.restarts);
  out += "\n";
  out +=
      fmt::format("  {:<20} {}  {}  (n {})\n", "first turn ms", estimate("p50", s.first_turn.p50),
                  estimate("p95", s.first_turn.p95), s.first_turn.n);
  out += fmt::format("  {:<20} {}  {}  (n {})\n", "follow-up ms", estimate("p50", s.follow_up.p50),
                     estimate("p95", s.follow_up.p95), s.follow_up.n);
  out += fmt::format("  {:<20} {}  {}\n", "follow-up / first", ratio("p50", s.p50_ratio),
                     ratio("p95", s.p95_ratio));
  return out;
}

std::string FormatSummary(const SummaryHeader& h, const RunAggregates& run,
                          const std::vector<ThresholdOutcome>& thresholds,
                          const RunVerdict& verdict, bool colour, bool exit_line,
                          const std::string& error_reasons) {
  const Palette p = MakePalette(colour);
  std::string out;
  out += fmt::format("{}{} / {}{}  {} cases", p.bold, h.suite, h.pipeline, p.reset, run.cases);
  if (h.repeat > 1) out += fmt::format(" x {} repeats", h.repeat);
  out += fmt::format(", {} errored, {} passed, {:.1f}s\n\n", run.errored, run.passed, h.seconds);
  // Why cases failed comes first: it is the first question about a failed run.
  out += FormatCauseRows(run.causes, p);
  if (!error_reasons.empty()) out += error_reasons;
  out += "\n";
  out += fmt::format("  {}{:<20} {:>7}   {:<16} {:>6}   {}{}\n", p.dim, "metric", "mean",
                     "95% interval", "n", "floor / ceiling", p.reset);
  AppendMetricRows(&out, run.metrics, thresholds, "", "  ", p, h.grade_notes);

  const metrics::LatencySummary& l = run.latency;
  if (l.n > 0) {
    // A statistic a timed-out call reaches is only a lower bound: "p95 at least 2000.00".
    auto stat = [](const char* name, double value, bool at_least) {
      return fmt::format("{} {}{:.2f}", name, at_least ? "at least " : "", value);
    };
    out += fmt::format("\n  {:<20} {}  {}  {}  {}  {}  {}  (n {})\n", "latency ms",
                       stat("p50", l.p50, l.p50_at_least), stat("p90", l.p90, l.p90_at_least),
                       stat("p95", l.p95, l.p95_at_least), stat("p99", l.p99, l.p99_at_least),
                       stat("mean", l.mean, l.mean_at_least()),
                       stat("max", l.max, l.mean_at_least()), l.n);
    if (l.lower_bounds > 0) {
      out += fmt::format("  {:<20} {} of {}, counted at their timeout as lower bounds\n",
                         "timed out", l.lower_bounds, l.n);
    }
  }
  if (const WarmupSummary w = SummarizeWarmups(run.warmups); w.n > 0) {
    // Start-up is kept out of the case latency; this is where it shows.
    const std::string restarts =
        w.restarts > 0 ? fmt::format(", {} restart{}", w.restarts, w.restarts == 1 ? "" : "s") : "";
    if (w.signal == "first_call") {
      out += fmt::format(
          "  {:<20} {} first call{} (start-up included, kept out of the latency): mean {:.2f} "
          "ms, max {:.2f} ms{}\n",
          "warm-up", w.n, w.n == 1 ? "" : "s", w.mean_ms, w.max_ms, restarts);
    } else {
      out += fmt::format("  {:<20} {} worker{} ready ({}): mean {:.2f} ms, max {:.2f} ms{}\n",
                         "warm-up", w.n, w.n == 1 ? "" : "s",
                         w.signal == "ready_url" ? "ready_url answered 2xx" : "ready line",
                         w.mean_ms, w.max_ms, restarts);
    }
  }
  out += FreshnessTerminalLines(run.freshness);
  for (const ThresholdOutcome& t : thresholds) {
    if (!t.tag.empty() || (t.metric != "latency_p50_ms" && t.metric != "latency_p95_ms")) continue;
    out += fmt::format("  {:<20} {}\n", t.metric, ThresholdCell(thresholds, "", t.metric, p));
  }
  if (const metrics::LatencySummary& t = run.ttft; t.n > 0) {
    out += fmt::format(
        "  {:<20} p50 {:.2f} [{:.2f}, {:.2f}]  p90 {:.2f}  p95 {:.2f} [{:.2f}, {:.2f}]  p99 {:.2f} "
        " "
        "mean {:.2f}  max {:.2f}  (n {})\n",
        "first token ms", t.p50, run.ttft_p50_interval.low, run.ttft_p50_interval.high, t.p90,
        t.p95, run.ttft_p95_interval.low, run.ttft_p95_interval.high, t.p99, t.mean, t.max, t.n);
  }
  if (run.input_tokens + run.output_tokens > 0) {
    out += fmt::format("  {:<20} {} in, {} out", "tokens", run.input_tokens, run.output_tokens);
    if (run.usage_items > 0) {
      out += fmt::format(" (mean {:.1f} in, {:.1f} out over {} replies)",
                         static_cast<double>(run.input_tokens) / run.usage_items,
                         static_cast<double>(run.output_tokens) / run.usage_items, run.usage_items);
    }
    out += "\n";
  }
  if (run.price) {
    out += FormatCostLine(*run.price, run.cost_items, run.cost_total, run.cost_per_case);
  }
  if (run.sessions) out += FormatSessionRows(*run.sessions);

  if (!run.tags.empty()) {
    out += fmt::format("\n  {}{:<20} {:>6} {:>9} {:>9} {:>9} {:>9}{}\n", p.dim, "tag", "cases",
                       "correct", "token_f1", "cit_rec", "pass", p.reset);
    for (const TagAggregate& t : run.tags) {
      auto cell = [&](const char* metric) {
        const metrics::MetricSummary* s = run.Find(metric, t.tag);
        return s == nullptr ? std::string("-") : fmt::format("{:.3f}", s->mean);
      };
      out +=
          fmt::format("  {:<20} {:>6} {:>9} {:>9} {:>9} {:>9}\n", t.tag, t.cases, cell("correct"),
                      cell("token_f1"), cell("citation_recall"), cell("pass_rate"));
    }
    for (const ThresholdOutcome& th : thresholds) {
      if (th.tag.empty()) continue;
      const std::string value = th.value ? fmt::format("{:.3f}", *th.value) : "not measured";
      out += fmt::format("  tag {} {} = {}  {}\n", th.tag, th.metric, value,
                         ThresholdCell(thresholds, th.tag, th.metric, p));
    }
  }
  if (!run.unstable_cases.empty()) {
    out += fmt::format("\n  unstable across repeats: {} case(s), first: {}\n",
                       run.unstable_cases.size(), run.unstable_cases.front());
  }
  if (exit_line) out += "\n" + FormatExitLine(verdict, colour);
  return out;
}

}  // namespace plumb
