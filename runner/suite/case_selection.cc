#include "runner/suite/case_selection.h"

#include <fnmatch.h>

#include <algorithm>

namespace plumb {

bool ParseShard(const std::string& text, Shard* shard, std::string* error) {
  const size_t slash = text.find('/');
  try {
    if (slash == std::string::npos) throw std::invalid_argument("no slash");
    size_t used = 0;
    shard->index = std::stoi(text.substr(0, slash), &used);
    if (used != slash) throw std::invalid_argument("index");
    const std::string count = text.substr(slash + 1);
    shard->count = std::stoi(count, &used);
    if (used != count.size()) throw std::invalid_argument("count");
  } catch (const std::exception&) {
    *error =
        "--shard takes I/N, e.g. --shard 2/4 for the second of four shards; got '" + text + "'";
    return false;
  }
  if (shard->count < 1 || shard->index < 1 || shard->index > shard->count) {
    *error = "--shard " + text + ": I must be between 1 and N";
    return false;
  }
  return true;
}

uint64_t StableIdHash(const std::string& id) {
  uint64_t hash = 14695981039346656037ull;  // FNV-1a offset basis and prime (common practice)
  for (unsigned char c : id) {
    hash ^= c;
    hash *= 1099511628211ull;
  }
  return hash;
}

std::vector<size_t> SelectCases(const Suite& suite, const CaseSelection& selection) {
  std::vector<size_t> out;
  int64_t units = 0;
  auto has_tag = [&](const Case& c) {
    return std::any_of(selection.tags.begin(), selection.tags.end(), [&](const std::string& tag) {
      return std::find(c.tags.begin(), c.tags.end(), tag) != c.tags.end();
    });
  };
  auto id_matches = [&](const std::string& id) {
    return std::any_of(
        selection.id_globs.begin(), selection.id_globs.end(),
        [&](const std::string& glob) { return fnmatch(glob.c_str(), id.c_str(), 0) == 0; });
  };
  for (size_t i = 0; i < suite.cases.size();) {
    const Case& c = suite.cases[i];
    // The unit: a plain case, or every turn of a session (consecutive in the suite).
    size_t end = i + 1;
    if (c.turn > 0) {
      while (end < suite.cases.size() && suite.cases[end].turn > 0 &&
             suite.cases[end].session == c.session && suite.cases[end].turn > 1) {
        ++end;
      }
    }
    const size_t begin = i;
    i = end;
    const std::string& unit_id = c.turn > 0 ? c.session : c.id;
    if (!selection.tags.empty()) {
      bool tagged = false;
      for (size_t t = begin; t < end && !tagged; ++t) tagged = has_tag(suite.cases[t]);
      if (!tagged) continue;
    }
    if (!selection.id_globs.empty()) {
      bool matched = id_matches(unit_id);
      for (size_t t = begin; t < end && !matched && c.turn > 0; ++t) {
        matched = id_matches(suite.cases[t].id);
      }
      if (!matched) continue;
    }
    if (selection.shard.count > 1 &&
        StableIdHash(unit_id) % static_cast<uint64_t>(selection.shard.count) !=
            static_cast<uint64_t>(selection.shard.index - 1)) {
      continue;
    }
    if (selection.limit >= 0 && units >= selection.limit) break;
    ++units;
    for (size_t t = begin; t < end; ++t) out.push_back(t);
  }
  return out;
}

}  // namespace plumb
