#include "runner/compare/drift_table.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

#include "metrics/paired_tests.h"
#include "metrics/utf8.h"
#include "runner/base/terminal_palette.h"
#include "runner/compare/session_drift.h"

namespace plumb {
namespace {

constexpr size_t kShownCases = 10;
constexpr int kShownTagRows = 20;

/// `text` with C0/C1 controls and DEL as '?', cut to `max` code points.
std::string Plain(const std::string& text, size_t max = 60) {
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

std::string Num(double x, const char* spec) {
  if (!std::isfinite(x)) return "n/a";
  return fmt::format(fmt::runtime(spec), x);
}

std::string IntervalText(const metrics::Interval& i, const char* spec) {
  if (!std::isfinite(i.low) || !std::isfinite(i.high)) return "n/a";
  return "[" + Num(i.low, spec) + ", " + Num(i.high, spec) + "]";
}

std::string PValue(double p) {
  if (!std::isfinite(p)) return "n/a";
  return p < 1e-4 ? fmt::format("{:.1e}", p) : fmt::format("{:.4f}", p);
}

std::string RunLine(const char* role, const RunIdentity& id) {
  std::string line = fmt::format("  {:<5} {} ({})", role, Plain(id.pipeline), Plain(id.dir, 80));
  std::string labels;
  for (const auto& [key, value] : id.labels) {
    labels += (labels.empty() ? "" : ", ") + Plain(key + "=" + value);
  }
  if (!labels.empty()) line += "  labels: " + labels;
  if (!id.started_at.empty()) line += "  started " + Plain(id.started_at);
  return line + "\n";
}

std::string VerdictCell(const MetricDrift& m, const Palette& p) {
  switch (m.verdict) {
    case Verdict::kTooFewCases:
      return fmt::format("too few cases ({} more needed)", m.needed_more);
    case Verdict::kRegressed:
      return std::string(p.bad) + "REGRESSED" + p.reset;
    case Verdict::kImproved:
      return std::string(p.good) + "improved" + p.reset;
    default:
      return "steady";
  }
}

std::string DeltasText(const CaseChange& c, const std::vector<std::string>& gate) {
  std::string out;
  for (const std::string& metric : gate) {
    auto it = c.deltas.find(metric);
    if (it == c.deltas.end()) continue;
    out += fmt::format("{}{} {:+.3f}", out.empty() ? "" : ", ", metric, it->second);
  }
  return out;
}

}  // namespace

std::string FormatDriftTable(const DriftReport& r, bool colour, bool exit_line) {
  const Palette p = MakePalette(colour);
  std::string out;
  out += fmt::format("{}drift {}{}: {} paired cases", p.bold, Plain(r.base.suite_name), p.reset,
                     r.paired.size());
  if (r.base_repeat > 1 || r.cand_repeat > 1) {
    out += fmt::format(" (repeats: base {}, cand {}; per-case values are means)", r.base_repeat,
                       r.cand_repeat);
  }
  out += "\n" + RunLine("base", r.base) + RunLine("cand", r.cand);
  if (r.missing_counted) {
    out += fmt::format(
        "  {}missing from the candidate: {} case(s), counted as lost{} (--allow-missing leaves "
        "them out)\n",
        p.bad, r.only_in_base.size(), p.reset);
  }
  const size_t left_out_base = r.missing_counted ? 0 : r.only_in_base.size();
  if (left_out_base > 0 || !r.only_in_cand.empty() || !r.gold_changed.empty()) {
    out += fmt::format("  left out: {} only in base, {} only in cand, {} with changed gold\n",
                       left_out_base, r.only_in_cand.size(), r.gold_changed.size());
  }
  // Why the lost cases fail now, before the metric table: the first question about a drop.
  if (!r.lost.empty()) {
    out += fmt::format("  {}lost {}{}: {}\n", p.bad, r.lost.size(), p.reset,
                       CauseCountsText(r.lost_causes));
  }
  if (const std::vector<SessionLoss> sessions = SessionsThatLostATurn(r.lost); !sessions.empty()) {
    std::string list;
    for (const SessionLoss& s : sessions) list += (list.empty() ? "" : ", ") + SessionLossText(s);
    // Session ids are suite ids ([A-Za-z0-9._:-]), safe to print as they are.
    out += fmt::format("  sessions that lost a turn: {}: {}\n", sessions.size(), list);
  }
  std::string changed;
  if (r.suite_changed) changed += "suite, ";
  if (r.corpus_changed) changed += "corpus, ";
  if (r.pipeline_config_changed) changed += "pipeline config, ";
  if (!changed.empty()) {
    changed.resize(changed.size() - 2);
    out += "  changed between the runs: " + changed + "\n";
  }

  out +=
      fmt::format("\n  {}{:<22} {:>7} {:>7} {:>9}   {:<21} {:>8} {:>8}   {}{}\n", p.dim, "metric",
                  "base", "cand", "delta", "95% interval", "p", "p(Holm)", "verdict", p.reset);
  for (const MetricDrift& m : r.metrics) {
    const std::string name = m.metric + (m.gated ? " *" : "");
    const bool in_family = std::find(r.family.begin(), r.family.end(), m.metric) != r.family.end();
    out +=
        fmt::format("  {:<22} {:>7} {:>7} {:>9}   {:<21} {:>8} {:>8}   {}\n", Plain(name, 22),
                    Num(m.base_mean, "{:.3f}"), Num(m.cand_mean, "{:.3f}"), Num(m.delta, "{:+.4f}"),
                    IntervalText(m.interval, "{:+.4f}"), PValue(m.p_value),
                    in_family && r.family.size() > 1 ? PValue(m.p_holm) : "", VerdictCell(m, p));
  }
  out += fmt::format(
      "  {}* gated. A verdict needs the interval to exclude 0, |delta| >= {} and p <= {} "
      "(exact McNemar for 0/1 metrics, Wilcoxon signed-rank otherwise); family correction: {}; "
      "fewer than {} paired cases: too few cases{}\n",
      p.dim, r.options.min_effect, kDriftAlpha, r.correction,
      metrics::FewestPairsForSignificance(kDriftAlpha), p.reset);

  if (r.latency_p50.available) {
    out += fmt::format("\n  {:<22} p50 {} -> {} ms  x{} {}   p95 {} -> {} ms  x{} {}  (n {})\n",
                       "latency", Num(r.latency_p50.base, "{:.4g}"),
                       Num(r.latency_p50.cand, "{:.4g}"), Num(r.latency_p50.ratio, "{:.3f}"),
                       IntervalText(r.latency_p50.interval, "{:.3f}"),
                       Num(r.latency_p95.base, "{:.4g}"), Num(r.latency_p95.cand, "{:.4g}"),
                       Num(r.latency_p95.ratio, "{:.3f}"),
                       IntervalText(r.latency_p95.interval, "{:.3f}"), r.latency_n);
    if (r.latency_lower_bounds > 0) {
      out += fmt::format("  {:<22} {} of the {} timed out in a run, counted at the timeout\n", "",
                         r.latency_lower_bounds, r.latency_n);
    }
  }
  if (r.warmup.available) {
    const WarmupDrift& w = r.warmup;
    out += fmt::format("  {:<22} mean {} -> {} ms  x{} {}  (workers {} {} / {} {})\n", "warm-up",
                       Num(w.base_mean_ms, "{:.4g}"), Num(w.cand_mean_ms, "{:.4g}"),
                       Num(w.ratio, "{:.3f}"), IntervalText(w.interval, "{:.3f}"), w.base_n,
                       w.base_signal, w.cand_n, w.cand_signal);
  }
  for (int which = 0; which < 2; ++which) {
    const LatencyDrift& l = which == 0 ? r.ttft_p50 : r.ttft_p95;
    if (!l.available) continue;
    out += fmt::format(
        "  {:<22} {} -> {} ms  x{} {}{}\n", which == 0 ? "first token p50" : "first token p95",
        Num(l.base, "{:.4g}"), Num(l.cand, "{:.4g}"), Num(l.ratio, "{:.3f}"),
        IntervalText(l.interval, "{:.3f}"), which == 0 ? fmt::format("  (n {})", r.ttft_n) : "");
  }
  for (const auto& [label, a] :
       {std::pair<const char*, const AmountDrift*>{"tokens in per case", &r.input_tokens},
        {"tokens out per case", &r.output_tokens},
        {"cost per case", &r.cost}}) {
    if (!a->available) continue;
    const std::string unit = a == &r.cost && !r.cost_currency.empty() ? " " + r.cost_currency : "";
    out += fmt::format("  {:<22} {} -> {}{}  x{} {}  (n {})\n", label, Num(a->base_mean, "{:.6g}"),
                       Num(a->cand_mean, "{:.6g}"), unit, Num(a->ratio, "{:.3f}"),
                       IntervalText(a->interval, "{:.3f}"), a->n);
  }
  if (!r.cost_note.empty()) out += fmt::format("  {:<22} {}\n", "cost", r.cost_note);
  if (r.latency_gate.gated) {
    const LatencyGateVerdict& g = r.latency_gate;
    out += fmt::format(
        "  {:<22} {}{}{}\n", "latency_p95 *", g.regressed ? p.bad : "",
        !g.measured ? std::string("not measured (no latency in both runs)")
        : g.regressed
            ? fmt::format("regressed: the p95 ratio's interval lies above x{:.3f}", g.limit)
            : fmt::format("steady: the p95 ratio's interval reaches x{:.3f} or below", g.limit),
        g.regressed ? p.reset : "");
  }
  for (const RefreshDrift& d : r.refreshes) {
    out += fmt::format("  {:<22} {} ms -> {} ms  x{}  (update {})\n", "refresh",
                       Num(d.base_ms, "{:.4g}"), Num(d.cand_ms, "{:.4g}"), Num(d.ratio, "{:.3f}"),
                       d.update);
  }
  std::string mde;
  for (const MetricDrift& m : r.metrics) {
    auto it = r.min_detectable_effect.find(m.metric);
    if (!m.gated || it == r.min_detectable_effect.end()) continue;
    mde += fmt::format("{}{} {} (n {})", mde.empty() ? "" : ", ", m.metric,
                       Num(it->second, "{:.4f}"), m.n);
  }
  if (!mde.empty()) {
    out += fmt::format("  smallest drop this gate catches with power {}: {}\n", kDriftPower, mde);
  }

  int tag_changes = 0;
  std::string tags;
  for (const TagDrift& t : r.tags) {
    for (const MetricDrift& m : t.metrics) {
      if (m.verdict == Verdict::kSteady || m.verdict == Verdict::kTooFewCases) continue;
      if (++tag_changes > kShownTagRows) continue;
      tags += fmt::format("  tag {:<18} {:<18} {:>9} {:<21} p(Holm) {:<8} {}\n", Plain(t.tag, 18),
                          m.metric, Num(m.delta, "{:+.4f}"), IntervalText(m.interval, "{:+.4f}"),
                          PValue(m.p_holm), VerdictCell(m, p));
    }
  }
  if (!r.tags.empty()) {
    out += tag_changes == 0 ? fmt::format("  tags: all {} steady (p Holm-adjusted over the tags)\n",
                                          r.tags.size())
                            : "\n" + tags;
    if (tag_changes > kShownTagRows) {
      out += fmt::format("  ... and {} more tag results that are not steady (see --json)\n",
                         tag_changes - kShownTagRows);
    }
  }

  auto cases = [&](const char* title, const std::vector<CaseChange>& list) {
    if (list.empty()) return;
    out += fmt::format("\n  {} {} case(s){}:\n", list.size(), title,
                       list.size() > kShownCases ? fmt::format(", first {}", kShownCases) : "");
    for (size_t k = 0; k < std::min(kShownCases, list.size()); ++k) {
      const CaseChange& c = list[k];
      // A lost case shows why the candidate fails it; a gained one why the base failed it.
      const FailureCause cause = c.cand_cause != FailureCause::kNone ? c.cand_cause : c.base_cause;
      out += fmt::format("    {:<32} {:<26} {}\n", Plain(c.id, 32), FailureCauseLabel(cause),
                         DeltasText(c, r.options.gate));
    }
  };
  cases("lost (pass -> fail)", r.lost);
  cases("gained (fail -> pass)", r.gained);
  if (!r.unstable.empty()) {
    out += fmt::format("\n  unstable across repeats: {} case(s), first: {}\n", r.unstable.size(),
                       Plain(r.unstable.front()));
  }
  if (!exit_line) return out;
  const char* tone = r.gate.exit_code == 0 ? p.good : p.bad;
  out += fmt::format("\n{}exit {}{}: {}\n", tone, r.gate.exit_code, p.reset,
                     Plain(r.gate.reason, std::string::npos));  // in full, never cut
  return out;
}

}  // namespace plumb
