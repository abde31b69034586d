#include "runner/compare/comparison_text.h"

#include <fmt/format.h>

#include <cmath>

namespace plumb {
namespace {

std::string Fixed(double x, int digits) {
  if (!std::isfinite(x)) return "n/a";
  return fmt::format("{:.{}f}", x, digits);
}

std::string SignedFixed(double x, int digits) {
  if (!std::isfinite(x)) return "n/a";
  return fmt::format("{:+.{}f}", x, digits);
}

std::string Workers(int64_t n) { return std::to_string(n) + (n == 1 ? " worker" : " workers"); }

}  // namespace

std::string CompareMilliseconds(double ms) {
  if (!std::isfinite(ms)) return "n/a";
  if (std::fabs(ms) < 10) return fmt::format("{:.2f} ms", ms);
  if (std::fabs(ms) < 1000) return fmt::format("{:.1f} ms", ms);
  return fmt::format("{:.0f} ms", ms);
}

std::string CompareMetricText(const ComparedRun& run, const std::string& metric) {
  auto it = run.metrics.find(metric);
  if (it == run.metrics.end() || !std::isfinite(it->second.mean)) return "n/a";
  const ComparedMetric& m = it->second;
  std::string text = Fixed(m.mean, 3);
  if (std::isfinite(m.interval.low) && std::isfinite(m.interval.high)) {
    text += " [" + Fixed(m.interval.low, 3) + ", " + Fixed(m.interval.high, 3) + "]";
  }
  return text;
}

std::string CompareTimeText(const ComparedTime& time, const char* which) {
  if (!time.available) return "n/a";
  const std::string w = which;
  const double value = w == "p50" ? time.p50 : w == "p95" ? time.p95 : time.mean;
  const bool at_least = w == "p50"   ? time.p50_at_least
                        : w == "p95" ? time.p95_at_least
                                     : time.mean_at_least;
  return (at_least ? "at least " : "") + CompareMilliseconds(value);
}

std::string CompareWarmupText(const ComparedRun& run) {
  const WarmupSummary& w = run.warmup;
  if (w.n == 0) return "n/a";
  if (w.signal == "first_call") {
    return "first call " + CompareMilliseconds(w.mean_ms) + " (" + Workers(w.n) + ")";
  }
  const std::string how = w.signal == "ready_line"  ? "ready line"
                          : w.signal == "ready_url" ? "ready url"
                                                    : w.signal;
  return CompareMilliseconds(w.mean_ms) + " (" + how + ", " + Workers(w.n) + ")";
}

std::string CompareCostText(const ComparedRun& run) {
  const ComparedCost& c = run.cost;
  if (!c.available) return "n/a";
  std::string text = Fixed(c.per_1000, 2) + (c.currency.empty() ? "" : " " + c.currency);
  if (std::isfinite(c.interval.low) && std::isfinite(c.interval.high)) {
    text += " [" + Fixed(c.interval.low, 2) + ", " + Fixed(c.interval.high, 2) + "]";
  }
  return text;
}

std::string BreakEvenSentence(const Comparison& c, const BreakEvenStatement& b) {
  const ComparedRun& slow = c.runs[b.slow_start];
  const ComparedRun& quick = c.runs[b.quick_start];
  std::string text = fmt::format(
      "{} (start-up {}, {} a case) takes less time in total than {} (start-up {}, {} a case) "
      "from {} {} on, for one worker answering them one after another",
      slow.name, CompareMilliseconds(b.slow.warmup_ms), CompareMilliseconds(b.slow.per_case_ms),
      quick.name, CompareMilliseconds(b.quick.warmup_ms), CompareMilliseconds(b.quick.per_case_ms),
      b.cases, b.cases == 1 ? "case" : "cases");
  const std::string gap =
      "[" + CompareMilliseconds(b.gap_ms.low) + ", " + CompareMilliseconds(b.gap_ms.high) + "]";
  if (b.established) {
    text += fmt::format(" (between {} and {} by the 95% interval of the per-case gap, {})",
                        b.cases_early, b.cases_late, gap);
  } else if (b.paired_cases >= 2) {
    text += ", but the per-case times are not told apart (95% interval of the gap " + gap +
            " over " + std::to_string(b.paired_cases) +
            " paired cases), so there may be no break-even at all";
  }
  return text + ".";
}

std::string FrontSentence(const Comparison& c) {
  if (c.front.empty()) {
    return std::string("No front: no run has both ") + kCompareQualityMetric +
           " and a latency p95.";
  }
  std::string names;
  for (size_t k = 0; k < c.front.size(); ++k) {
    names += (k == 0 ? "" : k + 1 == c.front.size() ? " and " : ", ") + c.runs[c.front[k]].name;
  }
  if (c.front.size() == 1) {
    return names + " is the only run on the front: at least as " + kCompareQualityMetric +
           " and at least as fast at p95 as every other run, and better on one of the two.";
  }
  return "On the front (no other run is both more " + std::string(kCompareQualityMetric) +
         " and faster at p95), fastest first: " + names + ".";
}

std::string AgainstFirstSentence(const Comparison& c, size_t i) {
  const DriftReport& d = c.against_first[i - 1];
  std::string changed;
  int steady = 0, too_few = 0;
  for (const MetricDrift& m : d.metrics) {
    if (m.verdict == Verdict::kSteady) {
      ++steady;
      continue;
    }
    if (m.verdict == Verdict::kTooFewCases) {
      ++too_few;
      continue;
    }
    changed += (changed.empty() ? "" : "; ") + m.metric + " " + VerdictName(m.verdict) + " " +
               SignedFixed(m.delta, 3) + " [" + SignedFixed(m.interval.low, 3) + ", " +
               SignedFixed(m.interval.high, 3) + "]" + (m.gated ? " (gated)" : "");
  }
  std::string out = c.runs[i].name + " against " + c.runs[0].name + " (" +
                    std::to_string(d.paired.size()) + " paired cases): ";
  out += changed.empty() ? "no metric improved or regressed" : changed;
  out += "; " + std::to_string(steady) + " steady";
  if (too_few > 0) out += ", " + std::to_string(too_few) + " with too few cases";
  if (d.latency_p95.available) {
    out += "; latency p95 ratio " + Fixed(d.latency_p95.ratio, 2) + " [" +
           Fixed(d.latency_p95.interval.low, 2) + ", " + Fixed(d.latency_p95.interval.high, 2) +
           "]";
  }
  return out + ".";
}

}  // namespace plumb
