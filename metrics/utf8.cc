#include "metrics/utf8.h"

namespace plumb::metrics {

namespace {

bool IsTrail(unsigned char b) { return (b & 0xC0) == 0x80; }

}  // namespace

char32_t NextCodePoint(std::string_view text, size_t* pos) {
  const size_t n = text.size();
  size_t i = *pos;
  const unsigned char lead = static_cast<unsigned char>(text[i++]);
  if (lead < 0x80) {
    *pos = i;
    return lead;
  }
  // Allowed range of the first trail byte per lead byte (Unicode Table 3-7); later trail bytes
  // are always 80..BF. A byte outside the range ends the invalid subsequence before it.
  int trails;
  unsigned char lo = 0x80, hi = 0xBF;
  char32_t cp;
  if (lead >= 0xC2 && lead <= 0xDF) {
    trails = 1;
    cp = lead & 0x1F;
  } else if (lead >= 0xE0 && lead <= 0xEF) {
    trails = 2;
    cp = lead & 0x0F;
    if (lead == 0xE0) lo = 0xA0;
    if (lead == 0xED) hi = 0x9F;
  } else if (lead >= 0xF0 && lead <= 0xF4) {
    trails = 3;
    cp = lead & 0x07;
    if (lead == 0xF0) lo = 0x90;
    if (lead == 0xF4) hi = 0x8F;
  } else {
    *pos = i;
    return kReplacementCharacter;
  }
  for (int k = 0; k < trails; ++k) {
    if (i >= n) {
      *pos = i;
      return kReplacementCharacter;
    }
    const unsigned char b = static_cast<unsigned char>(text[i]);
    const bool ok = k == 0 ? (b >= lo && b <= hi) : IsTrail(b);
    if (!ok) {
      *pos = i;
      return kReplacementCharacter;
    }
    cp = (cp << 6) | (b & 0x3F);
    ++i;
  }
  *pos = i;
  return cp;
}

std::u32string DecodeUtf8(std::string_view text) {
  std::u32string out;
  out.reserve(text.size());
  size_t pos = 0;
  while (pos < text.size()) out.push_back(NextCodePoint(text, &pos));
  return out;
}

void AppendUtf8(char32_t cp, std::string* out) {
  if (cp >= 0xD800 && (cp <= 0xDFFF || cp > 0x10FFFF)) cp = kReplacementCharacter;
  if (cp < 0x80) {
    out->push_back(static_cast<char>(cp));
  } else if (cp < 0x800) {
    out->push_back(static_cast<char>(0xC0 | (cp >> 6)));
    out->push_back(static_cast<char>(0x80 | (cp & 0x3F)));
  } else if (cp < 0x10000) {
    out->push_back(static_cast<char>(0xE0 | (cp >> 12)));
    out->push_back(static_cast<char>(0x80 | ((cp >> 6) & 0x3F)));
    out->push_back(static_cast<char>(0x80 | (cp & 0x3F)));
  } else {
    out->push_back(static_cast<char>(0xF0 | (cp >> 18)));
    out->push_back(static_cast<char>(0x80 | ((cp >> 12) & 0x3F)));
    out->push_back(static_cast<char>(0x80 | ((cp >> 6) & 0x3F)));
    out->push_back(static_cast<char>(0x80 | (cp & 0x3F)));
  }
}

std::string EncodeUtf8(std::u32string_view code_points) {
  std::string out;
  out.reserve(code_points.size());
  for (char32_t cp : code_points) AppendUtf8(cp, &out);
  return out;
}

size_t CodePointCount(std::string_view text) {
  size_t count = 0;
  size_t pos = 0;
  while (pos < text.size()) {
    NextCodePoint(text, &pos);
    ++count;
  }
  return count;
}

size_t ByteOffsetAt(std::string_view text, size_t cp_offset) {
  size_t pos = 0;
  for (size_t k = 0; k < cp_offset; ++k) {
    if (pos >= text.size()) return std::string_view::npos;
    NextCodePoint(text, &pos);
  }
  return pos;
}

size_t CodePointOffsetAt(std::string_view text, size_t byte_offset) {
  size_t count = 0;
  size_t pos = 0;
  while (pos < text.size()) {
    NextCodePoint(text, &pos);
    if (pos > byte_offset) return count;
    ++count;
  }
  return count;
}

bool CodePointSubstr(std::string_view text, size_t start, size_t end, std::string_view* out) {
  if (start > end) return false;
  const size_t begin_byte = ByteOffsetAt(text, start);
  if (begin_byte == std::string_view::npos) return false;
  size_t pos = begin_byte;
  for (size_t k = start; k < end; ++k) {
    if (pos >= text.size()) return false;
    NextCodePoint(text, &pos);
  }
  *out = text.substr(begin_byte, pos - begin_byte);
  return true;
}

}  // namespace plumb::metrics
