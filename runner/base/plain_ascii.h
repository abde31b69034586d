#ifndef PLUMB_RUNNER_BASE_PLAIN_ASCII_H_
#define PLUMB_RUNNER_BASE_PLAIN_ASCII_H_

/// Finding the bytes a JSON string carries as they are, 16 at a time (SSE2; 8 at a time
/// elsewhere): printable ASCII and DEL, other than '"' and '\' (RFC 8259 §7). Shared by the
/// JSON writer, which copies such runs without escaping, and the JSON string reader, which
/// copies them without decoding. Pure.

#include <cstddef>
#include <string_view>

namespace plumb {

/// The number of plain bytes (0x20..0x7F but '"' and '\') from text[from] on, up to the first
/// other byte or the end of `text`. Reads no byte outside `text`. from <= text.size().
size_t PlainAsciiRun(std::string_view text, size_t from);

}  // namespace plumb

#endif  // PLUMB_RUNNER_BASE_PLAIN_ASCII_H_
