#include "runner/run/cause_breakdown.h"

#include <algorithm>
#include <string>

namespace plumb {

CauseBreakdown BreakDownCauses(const std::vector<FailureCause>& causes) {
  CauseBreakdown out;
  out.cases = static_cast<int64_t>(causes.size());
  for (FailureCause kind : FailureCauses()) {
    int64_t count = 0;
    for (FailureCause cause : causes) count += cause == kind ? 1 : 0;
    if (count == 0) continue;
    CauseCount c;
    c.cause = kind;
    c.count = count;
    c.share = static_cast<double>(count) / static_cast<double>(out.cases);
    c.interval = metrics::WilsonInterval(count, out.cases);
    out.failed += count;
    out.causes.push_back(c);
  }
  return out;
}

std::string CauseCountsText(const CauseBreakdown& b) {
  std::vector<CauseCount> sorted = b.causes;
  std::stable_sort(sorted.begin(), sorted.end(),
                   [](const CauseCount& x, const CauseCount& y) { return x.count > y.count; });
  std::string out;
  for (const CauseCount& c : sorted) {
    if (!out.empty()) out += ", ";
    out += std::to_string(c.count) + " " + std::string(FailureCauseLabel(c.cause));
  }
  return out;
}

nlohmann::json CauseBreakdownToJson(const CauseBreakdown& b) {
  nlohmann::json causes = nlohmann::json::array();
  for (const CauseCount& c : b.causes) {
    causes.push_back({{"cause", std::string(FailureCauseId(c.cause))},
                      {"label", std::string(FailureCauseLabel(c.cause))},
                      {"count", c.count},
                      {"share", c.share},
                      {"interval", {c.interval.low, c.interval.high}}});
  }
  return {{"cases", b.cases}, {"failed", b.failed}, {"causes", causes}};
}

bool CauseBreakdownFromJson(const nlohmann::json& json, CauseBreakdown* b) {
  *b = CauseBreakdown();
  if (!json.is_object()) return false;
  try {
    b->cases = json.at("cases").get<int64_t>();
    b->failed = json.at("failed").get<int64_t>();
    for (const nlohmann::json& item : json.at("causes")) {
      CauseCount c;
      if (!ParseFailureCause(item.at("cause").get<std::string>(), &c.cause)) return false;
      c.count = item.at("count").get<int64_t>();
      c.share = item.at("share").get<double>();
      c.interval = {item.at("interval").at(0).get<double>(),
                    item.at("interval").at(1).get<double>()};
      b->causes.push_back(c);
    }
  } catch (const nlohmann::json::exception&) {
    return false;
  }
  return true;
}

}  // namespace plumb
