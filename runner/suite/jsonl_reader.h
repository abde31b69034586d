#ifndef PLUMB_RUNNER_SUITE_JSONL_READER_H_
#define PLUMB_RUNNER_SUITE_JSONL_READER_H_

/// Parses one line of a JSON-lines include file (SPEC §4: one case object per line) into the
/// same positioned SourceNode tree the YAML reader builds, so the suite loader validates both
/// the same way. One strict pass builds the tree with each node's position (which nlohmann does
/// not expose) and accepts what nlohmann::json 3.11 accepts, but for a NUL byte after the value,
/// which nlohmann takes for the end of its input; only a line it refuses is parsed again by
/// nlohmann, to word the error.

#include <string>
#include <string_view>

#include "runner/suite/diagnostic.h"
#include "runner/suite/source_node.h"

namespace plumb {

/// A value inside more arrays and objects than this is refused (the scanner is recursive).
constexpr int kMaxJsonDepth = 200;

/// Parses `line` (without its newline), which sits at 1-based `line_number` of `file`. Strings
/// become quoted scalars; numbers, true and false plain scalars holding their text as written;
/// null a null node. Valid means RFC 8259 with well-formed UTF-8 and paired surrogates in
/// strings, no number beyond a double's range, and, as nlohmann allows, a UTF-8 byte-order mark
/// first (it counts as a column). Returns false with *error at file:line:column (column in code
/// points; for a syntax error, where nlohmann stopped) when the line is not one valid JSON
/// value, or nests too deeply. Never throws.
bool ReadJsonLine(std::string_view line, const std::string& file, int line_number, SourceNode* root,
                  Diagnostic* error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_SUITE_JSONL_READER_H_
