#include "runner/report/html_tag_grid.h"

#include <algorithm>
#include <cstdio>
#include <map>

#include "runner/report/html_escape.h"
#include "runner/report/html_report_parts.h"

namespace plumb {
namespace {

struct Limit {
  double value = 0;
  bool held = false;
  bool ceiling = false;
};

std::string TwoDecimals(double value) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.2f", value);
  return buffer;
}

// Shade band 0-4 of a mean in [0, 1] (values outside are clamped).
int Band(double mean) { return std::clamp(static_cast<int>(mean * 5), 0, 4); }

void AppendCell(std::string* out, const std::string& tag, const std::string& metric,
                const nlohmann::json& m, const Limit* limit) {
  const double mean = m.value("mean", 0.0);
  const nlohmann::json interval = m.value("interval", nlohmann::json::array());
  out->append("<td tabindex=\"0\" class=\"v" + std::to_string(Band(mean)) + "\">");
  out->append(TwoDecimals(mean));
  if (limit != nullptr) {
    out->append(limit->held ? "<span class=\"fl held\">\xE2\x9C\x93</span>"
                            : "<span class=\"fl broken\">\xE2\x9C\x97</span>");
  }
  // The words a reader hovers or focuses for (and a screen reader reads with the cell).
  std::string tip = tag + " \xC2\xB7 " + metric + ": mean " + FormatScore(mean);
  if (interval.is_array() && interval.size() == 2 && interval[0].is_number() &&
      interval[1].is_number()) {
    tip += ", 95% interval " + FormatScore(interval[0].get<double>()) + "\xE2\x80\x93" +
           FormatScore(interval[1].get<double>());
  }
  tip += ", n " + std::to_string(m.value("n", int64_t{0}));
  if (limit != nullptr) {
    tip += std::string(limit->ceiling ? ", ceiling \xE2\x89\xA4 " : ", floor \xE2\x89\xA5 ") +
           FormatScore(limit->value) + (limit->held ? " held" : " BROKEN");
  }
  out->append("<span class=\"tip\">");
  AppendHtmlText(out, tip);
  out->append("</span></td>");
}

std::string Percent(double share) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.1f%%", 100 * share);
  return buffer;
}

// One cause's count among a tag's cases; its share of them and the interval in words.
void AppendCauseCell(std::string* out, const std::string& tag, const nlohmann::json& cause,
                     const nlohmann::json& tag_failures) {
  const std::string id = JsonString(cause, "cause");
  const nlohmann::json counts = tag_failures.value("causes", nlohmann::json::array());
  const nlohmann::json* found = nullptr;
  for (const nlohmann::json& c : counts) {
    if (JsonString(c, "cause") == id) found = &c;
  }
  const int64_t count = found != nullptr ? found->value("count", int64_t{0}) : 0;
  if (count == 0) {
    out->append("<td class=\"cc none\">0</td>");
    return;
  }
  std::string tip = tag + " \xC2\xB7 " + JsonString(cause, "label") + ": " + std::to_string(count) +
                    " of " + std::to_string(tag_failures.value("cases", int64_t{0})) + " cases, " +
                    Percent(found->value("share", 0.0));
  const nlohmann::json interval = found->value("interval", nlohmann::json::array());
  if (interval.is_array() && interval.size() == 2 && interval[0].is_number() &&
      interval[1].is_number()) {
    tip += " (95% interval " + Percent(interval[0].get<double>()) + "\xE2\x80\x93" +
           Percent(interval[1].get<double>()) + ")";
  }
  out->append("<td tabindex=\"0\" class=\"cc\"><strong>" + std::to_string(count) +
              "</strong><span class=\"tip\">");
  AppendHtmlText(out, tip);
  out->append("</span></td>");
}

}  // namespace

void AppendTagGrid(std::string* out, const nlohmann::json& record, const nlohmann::json& failures) {
  const nlohmann::json aggregates = record.value("aggregates", nlohmann::json::object());
  const nlohmann::json tags = aggregates.value("tags", nlohmann::json::object());
  if (!tags.is_object() || tags.empty()) return;
  // Columns: the metrics any tag defines, in the run table's order.
  nlohmann::json seen = nlohmann::json::object();
  for (const auto& [tag, t] : tags.items()) {
    const nlohmann::json metrics = t.value("metrics", nlohmann::json::object());
    if (!metrics.is_object()) continue;
    for (const auto& [metric, m] : metrics.items()) seen[metric] = m;
  }
  const std::vector<std::string> columns = MetricOrder(seen);
  std::vector<nlohmann::json> causes;
  for (const nlohmann::json& c : failures.value("causes", nlohmann::json::array())) {
    if (c.is_object() && !JsonString(c, "cause").empty()) causes.push_back(c);
  }
  const nlohmann::json tag_failures = failures.value("tags", nlohmann::json::object());
  std::map<std::pair<std::string, std::string>, Limit> limits;
  for (const nlohmann::json& t : record.value("thresholds", nlohmann::json::array())) {
    if (!t.value("tag", nlohmann::json()).is_string()) continue;
    limits[{JsonString(t, "tag"), JsonString(t, "metric")}] = {
        t.value("limit", 0.0), t.value("held", false), JsonString(t, "kind") == "ceiling"};
  }
  out->append(
      "<section id=\"tags\"><h2>By tag</h2><p class=\"note\">Mean of each metric over the "
      "tag's cases, darker for higher; hover or focus a cell for its 95% interval and case "
      "count. \xE2\x9C\x97 marks a broken floor or ceiling, \xE2\x9C\x93 a held one. The first "
      "columns count the tag's failed cases by cause. A tag name filters the cases.</p><div "
      "class=\"scroll\"><table class=\"grid\"><colgroup>"
      "<col class=\"tg\"><col class=\"cn\">");
  for (size_t i = 0; i < causes.size() + columns.size(); ++i) out->append("<col>");
  out->append("</colgroup><thead><tr><th>tag</th><th class=\"num\">cases</th>");
  for (const nlohmann::json& cause : causes) {
    out->append("<th class=\"m c\"><span>");
    AppendHtmlText(out, JsonString(cause, "label"));
    out->append("</span></th>");
  }
  for (const std::string& metric : columns) {
    out->append("<th class=\"m\"><span>");
    AppendHtmlText(out, metric);
    out->append("</span></th>");
  }
  out->append("</tr></thead><tbody>");
  for (const auto& [tag, t] : tags.items()) {
    out->append("<tr><th scope=\"row\">");
    AppendTagLink(out, tag);
    out->append("</th><td class=\"num\">" + std::to_string(t.value("cases", int64_t{0})) + "</td>");
    const nlohmann::json failed = tag_failures.is_object() && tag_failures.contains(tag)
                                      ? tag_failures[tag]
                                      : nlohmann::json::object();
    for (const nlohmann::json& cause : causes) AppendCauseCell(out, tag, cause, failed);
    const nlohmann::json metrics = t.value("metrics", nlohmann::json::object());
    for (const std::string& metric : columns) {
      auto it = metrics.is_object() ? metrics.find(metric) : metrics.end();
      if (!metrics.is_object() || it == metrics.end() || !it->is_object()) {
        out->append("<td class=\"na\">\xE2\x80\x94</td>");
        continue;
      }
      auto limit = limits.find({tag, metric});
      AppendCell(out, tag, metric, *it, limit == limits.end() ? nullptr : &limit->second);
    }
    out->append("</tr>");
  }
  out->append("</tbody></table></div></section>");
}

}  // namespace plumb
