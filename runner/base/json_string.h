#ifndef PLUMB_RUNNER_BASE_JSON_STRING_H_
#define PLUMB_RUNNER_BASE_JSON_STRING_H_

/// One JSON string read as nlohmann::json 3.11 reads it (RFC 8259 §7): escapes decoded, a
/// UTF-16 surrogate accepted only as half of a pair, raw bytes well-formed UTF-8 (RFC 3629)
/// without control characters. Shared by the two strict one-pass readers, the JSONL case reader
/// (runner/suite/jsonl_reader.h) and the flat-reply reader (runner/pipeline/flat_reply.h). Pure.

#include <cstddef>
#include <string>
#include <string_view>

namespace plumb {

/// Reads the string whose opening quote is text[*at], appending its decoded value to *out and
/// leaving *at just past the closing quote. When `continuation_bytes` is not null it is
/// increased by the UTF-8 continuation bytes read raw (so a caller can count code-point
/// columns). False when the text there is not such a string; *at is then unspecified.
bool ReadJsonString(std::string_view text, size_t* at, std::string* out,
                    size_t* continuation_bytes);

}  // namespace plumb

#endif  // PLUMB_RUNNER_BASE_JSON_STRING_H_
