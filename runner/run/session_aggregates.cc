#include "runner/run/session_aggregates.h"

#include <algorithm>
#include <cmath>
#include <map>
#include <string>

namespace plumb {
namespace {

TurnLatency SummarizeTurns(const std::vector<double>& values) {
  TurnLatency out;
  out.n = static_cast<int64_t>(values.size());
  out.p50 = metrics::BootstrapPercentile(values, 50);
  out.p95 = metrics::BootstrapPercentile(values, 95);
  return out;
}

// A number, or null when it is not one (no values on a side).
nlohmann::json Num(double v) { return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(); }

double NumFrom(const nlohmann::json& j, const char* key) {
  auto it = j.find(key);
  return it != j.end() && it->is_number() ? it->get<double>() : std::nan("");
}

nlohmann::json EstimateToJson(const metrics::PercentileEstimate& e) {
  return {{"value", Num(e.value)}, {"low", Num(e.interval.low)}, {"high", Num(e.interval.high)}};
}

metrics::PercentileEstimate EstimateFrom(const nlohmann::json& j) {
  if (!j.is_object()) return {std::nan(""), {std::nan(""), std::nan("")}};
  return {NumFrom(j, "value"), {NumFrom(j, "low"), NumFrom(j, "high")}};
}

nlohmann::json RatioToJson(const metrics::RatioResult& r) {
  return {{"ratio", Num(r.ratio)}, {"low", Num(r.interval.low)}, {"high", Num(r.interval.high)}};
}

metrics::RatioResult RatioFrom(const nlohmann::json& j) {
  if (!j.is_object()) return {std::nan(""), {std::nan(""), std::nan("")}};
  return {NumFrom(j, "ratio"), {NumFrom(j, "low"), NumFrom(j, "high")}};
}

nlohmann::json LatencyToJson(const TurnLatency& l) {
  return {{"n", l.n}, {"p50", EstimateToJson(l.p50)}, {"p95", EstimateToJson(l.p95)}};
}

TurnLatency LatencyFrom(const nlohmann::json& j) {
  TurnLatency l;
  if (!j.is_object()) return l;
  l.n = j.value("n", int64_t{0});
  l.p50 = EstimateFrom(j.value("p50", nlohmann::json()));
  l.p95 = EstimateFrom(j.value("p95", nlohmann::json()));
  return l;
}

}  // namespace

std::optional<SessionAggregates> AggregateSessions(const Suite& suite,
                                                   const std::vector<CaseOutcome>& outcomes) {
  struct Seen {
    size_t first_index = 0;  // its first turn's place in the suite, for the order of `failed`
    bool failed = false;
    bool restarted = false;
  };
  std::map<std::string, Seen> sessions;
  std::vector<char> turn_seen(suite.cases.size(), 0);
  std::vector<double> first, follow;
  SessionAggregates out;
  for (const CaseOutcome& o : outcomes) {
    const Case& c = suite.cases[o.case_index];
    if (c.turn == 0) continue;
    auto [it, added] = sessions.emplace(c.session, Seen{o.case_index, false, false});
    if (o.case_index < it->second.first_index) it->second.first_index = o.case_index;
    it->second.failed = it->second.failed || !o.scores.pass;
    it->second.restarted = it->second.restarted || o.session_restarts > 0;
    if (!turn_seen[o.case_index]) {
      turn_seen[o.case_index] = 1;
      ++out.turns;
    }
    std::vector<double>& group = c.turn == 1 ? first : follow;
    if (!o.scores.errored && !o.first_call) {
      group.push_back(o.latency_ms);
    } else if (o.latency_lower_bound) {
      group.push_back(o.latency_ms);
    }
  }
  if (sessions.empty()) return std::nullopt;
  std::vector<std::pair<size_t, std::string>> failed;
  for (const auto& [id, seen] : sessions) {
    ++out.count;
    if (!seen.failed) ++out.passed;
    if (seen.restarted) ++out.restarts;
    if (seen.failed) failed.emplace_back(seen.first_index, id);
  }
  std::sort(failed.begin(), failed.end());
  for (auto& [index, id] : failed) out.failed.push_back(std::move(id));
  out.session_pass_interval = metrics::WilsonInterval(out.passed, out.count);
  out.first_turn = SummarizeTurns(first);
  out.follow_up = SummarizeTurns(follow);
  out.p50_ratio = metrics::UnpairedBootstrapPercentileRatio(first, follow, 50);
  out.p95_ratio = metrics::UnpairedBootstrapPercentileRatio(first, follow, 95);
  return out;
}

nlohmann::json SessionsToJson(const SessionAggregates& s) {
  return {{"count", s.count},
          {"turns", s.turns},
          {"restarts", s.restarts},
          {"session_pass",
           {{"mean", s.SessionPass()},
            {"n", s.count},
            {"passed", s.passed},
            {"low", s.session_pass_interval.low},
            {"high", s.session_pass_interval.high}}},
          {"failed", s.failed},
          {"latency_first_turn", LatencyToJson(s.first_turn)},
          {"latency_follow_up", LatencyToJson(s.follow_up)},
          {"follow_up_to_first_turn",
           {{"p50", RatioToJson(s.p50_ratio)}, {"p95", RatioToJson(s.p95_ratio)}}}};
}

std::optional<SessionAggregates> SessionsFromJson(const nlohmann::json& j) {
  if (!j.is_object()) return std::nullopt;
  SessionAggregates s;
  s.count = j.value("count", int64_t{0});
  s.turns = j.value("turns", int64_t{0});
  s.restarts = j.value("restarts", int64_t{0});
  const nlohmann::json pass = j.value("session_pass", nlohmann::json::object());
  s.passed = pass.value("passed", int64_t{0});
  s.session_pass_interval = {NumFrom(pass, "low"), NumFrom(pass, "high")};
  for (const nlohmann::json& id : j.value("failed", nlohmann::json::array())) {
    if (id.is_string()) s.failed.push_back(id.get<std::string>());
  }
  s.first_turn = LatencyFrom(j.value("latency_first_turn", nlohmann::json()));
  s.follow_up = LatencyFrom(j.value("latency_follow_up", nlohmann::json()));
  const nlohmann::json ratio = j.value("follow_up_to_first_turn", nlohmann::json::object());
  s.p50_ratio = RatioFrom(ratio.value("p50", nlohmann::json()));
  s.p95_ratio = RatioFrom(ratio.value("p95", nlohmann::json()));
  return s;
}

}  // namespace plumb
