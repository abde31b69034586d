#include "runner/compare/comparison.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <set>
#include <unordered_map>

#include "metrics/paired_bootstrap.h"
#include "runner/compare/pareto_front.h"
#include "runner/run/exit_code.h"

namespace plumb {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

const nlohmann::json& At(const nlohmann::json& object, const char* key) {
  static const nlohmann::json kNull;
  if (!object.is_object()) return kNull;
  auto it = object.find(key);
  return it == object.end() ? kNull : *it;
}

double NumberAt(const nlohmann::json& object, const char* key, double fallback = kNaN) {
  const nlohmann::json& v = At(object, key);
  return v.is_number() ? v.get<double>() : fallback;
}

std::string SuiteName(const RunValues& run) {
  const nlohmann::json& name = At(At(run.record, "suite"), "name");
  return name.is_string() ? name.get<std::string>() : "";
}

metrics::Interval IntervalAt(const nlohmann::json& object, const char* key) {
  const nlohmann::json& v = At(object, key);
  if (v.is_array() && v.size() == 2 && v[0].is_number() && v[1].is_number()) {
    return {v[0].get<double>(), v[1].get<double>()};
  }
  return {kNaN, kNaN};
}

/// latency_ms or ttft_ms of run.json's aggregates: {n, p50, p95, mean, at_least: [...]}.
ComparedTime TimeAt(const nlohmann::json& aggregates, const char* key) {
  ComparedTime t;
  const nlohmann::json& v = At(aggregates, key);
  t.n = static_cast<int64_t>(NumberAt(v, "n", 0));
  if (!v.is_object() || t.n <= 0) return t;
  t.available = true;
  t.p50 = NumberAt(v, "p50");
  t.p95 = NumberAt(v, "p95");
  t.mean = NumberAt(v, "mean");
  const nlohmann::json& at_least = At(v, "at_least");
  if (at_least.is_array()) {
    for (const nlohmann::json& k : at_least) {
      if (k == "p50") t.p50_at_least = true;
      if (k == "p95") t.p95_at_least = true;
      if (k == "mean") t.mean_at_least = true;
    }
  }
  return t;
}

/// run.json's aggregates.cost (null without a price): the mean cost of a case ("mean") with its
/// interval, and the currency.
ComparedCost CostAt(const nlohmann::json& aggregates) {
  ComparedCost c;
  const nlohmann::json& cost = At(aggregates, "cost");
  const double mean = NumberAt(cost, "mean");
  if (!std::isfinite(mean)) return c;
  c.available = true;
  c.per_1000 = mean * 1000;
  const metrics::Interval i = IntervalAt(cost, "interval");
  c.interval = {i.low * 1000, i.high * 1000};
  const nlohmann::json& currency = At(cost, "currency");
  if (currency.is_string()) c.currency = currency.get<std::string>();
  return c;
}

ComparedRun Describe(const RunValues& run, const RunIdentity& identity) {
  ComparedRun r;
  r.identity = identity;
  const nlohmann::json& aggregates = At(run.record, "aggregates");
  r.cases = static_cast<int64_t>(NumberAt(aggregates, "cases", 0));
  const nlohmann::json& metrics = At(aggregates, "metrics");
  if (metrics.is_object()) {
    for (auto it = metrics.begin(); it != metrics.end(); ++it) {
      ComparedMetric m;
      m.mean = NumberAt(*it, "mean");
      m.n = static_cast<int64_t>(NumberAt(*it, "n", 0));
      m.interval = IntervalAt(*it, "interval");
      r.metrics[it.key()] = m;
    }
  }
  r.latency = TimeAt(aggregates, "latency_ms");
  r.ttft = TimeAt(aggregates, "ttft_ms");
  r.warmup = SummarizeWarmups(WarmupsFromJson(At(aggregates, "warmup")));
  r.startup_ms = kNaN;
  if (r.warmup.n > 0 && r.warmup.signal == "first_call") {
    if (r.latency.available && std::isfinite(r.latency.mean)) {
      r.startup_ms = std::max(0.0, r.warmup.mean_ms - r.latency.mean);
    }
  } else if (r.warmup.n > 0) {
    r.startup_ms = r.warmup.mean_ms;
  }
  r.cost = CostAt(aggregates);
  const nlohmann::json& verdict = At(run.record, "verdict");
  r.exit_code = static_cast<int>(NumberAt(verdict, "exit_code", 0));
  const nlohmann::json& reason = At(verdict, "reason");
  if (reason.is_string()) r.verdict_reason = reason.get<std::string>();
  return r;
}

std::string LastComponent(std::string dir) {
  while (dir.size() > 1 && dir.back() == '/') dir.pop_back();
  const size_t slash = dir.rfind('/');
  return slash == std::string::npos ? dir : dir.substr(slash + 1);
}

void NameRuns(std::vector<ComparedRun>* runs) {
  auto repeated = [&](auto name_of) {
    std::map<std::string, int> count;
    for (const ComparedRun& r : *runs) ++count[name_of(r)];
    std::vector<bool> out;
    for (const ComparedRun& r : *runs) out.push_back(count[name_of(r)] > 1);
    return out;
  };
  for (ComparedRun& r : *runs) r.name = r.identity.pipeline.empty() ? "?" : r.identity.pipeline;
  const std::vector<bool> twice = repeated([](const ComparedRun& r) { return r.name; });
  for (size_t i = 0; i < runs->size(); ++i) {
    if (twice[i]) (*runs)[i].name += " (" + LastComponent((*runs)[i].identity.dir) + ")";
  }
  const std::vector<bool> still = repeated([](const ComparedRun& r) { return r.name; });
  for (size_t i = 0; i < runs->size(); ++i) {
    if (still[i]) (*runs)[i].name += " #" + std::to_string(i + 1);
  }
}

/// Each case's mean latency over its repeats that were timed, by id.
std::unordered_map<std::string, double> CaseLatencies(const RunValues& run) {
  std::unordered_map<std::string, double> out;
  for (size_t row = 0; row < run.rows(); ++row) {
    if (run.latency_count[row] > 0)
      out[run.ids[row]] = run.latency_sum[row] / run.latency_count[row];
  }
  return out;
}

/// How firm the break-even is (BreakEvenStatement): the paired interval of the per-case gap.
void Firm(const RunValues& slow, const RunValues& quick, const DriftOptions& options,
          BreakEvenStatement* b) {
  const std::unordered_map<std::string, double> s = CaseLatencies(slow);
  const std::unordered_map<std::string, double> q = CaseLatencies(quick);
  std::vector<double> slow_values, quick_values;
  std::vector<std::string> ids;
  for (const auto& [id, value] : s) {
    if (q.count(id) > 0) ids.push_back(id);
  }
  std::sort(ids.begin(), ids.end());  // a fixed order, so the resamples do not depend on hashing
  for (const std::string& id : ids) {
    slow_values.push_back(s.at(id));
    quick_values.push_back(q.at(id));
  }
  b->paired_cases = static_cast<int64_t>(ids.size());
  b->gap_ms = {kNaN, kNaN};
  if (ids.size() < 2) return;
  const metrics::PairedBootstrapResult gap = metrics::PairedBootstrapMeanDelta(
      slow_values, quick_values, options.resamples, options.seed, kDriftConfidence);
  b->gap_ms = gap.interval;
  if (!(gap.interval.low > 0) || !std::isfinite(gap.interval.high)) return;
  const auto late =
      BreakEvenCases(b->slow, {b->quick.warmup_ms, b->slow.per_case_ms + gap.interval.low});
  const auto early =
      BreakEvenCases(b->slow, {b->quick.warmup_ms, b->slow.per_case_ms + gap.interval.high});
  if (!late || !early) return;
  b->established = true;
  b->cases_late = *late;
  b->cases_early = *early;
}

}  // namespace

