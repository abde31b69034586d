#include "runner/run/error_reasons.h"

#include <fmt/format.h>

#include <algorithm>
#include <fstream>
#include <nlohmann/json.hpp>
#include <unordered_map>

#include "metrics/utf8.h"

namespace plumb {

std::vector<ErrorReasonCount> CountErrorReasons(const std::string& journal_path, size_t limit) {
  std::vector<ErrorReasonCount> counts;
  std::unordered_map<std::string, size_t> index;
  std::ifstream in(journal_path, std::ios::binary);
  std::string line;
  while (std::getline(in, line)) {
    // Only errored records carry an error object; the others are skipped unparsed.
    if (line.find("\"error\":{") == std::string::npos) continue;
    const nlohmann::json record = nlohmann::json::parse(line, nullptr, /*allow_exceptions=*/false);
    if (!record.is_object()) continue;
    auto error = record.find("error");
    if (error == record.end() || !error->is_object()) continue;
    auto reason = error->find("reason");
    if (reason == error->end() || !reason->is_string()) continue;
    const std::string text = reason->get<std::string>();
    auto [at, added] = index.emplace(text, counts.size());
    if (added) counts.push_back({text, 0});
    ++counts[at->second].count;
  }
  std::stable_sort(
      counts.begin(), counts.end(),
      [](const ErrorReasonCount& a, const ErrorReasonCount& b) { return a.count > b.count; });
  if (counts.size() > limit) counts.resize(limit);
  return counts;
}

std::string FormatErrorReasons(const std::vector<ErrorReasonCount>& reasons, int64_t errored) {
  if (reasons.empty()) return std::string();
  std::string out = fmt::format("  errors by reason ({} errored):\n", errored);
  constexpr size_t kShown = 200;
  for (const ErrorReasonCount& r : reasons) {
    std::string shown;
    size_t pos = 0, count = 0;
    while (pos < r.reason.size() && count < kShown) {
      const char32_t cp = metrics::NextCodePoint(r.reason, &pos);
      ++count;
      if (cp < 0x20 || (cp >= 0x7F && cp < 0xA0)) {
        shown += '?';
      } else {
        metrics::AppendUtf8(cp, &shown);
      }
    }
    if (pos < r.reason.size()) shown += fmt::format(" (+{} more bytes)", r.reason.size() - pos);
    out += fmt::format("  {:>6}  {}\n", r.count, shown);
  }
  return out;
}

}  // namespace plumb
