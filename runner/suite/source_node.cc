#include "runner/suite/source_node.h"

#include <cerrno>
#include <cmath>
#include <cstdlib>

namespace plumb {
namespace {

// YAML 1.2.2 §10.3.2 (core schema) tag resolution for plain scalars.
bool IsNullWord(const std::string& s) {
  return s.empty() || s == "~" || s == "null" || s == "Null" || s == "NULL";
}

bool IsIntText(const std::string& s) {
  size_t i = (!s.empty() && (s[0] == '-' || s[0] == '+')) ? 1 : 0;
  if (i == s.size()) return false;
  for (; i < s.size(); ++i) {
    if (s[i] < '0' || s[i] > '9') return false;
  }
  return true;
}

bool IsFloatText(const std::string& s) {
  // [-+]? ( \. [0-9]+ | [0-9]+ ( \. [0-9]* )? ) ( [eE] [-+]? [0-9]+ )?
  size_t i = 0, n = s.size();
  auto digits = [&]() {
    size_t start = i;
    while (i < n && s[i] >= '0' && s[i] <= '9') ++i;
    return i - start;
  };
  if (i < n && (s[i] == '-' || s[i] == '+')) ++i;
  size_t whole = digits();
  if (i < n && s[i] == '.') {
    ++i;
    size_t fraction = digits();
    if (whole == 0 && fraction == 0) return false;
  } else if (whole == 0) {
    return false;
  }
  if (i < n && (s[i] == 'e' || s[i] == 'E')) {
    ++i;
    if (i < n && (s[i] == '-' || s[i] == '+')) ++i;
    if (digits() == 0) return false;
  }
  return i == n;
}

bool IsSpecialFloat(const std::string& s) {
  static const char* const kWords[] = {".inf",  ".Inf",  ".INF",  "+.inf", "+.Inf", "+.INF",
                                       "-.inf", "-.Inf", "-.INF", ".nan",  ".NaN",  ".NAN"};
  for (const char* word : kWords) {
    if (s == word) return true;
  }
  return false;
}

bool IsBoolText(const std::string& s, bool* value) {
  if (s == "true" || s == "True" || s == "TRUE") {
    *value = true;
    return true;
  }
  if (s == "false" || s == "False" || s == "FALSE") {
    *value = false;
    return true;
  }
  return false;
}

}  // namespace

std::string DescribeNode(const SourceNode& node) {
  switch (node.kind) {
    case SourceNode::Kind::kNull:
      return "null";
    case SourceNode::Kind::kSequence:
      return "a list";
    case SourceNode::Kind::kMapping:
      return "a mapping";
    case SourceNode::Kind::kScalar:
      break;
  }
  if (node.quoted) return "a string";
  bool flag;
  if (IsBoolText(node.scalar, &flag)) return "a boolean";
  if (IsIntText(node.scalar) || IsFloatText(node.scalar) || IsSpecialFloat(node.scalar)) {
    return "a number";
  }
  if (IsNullWord(node.scalar)) return "null";
  return "a string";
}

bool ScalarAsInt(const SourceNode& node, int64_t* out) {
  if (!node.IsScalar() || node.quoted || !IsIntText(node.scalar)) return false;
  errno = 0;
  char* end = nullptr;
  long long value = std::strtoll(node.scalar.c_str(), &end, 10);
  if (errno == ERANGE) return false;
  *out = value;
  return true;
}

bool ScalarAsNumber(const SourceNode& node, double* out) {
  if (!node.IsScalar() || node.quoted) return false;
  if (!IsIntText(node.scalar) && !IsFloatText(node.scalar)) return false;
  double value = std::strtod(node.scalar.c_str(), nullptr);
  if (!std::isfinite(value)) return false;
  *out = value;
  return true;
}

bool ScalarAsBool(const SourceNode& node, bool* out) {
  return node.IsScalar() && !node.quoted && IsBoolText(node.scalar, out);
}

bool ScalarAsString(const SourceNode& node, std::string* out) {
  if (!node.IsScalar()) return false;
  *out = node.scalar;
  return true;
}

nlohmann::json SourceNodeToJson(const SourceNode& node) {
  switch (node.kind) {
    case SourceNode::Kind::kNull:
      return nullptr;
    case SourceNode::Kind::kSequence: {
      nlohmann::json out = nlohmann::json::array();
      for (const SourceNode& item : node.items) out.push_back(SourceNodeToJson(item));
      return out;
    }
    case SourceNode::Kind::kMapping: {
      nlohmann::json out = nlohmann::json::object();
      for (const SourceEntry& entry : node.entries) {
        std::string key;
        if (!ScalarAsString(entry.key, &key)) key = SourceNodeToJson(entry.key).dump();
        out[key] = SourceNodeToJson(entry.value);
      }
      return out;
    }
    case SourceNode::Kind::kScalar:
      break;
  }
  if (node.quoted) return node.scalar;
  const std::string& s = node.scalar;
  bool flag;
  if (IsBoolText(s, &flag)) return flag;
  if (IsNullWord(s)) return nullptr;
  int64_t integer;
  if (ScalarAsInt(node, &integer)) return integer;
  if (IsIntText(s) || IsFloatText(s)) return std::strtod(s.c_str(), nullptr);
  // Everything else, .inf and .nan included (JSON has neither), stays the text written.
  return s;
}

}  // namespace plumb
