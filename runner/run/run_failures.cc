#include "runner/run/run_failures.h"

#include <map>
#include <vector>

namespace plumb {
namespace {

/// Each case's cause (kNone when it passed), keyed by id, from the records.
std::map<std::string, FailureCause> CausesById(const LoadedRun& run) {
  std::map<std::string, std::pair<int, FailureCause>> first;  // id -> (repeat, cause)
  for (const CaseRecord& r : run.records) {
    auto [it, added] = first.emplace(r.id, std::make_pair(r.repeat, FailureCause::kNone));
    if (r.scores.pass) continue;
    if (it->second.second == FailureCause::kNone || r.repeat < it->second.first) {
      it->second = {r.repeat, r.scores.cause};
    }
  }
  std::map<std::string, FailureCause> out;
  for (const auto& [id, entry] : first) out[id] = entry.second;
  return out;
}

}  // namespace

nlohmann::json RunFailures(const LoadedRun& run) {
  auto recorded = run.record.find("failures");
  if (recorded != run.record.end() && recorded->is_object()) return *recorded;
  const std::map<std::string, FailureCause> causes = CausesById(run);
  std::vector<FailureCause> all;
  std::map<std::string, std::vector<FailureCause>> by_tag;
  for (const auto& [id, cause] : causes) {
    all.push_back(cause);
    const nlohmann::json* gold = run.Gold(id);
    if (gold == nullptr || !gold->is_object() || !gold->contains("tags")) continue;
    for (const nlohmann::json& tag : (*gold)["tags"]) {
      if (tag.is_string()) by_tag[tag.get<std::string>()].push_back(cause);
    }
  }
  nlohmann::json out = CauseBreakdownToJson(BreakDownCauses(all));
  nlohmann::json tags = nlohmann::json::object();
  for (const auto& [tag, list] : by_tag) tags[tag] = CauseBreakdownToJson(BreakDownCauses(list));
  out["tags"] = tags;
  return out;
}

CauseBreakdown RunCauseBreakdown(const LoadedRun& run) {
  CauseBreakdown out;
  if (!CauseBreakdownFromJson(RunFailures(run), &out)) return CauseBreakdown();
  return out;
}

FailureCause CaseCause(const LoadedRun& run, const std::string& id) {
  FailureCause cause = FailureCause::kNone;
  int repeat = 0;
  for (const CaseRecord* r : run.RecordsOf(id)) {
    if (r->scores.pass) continue;
    if (cause == FailureCause::kNone || r->repeat < repeat) {
      cause = r->scores.cause;
      repeat = r->repeat;
    }
  }
  return cause;
}

}  // namespace plumb