bool ComputeComparison(const std::vector<const RunValues*>& runs, const DriftOptions& options,
                       Comparison* out, std::string* error) {
  *out = Comparison();
  out->options = options;
  if (runs.size() < 2) {
    *error = "compare needs two or more run directories (one gives nothing to compare with)";
    return false;
  }
  out->suite = SuiteName(*runs[0]);
  for (size_t i = 1; i < runs.size(); ++i) {
    const std::string suite = SuiteName(*runs[i]);
    if (suite != out->suite) {
      *error = fmt::format(
          "{} is a run of suite '{}' and {} a run of suite '{}'; compare takes runs of one "
          "suite (run each pipeline on the same suite file, then compare those run directories)",
          runs[0]->dir, out->suite, runs[i]->dir, suite);
      return false;
    }
  }
  for (size_t i = 1; i < runs.size(); ++i) {
    DriftReport report;
    if (!ComputeDrift(*runs[0], *runs[i], options, &report, error)) return false;
    out->against_first.push_back(std::move(report));
  }
  for (size_t i = 0; i < runs.size(); ++i) {
    const RunIdentity& identity =
        i == 0 ? out->against_first[0].base : out->against_first[i - 1].cand;
    out->runs.push_back(Describe(*runs[i], identity));
  }
  NameRuns(&out->runs);

  std::vector<std::string> metrics;
  for (const ComparedRun& r : out->runs) {
    for (const auto& [metric, value] : r.metrics) {
      if (std::find(metrics.begin(), metrics.end(), metric) == metrics.end()) {
        metrics.push_back(metric);
      }
    }
  }
  out->metrics = MetricDisplayOrder(metrics);

  std::vector<TradeoffPoint> points;
  for (const ComparedRun& r : out->runs) {
    auto q = r.metrics.find(kCompareQualityMetric);
    points.push_back(
        {q == r.metrics.end() ? kNaN : q->second.mean, r.latency.available ? r.latency.p95 : kNaN});
  }
  out->front = ParetoFront(points);
  for (size_t i : out->front) out->runs[i].on_front = true;

  for (size_t i = 0; i < out->runs.size(); ++i) {
    for (size_t j = 0; j < out->runs.size(); ++j) {
      if (i == j) continue;
      const ComparedRun& a = out->runs[i];
      const ComparedRun& b = out->runs[j];
      if (!a.latency.available || !b.latency.available) continue;
      const TimeCost slow{a.startup_ms, a.latency.mean};
      const TimeCost quick{b.startup_ms, b.latency.mean};
      if (const std::optional<int64_t> n = BreakEvenCases(slow, quick)) {
        BreakEvenStatement b;
        b.slow_start = i;
        b.quick_start = j;
        b.cases = *n;
        b.slow = slow;
        b.quick = quick;
        Firm(*runs[i], *runs[j], options, &b);
        out->break_evens.push_back(b);
      }
    }
  }

  std::vector<std::string> regressed;
  for (size_t i = 1; i < out->runs.size(); ++i) {
    const DriftReport& d = out->against_first[i - 1];
    if (!d.gate.regressed.empty()) {
      std::string metrics_text;
      for (const std::string& m : d.gate.regressed) {
        metrics_text += (metrics_text.empty() ? "" : ", ") + m;
      }
      regressed.push_back(out->runs[i].name + " on " + metrics_text);
    }
  }
  std::string gated;
  for (const std::string& m : options.gate) gated += (gated.empty() ? "" : ", ") + m;
  if (regressed.empty()) {
    out->exit_code = kExitOk;
    out->reason =
        "no run regressed against " + out->runs[0].name + " on a gated metric (" + gated + ")";
  } else {
    out->exit_code = kExitFloorBroken;
    std::string list;
    for (const std::string& r : regressed) list += (list.empty() ? "" : "; ") + r;
    out->reason = "regressed against " + out->runs[0].name + ": " + list;
  }
  return true;
}

}  // namespace plumb
