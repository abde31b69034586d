#include "runner/compare/drift_json.h"

#include <cmath>

#include "runner/compare/session_drift.h"

namespace plumb {
namespace {

// [{"session", "turns": [N, ...]}] for the sessions with a lost turn (issue 22).
nlohmann::json SessionLossesJson(const std::vector<CaseChange>& lost) {
  nlohmann::json out = nlohmann::json::array();
  for (const SessionLoss& s : SessionsThatLostATurn(lost)) {
    out.push_back({{"session", s.session}, {"turns", s.turns}});
  }
  return out;
}

nlohmann::json Number(double x) { return std::isfinite(x) ? nlohmann::json(x) : nlohmann::json(); }

nlohmann::json IntervalJson(const metrics::Interval& interval) {
  return nlohmann::json::array({Number(interval.low), Number(interval.high)});
}

nlohmann::json RunJson(const RunIdentity& run) {
  return {{"dir", run.dir},
          {"pipeline", run.pipeline},
          {"labels", run.labels},
          {"suite_hash", run.suite_hash},
          {"corpus_fingerprint", run.corpus_fingerprint},
          {"started_at", run.started_at}};
}

nlohmann::json MetricJson(const MetricDrift& m, bool tag) {
  // p_holm: the p-value the verdict used, adjusted over the gated family (run level) or over
  // the tags; needed_more: with verdict "too few cases", how many more paired cases it needs.
  nlohmann::json out = {{"metric", m.metric},
                        {"base_mean", Number(m.base_mean)},
                        {"cand_mean", Number(m.cand_mean)},
                        {"delta", Number(m.delta)},
                        {"interval", IntervalJson(m.interval)},
                        {"p_value", Number(m.p_value)},
                        {"test", m.mcnemar ? "mcnemar" : "wilcoxon"},
                        {"verdict", VerdictName(m.verdict)},
                        {"n", m.n},
                        {"gated", m.gated}};
  if (m.mcnemar) out["discordant"] = {{"lost", m.lost}, {"gained", m.gained}};
  if (tag || m.gated) out["p_holm"] = Number(m.p_holm);
  if (m.verdict == Verdict::kTooFewCases) out["needed_more"] = m.needed_more;
  return out;
}

nlohmann::json LatencyJson(const LatencyDrift& l) {
  if (!l.available) {
    return {{"base", nullptr}, {"cand", nullptr}, {"ratio", nullptr}, {"interval", nullptr}};
  }
  return {{"base", Number(l.base)},
          {"cand", Number(l.cand)},
          {"ratio", Number(l.ratio)},
          {"interval", IntervalJson(l.interval)}};
}

nlohmann::json WarmupJson(const WarmupDrift& w) {
  if (!w.available) return nullptr;
  return {
      {"base", {{"signal", w.base_signal}, {"n", w.base_n}, {"mean_ms", Number(w.base_mean_ms)}}},
      {"cand", {{"signal", w.cand_signal}, {"n", w.cand_n}, {"mean_ms", Number(w.cand_mean_ms)}}},
      {"ratio", Number(w.ratio)},
      {"interval", IntervalJson(w.interval)}};
}

nlohmann::json AmountJson(const AmountDrift& a) {
  if (!a.available) return nullptr;
  return {{"n", a.n},
          {"base_mean", Number(a.base_mean)},
          {"cand_mean", Number(a.cand_mean)},
          {"ratio", Number(a.ratio)},
          {"interval", IntervalJson(a.interval)}};
}

nlohmann::json RefreshJson(const std::vector<RefreshDrift>& refreshes) {
  nlohmann::json out = nlohmann::json::array();
  for (const RefreshDrift& d : refreshes) {
    out.push_back({{"update", d.update},
                   {"base_ms", Number(d.base_ms)},
                   {"cand_ms", Number(d.cand_ms)},
                   {"base_n", d.base_n},
                   {"cand_n", d.cand_n},
                   {"ratio", Number(d.ratio)}});
  }
  return out;
}

nlohmann::json OptionalText(const std::optional<std::string>& text) {
  return text ? nlohmann::json(*text) : nlohmann::json();
}

nlohmann::json CauseJson(FailureCause cause) {
  return cause == FailureCause::kNone ? nlohmann::json()
                                      : nlohmann::json(std::string(FailureCauseId(cause)));
}

nlohmann::json ChangesJson(const std::vector<CaseChange>& changes) {
  nlohmann::json out = nlohmann::json::array();
  for (const CaseChange& c : changes) {
    nlohmann::json deltas = nlohmann::json::object();
    for (const auto& [metric, delta] : c.deltas) deltas[metric] = Number(delta);
    out.push_back(
        {{"id", c.id},
         {"deltas", deltas},
         {"base_answer", OptionalText(c.base_answer)},
         {"cand_answer", OptionalText(c.cand_answer)},
         {"base_error", c.base_error.empty() ? nlohmann::json() : nlohmann::json(c.base_error)},
         {"cand_error", c.cand_error.empty() ? nlohmann::json() : nlohmann::json(c.cand_error)},
         {"base_cause", CauseJson(c.base_cause)},
         {"cand_cause", CauseJson(c.cand_cause)},
         {"base_reason", c.base_reason.empty() ? nlohmann::json() : nlohmann::json(c.base_reason)},
         {"cand_reason", c.cand_reason.empty() ? nlohmann::json() : nlohmann::json(c.cand_reason)},
         {"gold", c.gold}});
  }
  return out;
}

}  // namespace

nlohmann::json DriftReportToJson(const DriftReport& r) {
  nlohmann::json metrics = nlohmann::json::array();
  for (const MetricDrift& m : r.metrics) metrics.push_back(MetricJson(m, false));
  nlohmann::json tags = nlohmann::json::array();
  for (const TagDrift& t : r.tags) {
    nlohmann::json list = nlohmann::json::array();
    for (const MetricDrift& m : t.metrics) list.push_back(MetricJson(m, true));
    tags.push_back({{"tag", t.tag}, {"cases", t.cases}, {"metrics", list}});
  }
  nlohmann::json mde = nlohmann::json::object();
  for (const auto& [metric, value] : r.min_detectable_effect) mde[metric] = Number(value);
  const DriftOptions& o = r.options;
  return {
      {"plumb_drift", 1},
      {"suite", r.base.suite_name},
      {"base", RunJson(r.base)},
      {"cand", RunJson(r.cand)},
      {"changed",
       {{"suite", r.suite_changed},
        {"corpus", r.corpus_changed},
        {"pipeline_config", r.pipeline_config_changed}}},
      {"paired_cases", r.paired},
      {"only_in_base", r.only_in_base},
      {"missing_counted_as_lost", r.missing_counted},
      {"only_in_cand", r.only_in_cand},
      {"gold_changed", r.gold_changed},
      {"metrics", metrics},
      {"tags", tags},
      {"latency",
       {{"n", r.latency_n},
        {"lower_bounds", r.latency_lower_bounds},
        {"p50", LatencyJson(r.latency_p50)},
        {"p95", LatencyJson(r.latency_p95)}}},
      {"warmup", WarmupJson(r.warmup)},
      {"ttft",
       {{"n", r.ttft_n}, {"p50", LatencyJson(r.ttft_p50)}, {"p95", LatencyJson(r.ttft_p95)}}},
      {"usage",
       {{"input_tokens", AmountJson(r.input_tokens)},
        {"output_tokens", AmountJson(r.output_tokens)}}},
      {"cost",
       r.cost.available
           ? [&] {
               nlohmann::json c = AmountJson(r.cost);
               c["currency"] = r.cost_currency;
               return c;
             }()
           : nlohmann::json(r.cost_note.empty() ? nlohmann::json()
                                                : nlohmann::json{{"note", r.cost_note}})},
      {"refresh", RefreshJson(r.refreshes)},
      {"min_detectable_effect", mde},
      {"lost", ChangesJson(r.lost)},
      // The lost cases by the candidate's cause; shares and intervals are of the lost count.
      {"lost_by_cause", CauseBreakdownToJson(r.lost_causes)},
      {"sessions_lost_a_turn", SessionLossesJson(r.lost)},
      {"gained", ChangesJson(r.gained)},
      {"unstable", r.unstable},
      {"repeat", {{"base", r.base_repeat}, {"cand", r.cand_repeat}}},
      {"gate",
       {{"metrics", r.gate.metrics},
        {"regressed", r.gate.regressed},
        {"broken_floors", r.gate.broken_floors},
        {"exit_code", r.gate.exit_code},
        {"latency_p95",
         r.latency_gate.gated
             ? nlohmann::json{{"measured", r.latency_gate.measured},
                              {"regressed", r.latency_gate.regressed},
                              {"limit", r.latency_gate.limit},
                              {"max_slowdown", o.max_slowdown}}
             : nlohmann::json()},
        {"correction",
         {{"method", r.family.size() > 1 ? "holm" : "none"},
          {"family", r.family},
          {"alpha", kDriftAlpha},
          {"text", r.correction}}},
        {"reason", r.gate.reason}}},
      {"settings",
       {{"min_effect", o.min_effect},
        {"resamples", o.resamples},
        {"seed", o.seed},
        {"confidence", kDriftConfidence},
        {"alpha", kDriftAlpha},
        {"power", kDriftPower},
        {"allow_missing", o.allow_missing},
        {"min_detectable_effect_method",
         "the smallest drop the gate catches with the stated power, at the level Holm's first "
         "step leaves the metric (alpha / gated family size) and with |delta| >= min_effect; 0/1 "
         "metrics: exact binomial power of exact McNemar, the observed flips ((D + 1/2) / n) kept "
         "as noise and the drop added as lost cases; others: (max(min_effect, z(1-level/2) se) + "
         "z(power) se), "
         "se = sd(differences) / sqrt(n); null when it exceeds the base mean, with too few "
         "cases, or with no spread"}}},
  };
}

}  // namespace plumb
