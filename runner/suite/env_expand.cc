#include "runner/suite/env_expand.h"

#include <cstdlib>

namespace plumb {
namespace {

bool IsNameStart(char c) { return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || c == '_'; }
bool IsNameChar(char c) { return IsNameStart(c) || (c >= '0' && c <= '9'); }

bool Expand(std::string_view templ, bool read_environment, ExpandedString* out,
            std::vector<std::string>* secrets, std::string* error) {
  out->value.clear();
  out->redacted.clear();
  size_t i = 0;
  while (i < templ.size()) {
    char c = templ[i];
    if (c != '$' || i + 1 == templ.size()) {
      out->value += c;
      out->redacted += c;
      ++i;
      continue;
    }
    char next = templ[i + 1];
    if (next == '$') {
      out->value += '$';
      out->redacted += "$$";
      i += 2;
      continue;
    }
    if (IsNameStart(next)) {
      size_t end = i + 1;
      while (end < templ.size() && IsNameChar(templ[end])) ++end;
      std::string name(templ.substr(i + 1, end - i - 1));
      *error = "'$" + name + "' is not expanded: write '${" + name + "}' to expand it, or '$$" +
               name + "' for a literal '$'";
      return false;
    }
    if (next != '{') {
      out->value += c;
      out->redacted += c;
      ++i;
      continue;
    }
    size_t close = templ.find('}', i + 2);
    if (close == std::string_view::npos) {
      *error = "unterminated '${' at character " + std::to_string(i + 1) + "; write '${NAME}'";
      return false;
    }
    std::string name(templ.substr(i + 2, close - i - 2));
    bool valid = !name.empty() && IsNameStart(name[0]);
    for (char n : name) valid = valid && IsNameChar(n);
    if (!valid) {
      *error = "'${" + name +
               "}' is not a valid variable reference; names are letters, digits "
               "and '_', not starting with a digit";
      return false;
    }
    i = close + 1;
    out->redacted += "***";
    if (!read_environment) continue;
    const char* value = std::getenv(name.c_str());
    if (value == nullptr) {
      *error = "environment variable '" + name + "' is not set";
      return false;
    }
    out->value += value;
    if (secrets != nullptr && *value != '\0') secrets->push_back(value);
  }
  if (!read_environment) out->value = std::string(templ);
  return true;
}

}  // namespace

bool ExpandEnv(std::string_view templ, ExpandedString* out, std::vector<std::string>* secrets,
               std::string* error) {
  return Expand(templ, /*read_environment=*/true, out, secrets, error);
}

bool RedactEnv(std::string_view templ, ExpandedString* out, std::string* error) {
  return Expand(templ, /*read_environment=*/false, out, nullptr, error);
}

}  // namespace plumb
