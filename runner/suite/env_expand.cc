#include "runner/suite/env_expand.h"

#include <cstdlib>

namespace plumb {
namespace {

bool IsNameStart(char c) { return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || c == '_'; }
bool IsNameChar(char c) { return IsNameStart(c) || (c >= '0' && c <= '9'); }

// RFC 3986 §2.3 unreserved characters: the only ones a URL carries as themselves anywhere.
bool IsUnreserved(char c) { return IsNameChar(c) || c == '-' || c == '.' || c == '~'; }

std::string PercentEncoded(std::string_view value) {
  static const char kHex[] = "0123456789ABCDEF";
  std::string out;
  for (char c : value) {
    if (IsUnreserved(c)) {
      out += c;
      continue;
    }
    const unsigned char byte = static_cast<unsigned char>(c);
    out += '%';
    out += kHex[byte >> 4];
    out += kHex[byte & 15];
  }
  return out;
}

/// Where in a URL template the text before `at` ends: the scheme, the host and port, or
/// anything a value can be percent-encoded into (user info, path, query, fragment).
enum class UrlPart { kScheme, kHost, kEncoded };

UrlPart PartAt(std::string_view templ, size_t at) {
  const size_t scheme_end = templ.find("://");
  if (scheme_end == std::string_view::npos || at < scheme_end) return UrlPart::kScheme;
  const size_t authority = scheme_end + 3;
  size_t authority_end = templ.find_first_of("/?#", authority);
  if (authority_end == std::string_view::npos) authority_end = templ.size();
  if (at >= authority_end) return UrlPart::kEncoded;
  // Before an '@' of the authority is user info, which percent-encoding covers.
  const size_t userinfo_end = templ.substr(0, authority_end).rfind('@');
  return userinfo_end != std::string_view::npos && at < userinfo_end ? UrlPart::kEncoded
                                                                     : UrlPart::kHost;
}

/// The value of `${name}` as it goes into the URL at `part`, or false with a sentence.
bool UrlValue(UrlPart part, const std::string& name, std::string_view value, std::string* out,
              std::string* error) {
  if (part == UrlPart::kEncoded) {
    *out = PercentEncoded(value);
    return true;
  }
  for (char c : value) {
    const bool fits =
        part == UrlPart::kScheme
            ? IsNameChar(c) || c == '+' || c == '-' || c == '.' || c == ':' || c == '/'
            : IsUnreserved(c) || c == ':' || c == '[' || c == ']' || c == '%';
    if (!fits) {
      *error = "the value of '" + name + "' goes into the URL's " +
               (part == UrlPart::kScheme ? "scheme" : "host and port") +
               " and holds a character that cannot be there (byte " +
               std::to_string(static_cast<unsigned char>(c)) +
               "); only values in the path, query or user info are percent-encoded, so "
               "give the host as letters, digits, '.', '-' and ':' (port)";
      return false;
    }
  }
  *out = std::string(value);
  return true;
}

bool Expand(std::string_view templ, bool read_environment, bool url, ExpandedString* out,
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
    const size_t reference = i;
    i = close + 1;
    out->redacted += "***";
    if (!read_environment) continue;
    const char* value = std::getenv(name.c_str());
    if (value == nullptr) {
      *error = "environment variable '" + name + "' is not set";
      return false;
    }
    std::string text = value;
    if (url && !UrlValue(PartAt(templ, reference), name, value, &text, error)) return false;
    out->value += text;
    if (secrets != nullptr && *value != '\0') {
      secrets->push_back(value);
      if (text != value) secrets->push_back(text);  // as the URL carries it, echoed or logged
    }
  }
  if (!read_environment) out->value = std::string(templ);
  return true;
}

}  // namespace

bool ExpandEnv(std::string_view templ, ExpandedString* out, std::vector<std::string>* secrets,
               std::string* error) {
  return Expand(templ, /*read_environment=*/true, /*url=*/false, out, secrets, error);
}

bool ExpandEnvInUrl(std::string_view templ, ExpandedString* out, std::vector<std::string>* secrets,
                    std::string* error) {
  return Expand(templ, /*read_environment=*/true, /*url=*/true, out, secrets, error);
}

bool RedactEnv(std::string_view templ, ExpandedString* out, std::string* error) {
  return Expand(templ, /*read_environment=*/false, /*url=*/false, out, nullptr, error);
}

}  // namespace plumb
