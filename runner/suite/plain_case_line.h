#ifndef PLUMB_RUNNER_SUITE_PLAIN_CASE_LINE_H_
#define PLUMB_RUNNER_SUITE_PLAIN_CASE_LINE_H_

/// The common shape of a JSONL case line, read in one pass with no SourceNode tree: one object
/// whose members are "id" and "question" (strings), "answers" and, if present, "tags" (arrays
/// of strings), each once, keys in any order. The suite loader reads most lines of a large
/// include this way; any other line (other keys, a key written with escapes, other types,
/// nesting, a repeated or missing key, a BOM, invalid JSON) is declined and goes through
/// ReadJsonLine and the general case reader, which also words every problem. Only the shape is
/// checked here: whether the id, the answers and the tags are valid values is the loader's to
/// decide. Pure.

#include <string_view>

#include "runner/suite/suite.h"

namespace plumb {

/// 1-based code-point columns, as ReadJsonLine gives them to the nodes of the same line.
struct PlainCaseColumns {
  int object = 0;  // the opening '{'
  int id = 0;      // the opening quote of the id's value
};

/// Reads `line` (without its newline) into gold->id, question, answers and tags, which must be
/// empty on entry. True when the line has the plain shape and is valid JSON as ReadJsonLine
/// accepts it, with each string decoded as ReadJsonLine decodes it; false otherwise, with
/// *gold and *columns unspecified (the caller starts that line afresh).
bool ReadPlainCaseLine(std::string_view line, Case* gold, PlainCaseColumns* columns);

}  // namespace plumb

#endif  // PLUMB_RUNNER_SUITE_PLAIN_CASE_LINE_H_
