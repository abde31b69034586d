#include "runner/run/run_aggregates.h"

#include <algorithm>
#include <cmath>
#include <map>
#include <set>
#include <utility>

#include "metrics/percentile_bootstrap.h"
#include "runner/base/parallel_chunks.h"
#include "runner/suite/pipeline_config_loader.h"

namespace plumb {
namespace {

// 0/1 per case (before averaging over repeats): summarized with a Wilson interval.
bool IsBinaryMetric(const std::string& metric) {
  static const std::set<std::string> kBinary = {"exact_match",  "correct",     "pattern_match",
                                                "number_match", "covers_gold", "pass_rate",
                                                "error_rate",   "fresh",       "stale"};
  return kBinary.count(metric) > 0;
}

std::vector<std::string> DisplayOrder(const Suite& suite) {
  std::vector<std::string> order = {"correct",       "exact_match",        "token_f1",
                                    "token_recall",  "covers_gold",        "knowledge_f1",
                                    "cited_support", "pattern_match",      "number_match",
                                    "grade.*",       "citation_precision", "citation_recall",
                                    "citation_f1"};
  for (int k : suite.retrieval_k) order.push_back("recall@" + std::to_string(k));
  order.insert(order.end(), {"mrr", "fresh", "stale", "pass_rate", "abstain_precision",
                             "abstain_recall", "error_rate"});
  return order;
}

/// Per-case values of every metric, averaged over the case's repeats.
struct CaseValues {
  /// The means: the one outcome's own values, or `averaged` when the case has several.
  const MetricValues* means = nullptr;
  MetricValues averaged;
  const MetricValues* first_values = nullptr;    // the first repeat's (most cases have one)
  std::vector<const MetricValues*> more_values;  // the other repeats'
  int repeats = 0;                               // 0: the case has no outcome
  int passes = 0;
  int errors = 0;
  int abstentions = 0;                       // repeats on which the reply abstained
  FailureCause cause = FailureCause::kNone;  // the first failed repeat's
  int cause_repeat = 0;
};

/// The cause of a failed outcome: as scored, or for outcomes read from a journal written
/// before causes were recorded, classified now.
FailureCause CauseOf(const Case& c, const CaseScores& scores,
                     const std::map<std::string, double>& case_pass) {
  if (scores.cause != FailureCause::kNone) return scores.cause;
  CaseScores copy = scores;
  copy.abstention_case = c.answers.empty();
  return ClassifyFailure(copy, case_pass);
}

/// Sets v->means: each metric averaged over the repeats that define it.
void AverageRepeats(CaseValues* v) {
  if (v->more_values.empty()) {
    v->means = v->first_values;
    return;
  }
  std::vector<const MetricValues*> all = {v->first_values};
  all.insert(all.end(), v->more_values.begin(), v->more_values.end());
  MetricValues sum, count;
  for (const MetricValues* values : all) {
    for (const auto& [metric, value] : *values) {
      sum[metric] += value;
      count[metric] += 1;
    }
  }
  for (const auto& [metric, total] : sum) v->averaged[metric] = total / count.at(metric);
  v->means = &v->averaged;
}

std::vector<MetricAggregate> Summarize(const Suite& suite,
                                       const std::vector<const CaseValues*>& cases,
                                       const std::vector<bool>& abstention_case) {
  // One column of per-case values per metric. The cases mostly define the same metrics, in the
  // same (id) order, so the column after the last one filled is tried first.
  std::vector<std::pair<std::string_view, std::vector<double>>> columns;
  std::vector<double> pass_rate, error_rate;
  pass_rate.reserve(cases.size());
  error_rate.reserve(cases.size());
  int64_t abstained = 0, abstained_right = 0, abstention_cases = 0, abstention_cases_hit = 0;
  for (size_t i = 0; i < cases.size(); ++i) {
    const CaseValues& v = *cases[i];
    size_t column = 0;
    for (const auto& [metric, mean] : *v.means) {
      if (column >= columns.size() || columns[column].first != metric) {
        column = static_cast<size_t>(
            std::find_if(columns.begin(), columns.end(),
                         [&metric = metric](const auto& c) { return c.first == metric; }) -
            columns.begin());
        if (column == columns.size()) {
          columns.emplace_back(metric, std::vector<double>());
          columns.back().second.reserve(cases.size());
        }
      }
      columns[column++].second.push_back(mean);
    }
    pass_rate.push_back(static_cast<double>(v.passes) / v.repeats);
    error_rate.push_back(static_cast<double>(v.errors) / v.repeats);
    // Abstention rates count every (case, repeat): each repeat is one decision to abstain.
    abstained += v.abstentions;
    if (abstention_case[i]) {
      abstained_right += v.abstentions;
      abstention_cases += v.repeats;
      abstention_cases_hit += v.abstentions;
    }
  }
  auto values_of = [&](const std::string& metric) -> const std::vector<double>* {
    if (metric == "pass_rate") return &pass_rate;
    if (metric == "error_rate") return &error_rate;
    for (const auto& [name, values] : columns) {
      if (name == metric) return &values;
    }
    return nullptr;
  };
  // "grade.*" in the display order stands for every grader's metric, by name.
  std::vector<std::string> order;
  for (const std::string& metric : DisplayOrder(suite)) {
    if (metric != "grade.*") {
      order.push_back(metric);
      continue;
    }
    const size_t first = order.size();
    for (const auto& column : columns) {
      if (column.first.rfind("grade.", 0) == 0) order.emplace_back(column.first);
    }
    std::sort(order.begin() + static_cast<std::ptrdiff_t>(first), order.end());
  }
  std::vector<MetricAggregate> out;
  for (const std::string& metric : order) {
    if (metric == "abstain_precision" || metric == "abstain_recall") {
      const int64_t hits = metric == "abstain_precision" ? abstained_right : abstention_cases_hit;
      const int64_t n = metric == "abstain_precision" ? abstained : abstention_cases;
      if (n == 0) continue;
      metrics::MetricSummary s;
      s.mean = static_cast<double>(hits) / n;
      s.n = n;
      s.interval = metrics::WilsonInterval(hits, n);
      s.wilson = true;
      out.push_back({metric, s});
      continue;
    }
    const std::vector<double>* values = values_of(metric);
    if (values == nullptr || values->empty()) continue;
    out.push_back({metric, metrics::SummarizeMetric(*values, IsBinaryMetric(metric))});
  }
  return out;
}

}  // namespace

const metrics::MetricSummary* RunAggregates::Find(const std::string& metric,
                                                  const std::string& tag) const {
  const std::vector<MetricAggregate>* list = &metrics;
  if (!tag.empty()) {
    auto it =
        std::find_if(tags.begin(), tags.end(), [&](const TagAggregate& t) { return t.tag == tag; });
    if (it == tags.end()) return nullptr;
    list = &it->metrics;
  }
  for (const MetricAggregate& m : *list) {
    if (m.metric == metric) return &m.summary;
  }
  return nullptr;
}

RunAggregates AggregateRun(const Suite& suite, const std::vector<CaseOutcome>& outcomes) {
  RunAggregates run;
  std::vector<CaseValues> per_case(suite.cases.size());
  std::vector<double> latencies, lower_bounds, ttfts;
  latencies.reserve(outcomes.size());
  std::vector<double> cost_sum(suite.cases.size(), 0.0);
  std::vector<int> cost_count(suite.cases.size(), 0);
  for (const CaseOutcome& o : outcomes) {
    CaseValues& v = per_case[o.case_index];
    (v.first_values == nullptr ? v.first_values : v.more_values.emplace_back()) = &o.scores.values;
    v.repeats += 1;
    v.passes += o.scores.pass ? 1 : 0;
    v.errors += o.scores.errored ? 1 : 0;
    v.abstentions += o.scores.abstained && !o.scores.errored ? 1 : 0;
    if (!o.scores.pass && (v.cause == FailureCause::kNone || o.repeat < v.cause_repeat)) {
      v.cause = CauseOf(suite.cases[o.case_index], o.scores, suite.case_pass);
      v.cause_repeat = o.repeat;
    }
    run.items += 1;
    run.errored += o.scores.errored ? 1 : 0;
    // Latency of a failed call measures the failure, not the pipeline; but a call that timed
    // out took at least its timeout, and leaving it out would flatter a pipeline that hangs.
    // A fresh worker's first reply includes its start-up: that is its warm-up, not a latency.
    if (!o.scores.errored && !o.first_call) {
      latencies.push_back(o.latency_ms);
    } else if (o.latency_lower_bound) {
      lower_bounds.push_back(o.latency_ms);
    }
    run.input_tokens += o.input_tokens;
    run.output_tokens += o.output_tokens;
    run.usage_items += o.has_usage ? 1 : 0;
    if (o.ttft_ms && !o.scores.errored) ttfts.push_back(*o.ttft_ms);
    if (o.cost) {
      run.cost_items += 1;
      run.cost_total += *o.cost;
      cost_sum[o.case_index] += *o.cost;
      cost_count[o.case_index] += 1;
    }
  }
  run.latency = metrics::SummarizeLatency(std::move(latencies), std::move(lower_bounds));
  if (!ttfts.empty()) {
    run.ttft_p50_interval = metrics::BootstrapPercentileInterval(ttfts, 50);
    run.ttft_p95_interval = metrics::BootstrapPercentileInterval(ttfts, 95);
  }
  run.ttft = metrics::SummarizeLatency(std::move(ttfts));
  if (run.cost_items > 0) {
    std::vector<double> per_case;  // each case's mean over its repeats with a cost
    for (size_t i = 0; i < cost_sum.size(); ++i) {
      if (cost_count[i] > 0) per_case.push_back(cost_sum[i] / cost_count[i]);
    }
    run.cost_per_case = metrics::SummarizeMetric(per_case, /*binary=*/false);
  }

  // groups[0] holds the whole run's cases, then one group per tag in order of first
  // appearance (tag_groups has them sorted); each is summarized on its own.
  struct Group {
    std::vector<const CaseValues*> cases;
    std::vector<bool> abstention;
    std::vector<FailureCause> causes;
    std::vector<MetricAggregate> metrics;
  };
  std::vector<Group> groups(1);
  std::map<std::string_view, size_t> tag_groups;  // tag -> index in groups
  std::string_view last_tag;                      // cases often share their tag with the last
  size_t last_group = 0;
  for (size_t index = 0; index < per_case.size(); ++index) {
    CaseValues& values = per_case[index];
    if (values.repeats == 0) continue;
    AverageRepeats(&values);
    const Case& c = suite.cases[index];
    run.cases += 1;
    groups[0].cases.push_back(&values);
    groups[0].abstention.push_back(c.answers.empty());
    const FailureCause cause = values.passes == values.repeats ? FailureCause::kNone : values.cause;
    groups[0].causes.push_back(cause);
    if (values.passes == values.repeats) run.passed += 1;
    // Passed on some repeats and failed on others.
    if (values.passes > 0 && values.passes < values.repeats) run.unstable_cases.push_back(c.id);
    for (const std::string& tag : c.tags) {
      if (last_group == 0 || tag != last_tag) {
        auto [it, added] = tag_groups.emplace(tag, groups.size());
        if (added) groups.emplace_back();
        last_tag = tag;
        last_group = it->second;
      }
      groups[last_group].cases.push_back(&values);
      groups[last_group].abstention.push_back(c.answers.empty());
      groups[last_group].causes.push_back(cause);
    }
  }
  // Each group's bootstrap costs about the same whatever its size, so the groups are shared
  // out over the CPUs in equal numbers; every summary is seeded alike, so the results do not
  // depend on how they are shared.
  ForEachChunk(groups.size(), 1, [&](size_t, size_t begin, size_t end) {
    for (size_t i = begin; i < end; ++i) {
      groups[i].metrics = Summarize(suite, groups[i].cases, groups[i].abstention);
    }
  });
  run.metrics = std::move(groups[0].metrics);
  run.causes = BreakDownCauses(groups[0].causes);
  for (const auto& [tag, index] : tag_groups) {
    TagAggregate t;
    t.tag = std::string(tag);
    t.cases = static_cast<int64_t>(groups[index].cases.size());
    t.metrics = std::move(groups[index].metrics);
    t.causes = BreakDownCauses(groups[index].causes);
    run.tags.push_back(std::move(t));
  }
  run.sessions = AggregateSessions(suite, outcomes);
  return run;
}

std::optional<TokenPrice> PriceFromConfig(const nlohmann::json& config) {
  if (!config.is_object()) return std::nullopt;
  auto it = config.find("price");
  if (it == config.end() || !it->is_object()) return std::nullopt;
  const nlohmann::json& p = *it;
  TokenPrice price;
  auto amount = [&](const char* key, double* out) {
    auto v = p.find(key);
    if (v == p.end() || !v->is_number()) return false;
    *out = v->get<double>();
    return *out >= 0;
  };
  if (!amount("input", &price.input) || !amount("output", &price.output)) return std::nullopt;
  if (auto per = p.find("per"); per != p.end()) {
    const std::string text = per->is_string() ? per->get<std::string>() : per->dump();
    if (!ParseTokenCount(text, &price.per)) return std::nullopt;
  }
  if (auto currency = p.find("currency"); currency != p.end() && currency->is_string()) {
    price.currency = currency->get<std::string>();
  }
  return price;
}

WarmupSummary SummarizeWarmups(const std::vector<WorkerWarmup>& warmups) {
  WarmupSummary s;
  for (const WorkerWarmup& w : warmups) {
    if (s.signal.empty()) s.signal = w.signal;
    s.n += 1;
    s.restarts += w.restart ? 1 : 0;
    s.mean_ms += w.ms;
    s.max_ms = std::max(s.max_ms, w.ms);
  }
  if (s.n > 0) s.mean_ms /= static_cast<double>(s.n);
  return s;
}

std::vector<WorkerWarmup> WarmupsFromJson(const nlohmann::json& warmup) {
  std::vector<WorkerWarmup> out;
  if (!warmup.is_object()) return out;
  const nlohmann::json workers = warmup.value("workers", nlohmann::json::array());
  if (!workers.is_array()) return out;
  for (const nlohmann::json& entry : workers) {
    if (!entry.is_object()) continue;
    WorkerWarmup w;
    const nlohmann::json& worker = entry.value("worker", nlohmann::json());
    const nlohmann::json& restart = entry.value("restart", nlohmann::json());
    const nlohmann::json& signal = entry.value("signal", nlohmann::json());
    if (worker.is_number_integer()) w.worker = worker.get<int>();
    if (restart.is_boolean()) w.restart = restart.get<bool>();
    if (signal.is_string()) w.signal = signal.get<std::string>();
    const nlohmann::json& ms =
        entry.value(w.signal == "first_call" ? "first_call_ms" : "warmup_ms", nlohmann::json());
    if (!ms.is_number()) continue;
    w.ms = ms.get<double>();
    const nlohmann::json& ready = entry.value("ready", nlohmann::json());
    if (ready.is_object()) w.ready = ready;
    out.push_back(std::move(w));
  }
  return out;
}

bool IsCeilingMetric(const std::string& metric) {
  return metric == "error_rate" || metric == "latency_p50_ms" || metric == "latency_p95_ms";
}

std::string CountFloorsAndCeilings(int floors, int ceilings) {
  auto count = [](int n, const char* word) {
    return std::to_string(n) + " " + word + (n == 1 ? "" : "s");
  };
  if (floors > 0 && ceilings > 0)
    return count(floors, "floor") + " and " + count(ceilings, "ceiling");
  if (floors > 0) return count(floors, "floor");
  if (ceilings > 0) return count(ceilings, "ceiling");
  return "";
}

namespace {

std::optional<double> ThresholdValue(const RunAggregates& run, const std::string& metric,
                                     const std::string& tag) {
  if (tag.empty() && metric == "latency_p50_ms") {
    if (run.latency.n == 0) return std::nullopt;
    return run.latency.p50;
  }
  if (tag.empty() && metric == "latency_p95_ms") {
    if (run.latency.n == 0) return std::nullopt;
    return run.latency.p95;
  }
  const metrics::MetricSummary* s = run.Find(metric, tag);
  if (s == nullptr) return std::nullopt;
  return s->mean;
}

}  // namespace

std::vector<ThresholdOutcome> EvaluateThresholds(const Thresholds& thresholds,
                                                 const RunAggregates& run) {
  std::vector<ThresholdOutcome> out;
  auto evaluate = [&](const std::string& tag, const std::string& metric, double limit) {
    ThresholdOutcome t;
    t.tag = tag;
    t.metric = metric;
    t.limit = limit;
    t.ceiling = IsCeilingMetric(metric);
    t.value = ThresholdValue(run, metric, tag);
    // A floor nothing measured cannot be said to hold.
    t.held = t.value.has_value() && (t.ceiling ? *t.value <= limit : *t.value >= limit);
    out.push_back(t);
  };
  for (const auto& [metric, limit] : thresholds.metrics) evaluate("", metric, limit);
  for (const auto& [tag, floors] : thresholds.tags) {
    for (const auto& [metric, limit] : floors) evaluate(tag, metric, limit);
  }
  return out;
}

namespace {

nlohmann::json SummaryToJson(const metrics::MetricSummary& s) {
  return {{"mean", s.mean},
          {"n", s.n},
          {"interval", {s.interval.low, s.interval.high}},
          {"interval_method", s.wilson ? "wilson" : "bootstrap"}};
}

/// The latency statistics that are only lower bounds (a timeout reaches them), by key.
nlohmann::json AtLeastKeys(const metrics::LatencySummary& l) {
  nlohmann::json keys = nlohmann::json::array();
  const std::pair<const char*, bool> flags[] = {
      {"p50", l.p50_at_least}, {"p90", l.p90_at_least},     {"p95", l.p95_at_least},
      {"p99", l.p99_at_least}, {"mean", l.mean_at_least()}, {"max", l.mean_at_least()}};
  for (const auto& [key, at_least] : flags) {
    if (at_least) keys.push_back(key);
  }
  return keys;
}

nlohmann::json WarmupToJson(const std::vector<WorkerWarmup>& warmups) {
  const WarmupSummary s = SummarizeWarmups(warmups);
  nlohmann::json workers = nlohmann::json::array();
  for (const WorkerWarmup& w : warmups) {
    workers.push_back({{"worker", w.worker},
                       {"restart", w.restart},
                       {"signal", w.signal},
                       {w.signal == "first_call" ? "first_call_ms" : "warmup_ms", w.ms},
                       {"ready", w.ready}});
  }
  return {{"signal", s.signal},   {"n", s.n},           {"restarts", s.restarts},
          {"mean_ms", s.mean_ms}, {"max_ms", s.max_ms}, {"workers", workers}};
}

nlohmann::json IntervalToJson(const metrics::Interval& interval) {
  if (!std::isfinite(interval.low) || !std::isfinite(interval.high)) return nullptr;
  return {interval.low, interval.high};
}

/// Token totals, the items that carried a count, and the means per such item.
nlohmann::json UsageToJson(const RunAggregates& run) {
  const double items = static_cast<double>(run.usage_items);
  return {{"input_tokens", run.input_tokens},
          {"output_tokens", run.output_tokens},
          {"items", run.usage_items},
          {"mean_input_tokens", run.usage_items > 0 ? run.input_tokens / items : 0.0},
          {"mean_output_tokens", run.usage_items > 0 ? run.output_tokens / items : 0.0}};
}

nlohmann::json TtftToJson(const RunAggregates& run) {
  const metrics::LatencySummary& t = run.ttft;
  return {{"n", t.n},
          {"p50", t.p50},
          {"p90", t.p90},
          {"p95", t.p95},
          {"p99", t.p99},
          {"mean", t.mean},
          {"max", t.max},
          {"p50_interval", t.n > 0 ? IntervalToJson(run.ttft_p50_interval) : nullptr},
          {"p95_interval", t.n > 0 ? IntervalToJson(run.ttft_p95_interval) : nullptr}};
}

/// null without a price; else the price, the items with a cost, their total, and the mean per
/// case with its interval (and per 1,000 cases, the mean times 1,000).
nlohmann::json CostToJson(const RunAggregates& run) {
  if (!run.price) return nullptr;
  const TokenPrice& p = *run.price;
  const metrics::MetricSummary& c = run.cost_per_case;
  const bool any = run.cost_items > 0;
  return {{"currency", p.currency},
          {"input", p.input},
          {"output", p.output},
          {"per", p.per},
          {"items", run.cost_items},
          {"total", run.cost_total},
          {"n", any ? c.n : 0},
          {"mean", any ? nlohmann::json(c.mean) : nlohmann::json(nullptr)},
          {"interval", any ? IntervalToJson(c.interval) : nullptr},
          {"per_1000_cases", any ? nlohmann::json(c.mean * 1000) : nlohmann::json(nullptr)}};
}

nlohmann::json MetricsToJson(const std::vector<MetricAggregate>& list) {
  nlohmann::json out = nlohmann::json::object();
  for (const MetricAggregate& m : list) out[m.metric] = SummaryToJson(m.summary);
  return out;
}

}  // namespace

nlohmann::json AggregatesToJson(const RunAggregates& run) {
  nlohmann::json tags = nlohmann::json::object();
  for (const TagAggregate& t : run.tags) {
    tags[t.tag] = {{"cases", t.cases}, {"metrics", MetricsToJson(t.metrics)}};
  }
  const metrics::LatencySummary& l = run.latency;
  return {{"cases", run.cases},
          {"items", run.items},
          {"errored", run.errored},
          {"passed", run.passed},
          {"metrics", MetricsToJson(run.metrics)},
          {"tags", tags},
          {"latency_ms",
           {{"n", l.n},
            {"lower_bounds", l.lower_bounds},
            {"at_least", AtLeastKeys(l)},
            {"p50", l.p50},
            {"p90", l.p90},
            {"p95", l.p95},
            {"p99", l.p99},
            {"mean", l.mean},
            {"max", l.max}}},
          {"usage", UsageToJson(run)},
          {"ttft_ms", TtftToJson(run)},
          {"cost", CostToJson(run)},
          {"unstable_cases", run.unstable_cases},
          {"warmup", WarmupToJson(run.warmups)}};
}

nlohmann::json FailuresToJson(const RunAggregates& run) {
  nlohmann::json out = CauseBreakdownToJson(run.causes);
  nlohmann::json tags = nlohmann::json::object();
  for (const TagAggregate& t : run.tags) tags[t.tag] = CauseBreakdownToJson(t.causes);
  out["tags"] = tags;
  return out;
}

nlohmann::json ThresholdsToJson(const std::vector<ThresholdOutcome>& outcomes) {
  nlohmann::json out = nlohmann::json::array();
  for (const ThresholdOutcome& t : outcomes) {
    out.push_back({{"tag", t.tag.empty() ? nlohmann::json(nullptr) : nlohmann::json(t.tag)},
                   {"metric", t.metric},
                   {"limit", t.limit},
                   {"kind", t.ceiling ? "ceiling" : "floor"},
                   {"value", t.value ? nlohmann::json(*t.value) : nlohmann::json(nullptr)},
                   {"held", t.held}});
  }
  return out;
}

}  // namespace plumb
