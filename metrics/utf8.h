#ifndef PLUMB_METRICS_UTF8_H_
#define PLUMB_METRICS_UTF8_H_

/// UTF-8 decoding, encoding and code-point offsets shared by the metrics library (normalization,
/// span and citation metrics, number extraction). SPEC §4 counts offsets in code points.
///
/// Invalid input is never rejected: every maximal invalid subsequence (Unicode §3.9 "maximal
/// subpart", what Python's bytes.decode("utf-8", errors="replace") does) decodes to one U+FFFD,
/// and offsets count that U+FFFD as one code point. Encoded surrogates (ED A0..BF xx) and
/// overlong forms are invalid. All functions are pure and thread-safe.

#include <cstddef>
#include <string>
#include <string_view>

namespace plumb::metrics {

inline constexpr char32_t kReplacementCharacter = 0xFFFD;

/// Decodes the code point that starts at byte `*pos` (which must be < text.size()) and advances
/// `*pos` past it, or past the maximal invalid subsequence, in which case it returns U+FFFD.
char32_t NextCodePoint(std::string_view text, size_t* pos);

/// The whole text as code points.
std::u32string DecodeUtf8(std::string_view text);

/// Appends the UTF-8 form of `cp`; surrogates and values above U+10FFFF append U+FFFD.
void AppendUtf8(char32_t cp, std::string* out);
std::string EncodeUtf8(std::u32string_view code_points);

/// Number of code points DecodeUtf8 would return.
size_t CodePointCount(std::string_view text);

/// Byte offset where code point `cp_offset` starts; text.size() when cp_offset equals the
/// code-point count, std::string_view::npos when it is beyond it.
size_t ByteOffsetAt(std::string_view text, size_t cp_offset);

/// Index of the code point that contains byte `byte_offset` (for a byte inside a multi-byte or
/// invalid sequence, the sequence's index); the code-point count when byte_offset >= text.size().
size_t CodePointOffsetAt(std::string_view text, size_t byte_offset);

/// The bytes of code points [start, end). Returns false, leaving `out` untouched, when
/// start > end or end is beyond the code-point count.
bool CodePointSubstr(std::string_view text, size_t start, size_t end, std::string_view* out);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_UTF8_H_
