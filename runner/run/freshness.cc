#include "runner/run/freshness.h"

#include <map>

namespace plumb {
namespace {

nlohmann::json SummaryJson(const std::optional<metrics::MetricSummary>& s) {
  if (!s) return nullptr;
  return {{"mean", s->mean},
          {"n", s->n},
          {"interval", {s->interval.low, s->interval.high}},
          {"interval_method", s->wilson ? "wilson" : "bootstrap"}};
}

std::optional<metrics::MetricSummary> SummaryFromJson(const nlohmann::json& json) {
  if (!json.is_object() || !json.contains("mean") || !json["mean"].is_number()) {
    return std::nullopt;
  }
  metrics::MetricSummary s;
  s.mean = json["mean"].get<double>();
  s.n = json.value("n", int64_t{0});
  const nlohmann::json interval = json.value("interval", nlohmann::json());
  if (interval.is_array() && interval.size() == 2 && interval[0].is_number() &&
      interval[1].is_number()) {
    s.interval.low = interval[0].get<double>();
    s.interval.high = interval[1].get<double>();
  }
  s.wilson = json.value("interval_method", std::string()) == "wilson";
  return s;
}

struct CaseFold {
  double fresh = 0, stale = 0;
  int fresh_n = 0, stale_n = 0;
};

}  // namespace

std::optional<double> UpdateFreshness::MeanRefreshMs() const {
  double sum = 0;
  int n = 0;
  for (const RefreshRecord& r : refreshes) {
    if (!r.called) continue;
    sum += r.ms;
    ++n;
  }
  if (n == 0) return std::nullopt;
  return sum / n;
}

std::vector<UpdateFreshness> SummarizeFreshness(const Suite& suite,
                                                const std::vector<CaseOutcome>& outcomes,
                                                const std::vector<RefreshRecord>& refreshes) {
  std::vector<UpdateFreshness> out;
  if (suite.updates.empty()) return out;
  // case index -> values over its repeats
  std::map<size_t, CaseFold> folds;
  for (const CaseOutcome& o : outcomes) {
    if (o.case_index >= suite.cases.size() || suite.cases[o.case_index].after < 0) continue;
    CaseFold& fold = folds[o.case_index];
    if (auto f = o.scores.values.find("fresh"); f != o.scores.values.end()) {
      fold.fresh += f->second;
      ++fold.fresh_n;
    }
    if (auto s = o.scores.values.find("stale"); s != o.scores.values.end()) {
      fold.stale += s->second;
      ++fold.stale_n;
    }
  }
  for (size_t k = 0; k < suite.updates.size(); ++k) {
    UpdateFreshness u;
    u.update = suite.updates[k].id;
    std::vector<double> fresh, stale;
    for (const auto& [index, fold] : folds) {
      if (suite.cases[index].after != int(k)) continue;
      ++u.cases;
      if (fold.fresh_n > 0) fresh.push_back(fold.fresh / fold.fresh_n);
      if (fold.stale_n > 0) stale.push_back(fold.stale / fold.stale_n);
    }
    if (!fresh.empty()) u.fresh = metrics::SummarizeMetric(fresh, /*binary=*/true);
    if (!stale.empty()) u.stale = metrics::SummarizeMetric(stale, /*binary=*/true);
    for (const RefreshRecord& r : refreshes) {
      if (r.update == u.update) u.refreshes.push_back(r);
    }
    if (u.cases == 0 && u.refreshes.empty()) continue;
    out.push_back(std::move(u));
  }
  return out;
}

nlohmann::json FreshnessToJson(const std::vector<UpdateFreshness>& freshness) {
  if (freshness.empty()) return nullptr;
  nlohmann::json updates = nlohmann::json::array();
  for (const UpdateFreshness& u : freshness) {
    nlohmann::json refreshes = nlohmann::json::array();
    for (const RefreshRecord& r : u.refreshes) refreshes.push_back(RefreshRecordToJson(r));
    const std::optional<double> ms = u.MeanRefreshMs();
    updates.push_back({{"update", u.update},
                       {"cases", u.cases},
                       {"fresh", SummaryJson(u.fresh)},
                       {"stale", SummaryJson(u.stale)},
                       {"refresh_ms", ms ? nlohmann::json(*ms) : nlohmann::json(nullptr)},
                       {"refreshes", refreshes}});
  }
  return {{"updates", updates}};
}

std::vector<UpdateFreshness> FreshnessFromJson(const nlohmann::json& freshness) {
  std::vector<UpdateFreshness> out;
  if (!freshness.is_object()) return out;
  const nlohmann::json updates = freshness.value("updates", nlohmann::json());
  if (!updates.is_array()) return out;
  for (const nlohmann::json& entry : updates) {
    if (!entry.is_object() || !entry.contains("update") || !entry["update"].is_string()) continue;
    UpdateFreshness u;
    u.update = entry["update"].get<std::string>();
    u.cases = entry.value("cases", int64_t{0});
    u.fresh = SummaryFromJson(entry.value("fresh", nlohmann::json()));
    u.stale = SummaryFromJson(entry.value("stale", nlohmann::json()));
    const nlohmann::json list = entry.value("refreshes", nlohmann::json());
    for (const nlohmann::json& r : list.is_array() ? list : nlohmann::json::array()) {
      RefreshRecord record;
      if (RefreshRecordFromJson(r, &record)) u.refreshes.push_back(std::move(record));
    }
    out.push_back(std::move(u));
  }
  return out;
}

}  // namespace plumb
