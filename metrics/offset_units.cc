#include "metrics/offset_units.h"

#include <unicode/utf8.h>

#include <algorithm>

namespace plumb::metrics {

bool ParseOffsetUnit(std::string_view name, OffsetUnit* out) {
  if (name == "codepoints") {
    *out = OffsetUnit::kCodePoints;
  } else if (name == "utf8") {
    *out = OffsetUnit::kUtf8Bytes;
  } else if (name == "utf16") {
    *out = OffsetUnit::kUtf16Units;
  } else {
    return false;
  }
  return true;
}

const char* OffsetUnitName(OffsetUnit unit) {
  switch (unit) {
    case OffsetUnit::kCodePoints:
      return "codepoints";
    case OffsetUnit::kUtf8Bytes:
      return "utf8";
    case OffsetUnit::kUtf16Units:
      return "utf16";
  }
  return "codepoints";
}

CodePointIndex::CodePointIndex(std::string_view text) : bytes_(static_cast<int64_t>(text.size())) {
  const auto* s = reinterpret_cast<const uint8_t*>(text.data());
  const int64_t n = bytes_;
  if (std::all_of(s, s + n, [](uint8_t b) { return b < 0x80; })) {
    code_points_ = n;
    return;
  }
  ascii_ = false;
  starts_.assign(static_cast<size_t>((n + 63) / 64), 0);
  int64_t pos = 0;
  int64_t cp = 0;
  while (pos < n) {
    starts_[static_cast<size_t>(pos >> 6)] |= uint64_t{1} << (pos & 63);
    if (s[pos] < 0x80) {
      ++pos;
    } else {
      UChar32 c = 0;
      U8_NEXT(s, pos, n, c);
      if (c > 0xFFFF) {
        astral_utf16_.push_back(cp + static_cast<int64_t>(astral_cp_.size()));
        astral_cp_.push_back(cp);
      }
    }
    ++cp;
  }
  code_points_ = cp;
  rank_.resize(starts_.size());
  int64_t total = 0;
  for (size_t w = 0; w < starts_.size(); ++w) {
    rank_[w] = total;
    total += __builtin_popcountll(starts_[w]);
  }
}

bool CodePointIndex::IsBoundary(int64_t byte) const {
  if (byte < 0 || byte > bytes_) return false;
  if (ascii_ || byte == bytes_) return true;
  return (starts_[static_cast<size_t>(byte >> 6)] >> (byte & 63)) & 1;
}

int64_t CodePointIndex::StartsBefore(int64_t byte) const {
  const size_t w = static_cast<size_t>(byte >> 6);
  const uint64_t below = (uint64_t{1} << (byte & 63)) - 1;
  return rank_[w] + __builtin_popcountll(starts_[w] & below);
}

bool CodePointIndex::CodePointOfByte(int64_t byte, int64_t* cp) const {
  if (!IsBoundary(byte)) return false;
  if (ascii_) {
    *cp = byte;
  } else if (byte == bytes_) {
    *cp = code_points_;
  } else {
    *cp = StartsBefore(byte);
  }
  return true;
}

int64_t CodePointIndex::ByteOfCodePoint(int64_t cp) const {
  if (cp < 0 || cp > code_points_) return -1;
  if (ascii_) return cp;
  if (cp == code_points_) return bytes_;
  // The word holding the start of code point `cp` is the last one whose rank is <= cp.
  const auto it = std::upper_bound(rank_.begin(), rank_.end(), cp) - 1;
  const size_t w = static_cast<size_t>(it - rank_.begin());
  uint64_t word = starts_[w];
  for (int64_t skip = cp - *it; skip > 0; --skip) word &= word - 1;
  return static_cast<int64_t>(w) * 64 + __builtin_ctzll(word);
}

bool CodePointIndex::CodePointOfUtf16(int64_t unit, int64_t* cp) const {
  if (unit < 0 || unit > utf16_units()) return false;
  // `before` astral code points start below `unit`; if the last of them starts at unit - 1,
  // `unit` lands between its high and low surrogate.
  const auto before = static_cast<int64_t>(
      std::lower_bound(astral_utf16_.begin(), astral_utf16_.end(), unit) - astral_utf16_.begin());
  if (before > 0 && astral_utf16_[static_cast<size_t>(before - 1)] + 1 == unit) return false;
  *cp = unit - before;
  return true;
}

int64_t CodePointIndex::Utf16OfCodePoint(int64_t cp) const {
  if (cp < 0 || cp > code_points_) return -1;
  const auto before =
      std::lower_bound(astral_cp_.begin(), astral_cp_.end(), cp) - astral_cp_.begin();
  return cp + static_cast<int64_t>(before);
}

bool ConvertToCodePoints(const std::string& text, OffsetUnit unit, int64_t offset,
                         int64_t* cp_offset, std::string* error) {
  return ConvertToCodePoints(CodePointIndex(text), unit, offset, cp_offset, error);
}

bool ConvertToCodePoints(const CodePointIndex& index, OffsetUnit unit, int64_t offset,
                         int64_t* cp_offset, std::string* error) {
  const char* name = OffsetUnitName(unit);
  if (offset < 0) {
    *error = std::string(name) + " offset " + std::to_string(offset) + " is negative";
    return false;
  }
  const int64_t length = unit == OffsetUnit::kUtf8Bytes    ? index.bytes()
                         : unit == OffsetUnit::kUtf16Units ? index.utf16_units()
                                                           : index.code_points();
  if (offset > length) {
    const char* what = unit == OffsetUnit::kUtf8Bytes    ? "bytes"
                       : unit == OffsetUnit::kUtf16Units ? "UTF-16 units"
                                                         : "code points";
    *error = std::string(name) + " offset " + std::to_string(offset) +
             " is beyond the end of the text (" + std::to_string(length) + " " + what + ")";
    return false;
  }
  switch (unit) {
    case OffsetUnit::kCodePoints:
      *cp_offset = offset;
      return true;
    case OffsetUnit::kUtf8Bytes: {
      if (index.CodePointOfByte(offset, cp_offset)) return true;
      // A UTF-8 sequence is at most four bytes, so both neighbours are within three bytes.
      int64_t before = offset - 1;
      while (!index.IsBoundary(before)) --before;
      int64_t after = offset + 1;
      while (!index.IsBoundary(after)) ++after;
      *error = "utf8 offset " + std::to_string(offset) +
               " falls inside a UTF-8 sequence; the nearest code-point boundaries are bytes " +
               std::to_string(before) + " and " + std::to_string(after);
      return false;
    }
    case OffsetUnit::kUtf16Units:
      if (index.CodePointOfUtf16(offset, cp_offset)) return true;
      *error = "utf16 offset " + std::to_string(offset) +
               " splits a surrogate pair; the pair spans units " + std::to_string(offset - 1) +
               " and " + std::to_string(offset) + ", so use " + std::to_string(offset - 1) +
               " or " + std::to_string(offset + 1);
      return false;
  }
  return false;
}

}  // namespace plumb::metrics
