#ifndef PLUMB_RUNNER_JSONL_READER_H_
#define PLUMB_RUNNER_JSONL_READER_H_

/// Parses one line of a JSON-lines include file (SPEC §4: one case object per line) into the
/// same positioned SourceNode tree the YAML reader builds, so the suite loader validates both
/// the same way. nlohmann::json decides validity and words the syntax error; a small scanner
/// then records where each key and value starts, which nlohmann does not expose.

#include <string>
#include <string_view>

#include "runner/diagnostic.h"
#include "runner/source_node.h"

namespace plumb {

/// Nesting deeper than this is refused (the scanner is recursive).
constexpr int kMaxJsonDepth = 200;

/// Parses `line` (without its newline), which sits at 1-based `line_number` of `file`. Strings
/// become quoted scalars; numbers, true and false plain scalars; null a null node. Returns false
/// with *error at file:line:column (column in code points, from nlohmann's byte position) when
/// the line is not one valid JSON value, or nests too deeply. Never throws.
bool ReadJsonLine(std::string_view line, const std::string& file, int line_number, SourceNode* root,
                  Diagnostic* error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_JSONL_READER_H_
