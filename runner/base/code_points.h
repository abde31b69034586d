#ifndef PLUMB_RUNNER_BASE_CODE_POINTS_H_
#define PLUMB_RUNNER_BASE_CODE_POINTS_H_

/// The few UTF-8 walks the suite loader and the corpus need: validation, code-point counts and
/// code-point to byte offsets. Kept apart from metrics/ on purpose (the loader must not wait on
/// it); a candidate for merging with the metrics library's UTF-8 code later.

#include <cstddef>
#include <cstdint>
#include <string_view>

namespace plumb {

/// Decodes the code point starting at text[*i] and advances *i past it. Returns false (and
/// leaves *i unchanged) when the bytes there are not a well-formed UTF-8 sequence (RFC 3629:
/// no overlong forms, no surrogates, nothing above U+10FFFF).
bool DecodeCodePoint(std::string_view text, size_t* i, char32_t* code_point);

/// True when `text` is well-formed UTF-8; otherwise false with the byte offset of the first
/// ill-formed sequence in *bad_offset.
bool IsValidUtf8(std::string_view text, size_t* bad_offset);

/// Code points in `text`, counted as the bytes that are not UTF-8 continuation bytes (exact for
/// well-formed text).
int64_t CountCodePoints(std::string_view text);

/// The byte offset where code point number `index` starts (text.size() for index == count).
/// An ill-formed byte counts as one code point. `index` past the end gives text.size().
size_t ByteOffsetOfCodePoint(std::string_view text, int64_t index);

/// The UTF-8 encoding of `code_point` appended to *out.
void AppendUtf8(char32_t code_point, std::string* out);

}  // namespace plumb

#endif  // PLUMB_RUNNER_BASE_CODE_POINTS_H_
