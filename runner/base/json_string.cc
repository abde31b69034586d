#include "runner/base/json_string.h"

#include <cstdint>

#include "runner/base/code_points.h"
#include "runner/base/plain_ascii.h"

namespace plumb {
namespace {

bool Hex4(std::string_view text, size_t* at, uint32_t* out) {
  if (*at + 4 > text.size()) return false;
  uint32_t value = 0;
  for (int k = 0; k < 4; ++k) {
    const char c = text[(*at)++];
    value <<= 4;
    if (c >= '0' && c <= '9') {
      value |= uint32_t(c - '0');
    } else if (c >= 'a' && c <= 'f') {
      value |= uint32_t(c - 'a' + 10);
    } else if (c >= 'A' && c <= 'F') {
      value |= uint32_t(c - 'A' + 10);
    } else {
      return false;
    }
  }
  *out = value;
  return true;
}

// A character outside the BMP comes as a UTF-16 surrogate pair; like nlohmann, a surrogate that
// is not half of such a pair is refused rather than passed on as ill-formed UTF-8.
bool UnicodeEscape(std::string_view text, size_t* at, std::string* out) {
  uint32_t unit;
  if (!Hex4(text, at, &unit) || (unit >= 0xDC00 && unit <= 0xDFFF)) return false;
  if (unit >= 0xD800 && unit <= 0xDBFF) {
    uint32_t low;
    if (text.substr(*at, 2) != "\\u") return false;
    *at += 2;
    if (!Hex4(text, at, &low) || low < 0xDC00 || low > 0xDFFF) return false;
    unit = 0x10000 + ((unit - 0xD800) << 10) + (low - 0xDC00);
  }
  AppendUtf8(char32_t(unit), out);
  return true;
}

bool Escape(std::string_view text, size_t* at, std::string* out) {
  ++*at;  // '\'
  if (*at >= text.size()) return false;
  const char escape = text[(*at)++];
  switch (escape) {
    case '"':
    case '\\':
    case '/':
      *out += escape;
      return true;
    case 'b':
      *out += '\b';
      return true;
    case 'f':
      *out += '\f';
      return true;
    case 'n':
      *out += '\n';
      return true;
    case 'r':
      *out += '\r';
      return true;
    case 't':
      *out += '\t';
      return true;
    case 'u':
      return UnicodeEscape(text, at, out);
    default:
      return false;
  }
}

}  // namespace

bool ReadJsonString(std::string_view text, size_t* at, std::string* out,
                    size_t* continuation_bytes) {
  size_t i = *at + 1;  // past '"'
  size_t run = i;      // bytes that stand for themselves are appended a run at a time
  while (true) {
    i += PlainAsciiRun(text, i);
    if (i >= text.size()) return false;  // no closing quote
    const unsigned char c = static_cast<unsigned char>(text[i]);
    if (c == '"' || c == '\\') {
      out->append(text.data() + run, i - run);
      if (c == '"') {
        *at = i + 1;
        return true;
      }
      if (!Escape(text, &i, out)) return false;
      run = i;
    } else if (c < 0x20) {
      return false;  // a control character must be escaped
    } else {
      const size_t start = i;
      char32_t code_point;
      if (!DecodeCodePoint(text, &i, &code_point)) return false;
      if (continuation_bytes != nullptr) *continuation_bytes += i - start - 1;
    }
  }
}

}  // namespace plumb
