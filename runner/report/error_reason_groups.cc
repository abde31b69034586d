#include "runner/report/error_reason_groups.h"

#include <algorithm>
#include <map>

namespace plumb {
namespace {

// The text with every run of ASCII digits replaced by one '#'.
std::string ReasonKey(const std::string& text) {
  std::string key;
  key.reserve(text.size());
  for (size_t i = 0; i < text.size(); ++i) {
    const bool digit = text[i] >= '0' && text[i] <= '9';
    if (!digit) {
      key.push_back(text[i]);
    } else if (i == 0 || !(text[i - 1] >= '0' && text[i - 1] <= '9')) {
      key.push_back('#');
    }
  }
  return key;
}

}  // namespace

std::vector<ErrorReasonGroup> GroupErrorReasons(const std::vector<std::string>& errors) {
  std::vector<ErrorReasonGroup> groups;
  std::vector<std::map<std::string, size_t>> texts;  // per group: exact text -> count
  std::map<std::string, size_t> by_key;
  for (size_t i = 0; i < errors.size(); ++i) {
    const std::string text = errors[i].empty() ? "no reason recorded" : errors[i];
    auto [it, fresh] = by_key.emplace(ReasonKey(text), groups.size());
    if (fresh) {
      groups.emplace_back();
      texts.emplace_back();
    }
    groups[it->second].members.push_back(i);
    texts[it->second][text] += 1;
  }
  for (size_t g = 0; g < groups.size(); ++g) {
    size_t best = 0;
    for (const auto& [text, count] : texts[g]) {
      // Most frequent exact text; among equals, the one that appears first in the input.
      const bool first_seen = count == best && errors[groups[g].members.front()] == text;
      if (count > best || first_seen) {
        best = count;
        groups[g].reason = text;
      }
    }
    groups[g].variants = texts[g].size();
  }
  std::stable_sort(groups.begin(), groups.end(),
                   [](const ErrorReasonGroup& a, const ErrorReasonGroup& b) {
                     return a.members.size() > b.members.size();
                   });
  return groups;
}

}  // namespace plumb
