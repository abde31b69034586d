#include "runner/base/code_points.h"

#include <cstdint>
#include <cstring>
#include <string>

namespace plumb {

bool DecodeCodePoint(std::string_view text, size_t* i, char32_t* code_point) {
  size_t at = *i;
  if (at >= text.size()) return false;
  auto byte = [&](size_t k) { return static_cast<unsigned char>(text[k]); };
  unsigned char lead = byte(at);
  if (lead < 0x80) {
    *code_point = lead;
    *i = at + 1;
    return true;
  }
  // RFC 3629 §4: the second byte's range depends on the lead byte, which rules out overlong
  // forms, surrogates and values above U+10FFFF.
  int length;
  unsigned char low = 0x80, high = 0xBF;
  char32_t value;
  if (lead >= 0xC2 && lead <= 0xDF) {
    length = 2;
    value = lead & 0x1F;
  } else if (lead >= 0xE0 && lead <= 0xEF) {
    length = 3;
    value = lead & 0x0F;
    if (lead == 0xE0) low = 0xA0;
    if (lead == 0xED) high = 0x9F;
  } else if (lead >= 0xF0 && lead <= 0xF4) {
    length = 4;
    value = lead & 0x07;
    if (lead == 0xF0) low = 0x90;
    if (lead == 0xF4) high = 0x8F;
  } else {
    return false;
  }
  if (at + length > text.size()) return false;
  for (int k = 1; k < length; ++k) {
    unsigned char b = byte(at + k);
    if (k == 1 ? (b < low || b > high) : (b < 0x80 || b > 0xBF)) return false;
    value = (value << 6) | (b & 0x3F);
  }
  *code_point = value;
  *i = at + length;
  return true;
}

bool IsValidUtf8(std::string_view text, size_t* bad_offset) {
  size_t i = 0;
  char32_t code_point;
  while (i < text.size()) {
    // Most suite text is ASCII: skip it eight bytes at a time (no byte has its high bit set).
    uint64_t word;
    while (i + 8 <= text.size() && (std::memcpy(&word, text.data() + i, sizeof word),
                                    (word & 0x8080808080808080ull) == 0)) {
      i += 8;
    }
    if (i >= text.size()) break;
    if (!DecodeCodePoint(text, &i, &code_point)) {
      *bad_offset = i;
      return false;
    }
  }
  return true;
}

int64_t CountCodePoints(std::string_view text) {
  int64_t count = 0;
  for (unsigned char c : text) count += (c & 0xC0) != 0x80;
  return count;
}

size_t ByteOffsetOfCodePoint(std::string_view text, int64_t index) {
  size_t i = 0;
  char32_t code_point;
  for (int64_t n = 0; n < index && i < text.size(); ++n) {
    if (!DecodeCodePoint(text, &i, &code_point)) ++i;
  }
  return i;
}

void AppendUtf8(char32_t c, std::string* out) {
  if (c < 0x80) {
    *out += char(c);
  } else if (c < 0x800) {
    *out += char(0xC0 | (c >> 6));
    *out += char(0x80 | (c & 0x3F));
  } else if (c < 0x10000) {
    *out += char(0xE0 | (c >> 12));
    *out += char(0x80 | ((c >> 6) & 0x3F));
    *out += char(0x80 | (c & 0x3F));
  } else {
    *out += char(0xF0 | (c >> 18));
    *out += char(0x80 | ((c >> 12) & 0x3F));
    *out += char(0x80 | ((c >> 6) & 0x3F));
    *out += char(0x80 | (c & 0x3F));
  }
}

}  // namespace plumb
