#ifndef PLUMB_METRICS_OFFSET_UNITS_H_
#define PLUMB_METRICS_OFFSET_UNITS_H_

/// Offset units and the conversions between them. Plumbline's offsets are Unicode code points
/// into a document's UTF-8 text (SPEC §4); pipelines may report UTF-8 byte or UTF-16 code-unit
/// offsets instead, and the runner converts those here before scoring. CodePointIndex is the
/// per-document table behind every conversion, built once and shared by the quote locator and
/// the citation and retrieval metrics.
///
/// Text is decoded as ICU's U8_NEXT decodes it: each ill-formed UTF-8 subsequence (a "maximal
/// subpart", Unicode §3.9) counts as one code point, U+FFFD, which is also how Python's
/// bytes.decode(errors="replace") and metrics/normalize.h see it. So every byte string has
/// well-defined code-point offsets and no input is rejected.

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace plumb::metrics {

enum class OffsetUnit {
  kCodePoints,  // Unicode code points (Plumbline's own unit; Python str indices)
  kUtf8Bytes,   // bytes of the UTF-8 text
  kUtf16Units,  // UTF-16 code units (JavaScript, Java and .NET string indices)
};

/// Parses "codepoints" | "utf8" | "utf16"; returns false for anything else.
bool ParseOffsetUnit(std::string_view name, OffsetUnit* out);
const char* OffsetUnitName(OffsetUnit unit);

/// Maps offsets in one document between UTF-8 bytes, UTF-16 code units and code points after a
/// single pass over its text. Byte -> code point is O(1); code point -> byte is O(log n); UTF-16
/// conversions are O(log s) with s the number of code points outside the BMP. An ASCII text
/// costs no memory beyond the object; otherwise about n/4 bytes for an n-byte text.
///
/// Holds no pointer to the text: it stays valid when the text is moved, but describes only the
/// text it was built from. Immutable after construction, so one index may be shared between
/// threads. Offsets equal to the text's length (one past the end) are valid everywhere.
class CodePointIndex {
 public:
  explicit CodePointIndex(std::string_view text);

  int64_t bytes() const { return bytes_; }
  int64_t code_points() const { return code_points_; }
  int64_t utf16_units() const { return code_points_ + static_cast<int64_t>(astral_cp_.size()); }

  /// True when `byte` is in [0, bytes()] and starts a code point (or is the end).
  bool IsBoundary(int64_t byte) const;

  /// The code-point offset of byte offset `byte`; false when `byte` is outside [0, bytes()] or
  /// falls inside a UTF-8 sequence.
  bool CodePointOfByte(int64_t byte, int64_t* cp) const;
  /// The byte offset where code point `cp` starts; -1 when `cp` is outside [0, code_points()].
  int64_t ByteOfCodePoint(int64_t cp) const;

  /// The code-point offset of UTF-16 offset `unit`; false when `unit` is outside
  /// [0, utf16_units()] or splits a surrogate pair.
  bool CodePointOfUtf16(int64_t unit, int64_t* cp) const;
  /// The UTF-16 offset of code point `cp`; -1 when `cp` is outside [0, code_points()].
  int64_t Utf16OfCodePoint(int64_t cp) const;

 private:
  // Number of code points that start in bytes [0, byte); `byte` must be in [0, bytes()).
  int64_t StartsBefore(int64_t byte) const;

  int64_t bytes_ = 0;
  int64_t code_points_ = 0;
  bool ascii_ = true;  // every byte < 0x80: all three units coincide, no tables kept
  // Bit b of starts_[b / 64] is set when byte b starts a code point; rank_[w] counts the bits
  // set in words [0, w). Together they answer byte -> code point by one popcount.
  std::vector<uint64_t> starts_;
  std::vector<int64_t> rank_;
  // For each code point above U+FFFF (two UTF-16 units), in text order: its code-point offset
  // and its UTF-16 offset.
  std::vector<int64_t> astral_cp_;
  std::vector<int64_t> astral_utf16_;
};

/// Converts `offset`, given in `unit`, into a code-point offset in `text`. Returns false with a
/// sentence naming the offset in `*error` when the offset is negative, beyond the end of the
/// text, falls inside a UTF-8 sequence (kUtf8Bytes) or splits a surrogate pair (kUtf16Units).
/// Builds a CodePointIndex each call: a caller converting many offsets into one document should
/// build the index once and use the overload below.
bool ConvertToCodePoints(const std::string& text, OffsetUnit unit, int64_t offset,
                         int64_t* cp_offset, std::string* error);
bool ConvertToCodePoints(const CodePointIndex& index, OffsetUnit unit, int64_t offset,
                         int64_t* cp_offset, std::string* error);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_OFFSET_UNITS_H_
