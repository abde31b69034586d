#include "runner/report/html_escape.h"

#include "runner/base/code_points.h"

namespace plumb {
namespace {

constexpr std::string_view kReplacement = "\xEF\xBF\xBD";  // U+FFFD

// Controls other than tab, line feed and carriage return are parse errors in HTML text, and
// U+0000 is dropped or replaced differently by different parsers: show them all as U+FFFD.
bool IsDisallowedControl(char32_t cp) {
  if (cp == '\t' || cp == '\n' || cp == '\r') return false;
  return cp < 0x20 || (cp >= 0x7F && cp <= 0x9F);
}

// The explicit bidirectional formatting characters of UAX #9 (§2, Table 1): embeddings and
// overrides U+202A..U+202E, isolates U+2066..U+2069. In pipeline text they reorder what the
// reader sees (an answer can appear to say what it does not), so the page shows them as text.
// The implicit marks (U+200E, U+200F, U+061C) reorder nothing but neutral neighbours and stay.
bool IsBidiControl(char32_t cp) {
  return (cp >= 0x202A && cp <= 0x202E) || (cp >= 0x2066 && cp <= 0x2069);
}

// Length of the ill-formed sequence at text[i] that becomes one U+FFFD: the "maximal subpart"
// (Unicode §3.9, U+FFFD substitution), the rule of the WHATWG UTF-8 decoder, so the page shows
// ill-formed input the way a browser would have decoded it. Called only where DecodeCodePoint
// failed, so a complete well-formed sequence never starts at i.
size_t MaximalSubpart(std::string_view text, size_t i) {
  const unsigned char lead = static_cast<unsigned char>(text[i]);
  int trail = 0;
  unsigned char low = 0x80, high = 0xBF;  // allowed range of the first trail byte
  if (lead >= 0xC2 && lead <= 0xDF) {
    trail = 1;
  } else if (lead >= 0xE0 && lead <= 0xEF) {
    trail = 2;
    if (lead == 0xE0) low = 0xA0;
    if (lead == 0xED) high = 0x9F;
  } else if (lead >= 0xF0 && lead <= 0xF4) {
    trail = 3;
    if (lead == 0xF0) low = 0x90;
    if (lead == 0xF4) high = 0x8F;
  } else {
    return 1;
  }
  size_t j = i + 1;
  for (int k = 0; k < trail && j < text.size(); ++k, ++j) {
    const unsigned char b = static_cast<unsigned char>(text[j]);
    if (b < (k == 0 ? low : 0x80) || b > (k == 0 ? high : 0xBF)) break;
  }
  return j - i;
}

void Append(std::string* out, std::string_view text, bool attribute) {
  out->reserve(out->size() + text.size());
  size_t i = 0;
  while (i < text.size()) {
    const unsigned char byte = static_cast<unsigned char>(text[i]);
    if (byte < 0x80) {
      switch (byte) {
        case '&':
          out->append("&amp;");
          break;
        case '<':
          out->append("&lt;");
          break;
        case '>':
          out->append("&gt;");
          break;
        case '"':
          if (attribute) {
            out->append("&quot;");
          } else {
            out->push_back('"');
          }
          break;
        case '\'':
          if (attribute) {
            out->append("&#39;");
          } else {
            out->push_back('\'');
          }
          break;
        default:
          if (IsDisallowedControl(byte)) {
            out->append(kReplacement);
          } else {
            out->push_back(static_cast<char>(byte));
          }
      }
      ++i;
      continue;
    }
    const size_t begin = i;
    char32_t cp = 0;
    if (!DecodeCodePoint(text, &i, &cp)) {
      out->append(kReplacement);
      i += MaximalSubpart(text, i);
      continue;
    }
    if (IsDisallowedControl(cp)) {
      out->append(kReplacement);
    } else if (IsBidiControl(cp)) {
      static const char kHex[] = "0123456789ABCDEF";
      out->append("[U+");
      for (int shift = 12; shift >= 0; shift -= 4) out->push_back(kHex[(cp >> shift) & 15]);
      out->push_back(']');
    } else {
      out->append(text.substr(begin, i - begin));
    }
  }
}

}  // namespace

void AppendHtmlText(std::string* out, std::string_view text) { Append(out, text, false); }

void AppendHtmlAttribute(std::string* out, std::string_view text) { Append(out, text, true); }

std::string EscapeHtmlText(std::string_view text) {
  std::string out;
  AppendHtmlText(&out, text);
  return out;
}

std::string EscapeHtmlAttribute(std::string_view text) {
  std::string out;
  AppendHtmlAttribute(&out, text);
  return out;
}

}  // namespace plumb
