#include "runner/report/html_report_parts.h"

#include <algorithm>
#include <cstdio>

#include "runner/report/html_escape.h"

namespace plumb {

std::string FormatScore(double value) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.3f", value);
  return buffer;
}

std::string FormatSignedScore(double value) {
  std::string s = FormatScore(value);
  if (value > 0) s = "+" + s;
  if (value < 0 && s[0] == '-') s = "\xE2\x88\x92" + s.substr(1);
  return s;
}

std::string FormatNumber(double value) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.10g", value);
  return buffer;
}

std::string FormatMilliseconds(double ms) {
  char buffer[32];
  if (ms < 10) {
    std::snprintf(buffer, sizeof buffer, "%.2f ms", ms);
  } else if (ms < 10000) {
    std::snprintf(buffer, sizeof buffer, "%.0f ms", ms);
  } else {
    std::snprintf(buffer, sizeof buffer, "%.1f s", ms / 1000);
  }
  return buffer;
}

std::string JsonString(const nlohmann::json& object, const char* key) {
  if (!object.is_object()) return std::string();
  auto it = object.find(key);
  return it != object.end() && it->is_string() ? it->get<std::string>() : std::string();
}

std::optional<double> JsonNumber(const nlohmann::json& object, const char* key) {
  if (!object.is_object()) return std::nullopt;
  auto it = object.find(key);
  if (it == object.end() || !it->is_number()) return std::nullopt;
  return it->get<double>();
}

std::vector<std::string> JsonStrings(const nlohmann::json& object, const char* key) {
  std::vector<std::string> out;
  if (!object.is_object()) return out;
  auto it = object.find(key);
  if (it == object.end() || !it->is_array()) return out;
  for (const nlohmann::json& item : *it) {
    if (item.is_string()) out.push_back(item.get<std::string>());
  }
  return out;
}

std::string JsonText(const nlohmann::json& value) {
  return value.dump(-1, ' ', false, nlohmann::json::error_handler_t::replace);
}

std::string ScoresAttribute(const MetricValues& scores) {
  std::string out;
  char buffer[32];
  for (const auto& [metric, value] : scores) {
    if (!out.empty()) out.push_back(' ');
    std::snprintf(buffer, sizeof buffer, "%.6g", value);
    out += PercentEncode(metric) + " " + buffer;
  }
  return out;
}

std::string TagsAttribute(const std::vector<std::string>& tags) {
  std::string out;
  for (const std::string& tag : tags) {
    if (!out.empty()) out.push_back(' ');
    out += PercentEncode(tag);
  }
  return out;
}

std::vector<std::string> MetricOrder(const nlohmann::json& metrics) {
  std::vector<std::string> order = {"correct",       "exact_match",   "token_f1",
                                    "token_recall",  "covers_gold",   "knowledge_f1",
                                    "cited_support", "pattern_match", "number_match"};
  if (!metrics.is_object()) return {};
  std::vector<std::string> grades;
  for (const auto& [metric, value] : metrics.items()) {
    (void)value;
    if (metric.rfind("grade.", 0) == 0) grades.push_back(metric);
  }
  std::sort(grades.begin(), grades.end());
  order.insert(order.end(), grades.begin(), grades.end());
  order.insert(order.end(), {"citation_precision", "citation_recall", "citation_f1"});
  std::vector<std::pair<int, std::string>> recall_at;
  std::vector<std::string> others;
  const std::vector<std::string> tail = {"mrr", "pass_rate", "abstain_precision", "abstain_recall",
                                         "error_rate"};
  if (!metrics.is_object()) return {};
  for (const auto& [metric, value] : metrics.items()) {
    (void)value;
    if (metric.rfind("recall@", 0) == 0) {
      recall_at.push_back({std::atoi(metric.c_str() + 7), metric});
    } else if (std::find(order.begin(), order.end(), metric) == order.end() &&
               std::find(tail.begin(), tail.end(), metric) == tail.end()) {
      others.push_back(metric);
    }
  }
  std::sort(recall_at.begin(), recall_at.end());
  for (const auto& [k, metric] : recall_at) order.push_back(metric);
  order.insert(order.end(), tail.begin(), tail.end());
  order.insert(order.end(), others.begin(), others.end());
  std::vector<std::string> out;
  for (const std::string& metric : order) {
    if (metrics.contains(metric)) out.push_back(metric);
  }
  return out;
}

std::string PercentEncode(const std::string& text) {
  static const char kHex[] = "0123456789ABCDEF";
  std::string out;
  for (unsigned char c : text) {
    if ((c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || (c >= '0' && c <= '9') || c == '-' ||
        c == '.' || c == '_' || c == '~') {
      out.push_back(static_cast<char>(c));
    } else {
      out.push_back('%');
      out.push_back(kHex[c >> 4]);
      out.push_back(kHex[c & 15]);
    }
  }
  return out;
}

void AppendFact(std::string* out, const char* term, const std::string& value) {
  out->append("<dt>");
  out->append(term);
  out->append("</dt><dd>");
  AppendHtmlText(out, value);
  out->append("</dd>");
}

void AppendLabels(std::string* out, const nlohmann::json& labels) {
  if (!labels.is_object() || labels.empty()) {
    out->append("none");
    return;
  }
  for (const auto& [key, value] : labels.items()) {
    out->append("<code>");
    AppendHtmlText(out, key);
    out->append("=");
    AppendHtmlText(out, value.is_string() ? value.get<std::string>() : JsonText(value));
    out->append("</code>");
  }
}

void AppendTagLink(std::string* out, const std::string& tag) {
  out->append("<a href=\"#tag=");
  AppendHtmlAttribute(out, PercentEncode(tag));
  out->append("\">");
  AppendHtmlText(out, tag);
  out->append("</a>");
}

}  // namespace plumb
