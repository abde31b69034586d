#include "runner/compare/comparison_json.h"

#include <cmath>

namespace plumb {
namespace {

nlohmann::json Number(double x) { return std::isfinite(x) ? nlohmann::json(x) : nlohmann::json(); }

nlohmann::json IntervalJson(const metrics::Interval& interval) {
  return nlohmann::json::array({Number(interval.low), Number(interval.high)});
}

nlohmann::json TimeJson(const ComparedTime& t) {
  if (!t.available) return nullptr;
  nlohmann::json at_least = nlohmann::json::array();
  if (t.p50_at_least) at_least.push_back("p50");
  if (t.p95_at_least) at_least.push_back("p95");
  if (t.mean_at_least) at_least.push_back("mean");
  return {{"n", t.n},
          {"p50", Number(t.p50)},
          {"p95", Number(t.p95)},
          {"mean", Number(t.mean)},
          {"at_least", at_least}};
}

nlohmann::json RunJson(const ComparedRun& r) {
  nlohmann::json metrics = nlohmann::json::object();
  for (const auto& [metric, m] : r.metrics) {
    metrics[metric] = {
        {"mean", Number(m.mean)}, {"interval", IntervalJson(m.interval)}, {"n", m.n}};
  }
  nlohmann::json warmup = nullptr;
  if (r.warmup.n > 0) {
    warmup = {{"signal", r.warmup.signal},
              {"n", r.warmup.n},
              {"restarts", r.warmup.restarts},
              {"mean_ms", Number(r.warmup.mean_ms)},
              {"max_ms", Number(r.warmup.max_ms)}};
  }
  nlohmann::json cost = nullptr;
  if (r.cost.available) {
    cost = {{"value", Number(r.cost.per_1000)},
            {"interval", IntervalJson(r.cost.interval)},
            {"currency", r.cost.currency}};
  }
  return {{"name", r.name},
          {"dir", r.identity.dir},
          {"pipeline", r.identity.pipeline},
          {"labels", r.identity.labels},
          {"started_at", r.identity.started_at},
          {"cases", r.cases},
          {"metrics", metrics},
          {"latency_ms", TimeJson(r.latency)},
          {"ttft_ms", TimeJson(r.ttft)},
          {"warmup", warmup},
          {"startup_ms", Number(r.startup_ms)},
          {"cost_per_1000_cases", cost},
          {"verdict", {{"exit_code", r.exit_code}, {"reason", r.verdict_reason}}},
          {"on_front", r.on_front}};
}

nlohmann::json AgainstFirstJson(const Comparison& c, size_t i) {
  const DriftReport& d = c.against_first[i - 1];
  nlohmann::json metrics = nlohmann::json::object();
  for (const MetricDrift& m : d.metrics) {
    metrics[m.metric] = {{"delta", Number(m.delta)},
                         {"interval", IntervalJson(m.interval)},
                         {"p_value", Number(m.p_value)},
                         {"p_holm", Number(m.p_holm)},
                         {"test", m.mcnemar ? "mcnemar" : "wilcoxon"},
                         {"n", m.n},
                         {"gated", m.gated},
                         {"verdict", VerdictName(m.verdict)}};
  }
  auto ratio = [](const LatencyDrift& l) -> nlohmann::json {
    if (!l.available) return nullptr;
    return {{"ratio", Number(l.ratio)}, {"interval", IntervalJson(l.interval)}};
  };
  return {{"run", c.runs[i].name},
          {"paired_cases", d.paired.size()},
          {"metrics", metrics},
          {"latency_p50_ratio", ratio(d.latency_p50)},
          {"latency_p95_ratio", ratio(d.latency_p95)},
          {"regressed", d.gate.regressed},
          {"correction", d.correction}};
}

}  // namespace

nlohmann::json ComparisonToJson(const Comparison& c) {
  nlohmann::json runs = nlohmann::json::array();
  for (const ComparedRun& r : c.runs) runs.push_back(RunJson(r));
  nlohmann::json against = nlohmann::json::array();
  for (size_t i = 1; i < c.runs.size(); ++i) against.push_back(AgainstFirstJson(c, i));
  nlohmann::json front = nlohmann::json::array();
  for (size_t i : c.front) front.push_back(c.runs[i].name);
  nlohmann::json breaks = nlohmann::json::array();
  for (const BreakEvenStatement& b : c.break_evens) {
    breaks.push_back(
        {{"slow_start", c.runs[b.slow_start].name},
         {"quick_start", c.runs[b.quick_start].name},
         {"cases", b.cases},
         {"slow_start_warmup_ms", Number(b.slow.warmup_ms)},
         {"slow_start_per_case_ms", Number(b.slow.per_case_ms)},
         {"quick_start_warmup_ms", Number(b.quick.warmup_ms)},
         {"quick_start_per_case_ms", Number(b.quick.per_case_ms)},
         {"paired_cases", b.paired_cases},
         {"per_case_gap_ms_interval", IntervalJson(b.gap_ms)},
         {"established", b.established},
         {"cases_interval", b.established ? nlohmann::json::array({b.cases_early, b.cases_late})
                                          : nlohmann::json(nullptr)}});
  }
  return {{"schema", {{"plumb_compare", 1}}},
          {"suite", c.suite},
          {"quality_metric", kCompareQualityMetric},
          {"runs", runs},
          {"against_first", against},
          {"front", front},
          {"break_even", breaks},
          {"gate", {{"metrics", c.options.gate}, {"exit_code", c.exit_code}, {"reason", c.reason}}},
          {"settings",
           {{"min_effect", c.options.min_effect},
            {"resamples", c.options.resamples},
            {"seed", c.options.seed},
            {"allow_missing", c.options.allow_missing}}}};
}

}  // namespace plumb
