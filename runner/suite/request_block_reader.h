#ifndef PLUMB_RUNNER_SUITE_REQUEST_BLOCK_READER_H_
#define PLUMB_RUNNER_SUITE_REQUEST_BLOCK_READER_H_

/// Reads an HTTP pipeline's `request:` block into a RequestPart tree, for the pipeline-config
/// reader. The block is YAML turned into JSON, with three tags for what is not literal:
///   `!case FIELD`   the case's value as a whole JSON value: id and question are strings,
///                   repeat a number, input the case's object, input.KEY (dotted for nested
///                   objects) whatever the input holds there; in the pipeline of a grader,
///                   also the grader request's grade, rubric, gold, answer, gold_sources and
///                   cited (IsGraderRequestField);
///   `!text [...]`   one string joined from its pieces: plain strings are literal text, and
///                   `!case FIELD` pieces add the value's text (a string as is, anything else
///                   as compact JSON);
///   `!env NAME`     the environment variable NAME as a string, redacted in every output file.
/// Nothing is ever pasted into JSON text: the adapter builds the JSON tree and serializes it.
/// An unknown field or tag is an error with a did-you-mean; a `{{...}}` in a string is an error
/// that shows the same entry with `!case` (the placeholders of an earlier format are not read).

#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "runner/suite/node_checker.h"
#include "runner/suite/source_node.h"
#include "runner/suite/suite.h"

namespace plumb {

/// Reads `node` into *out and its redacted form (inserts written as {"!case": FIELD},
/// {"!text": [...]}, `!env` values as "***") into *redacted, for run.json. `expand_env` false
/// reads no environment (an `!env` value is then "${NAME}"). Expanded values are appended to
/// *secrets. Problems go to *check; false when there were any.
bool ReadRequestBlock(const SourceNode& node, bool expand_env, NodeChecker* check, RequestPart* out,
                      nlohmann::json* redacted, std::vector<std::string>* secrets);

/// Reads `url: !text [...]` into *pieces: plain strings are text with `${VAR}` expanded (as in
/// a plain url), `!case FIELD` pieces are filled in per request, percent-encoded. *url gets
/// the joined text for checks and display (a field as `{!case FIELD}`), its redacted form too.
bool ReadUrlPieces(const SourceNode& node, bool expand_env, NodeChecker* check,
                   std::vector<RequestPart>* pieces, ExpandedString* url,
                   std::vector<std::string>* secrets);

/// The `body:` of an earlier format (strings with {{id}}, {{question}}, {{repeat}}, {{input}}
/// and {{input.KEY}} placeholders) as the `request:` value that sends the same JSON, in flow
/// YAML: `{q: "{{question}}", n: "{{repeat}}"}` becomes `{q: !case question, n: !case repeat}`,
/// and "Q: {{question}}" becomes `!text ["Q: ", !case question]`.
std::string UpgradeBodyToRequest(const SourceNode& body);

}  // namespace plumb

#endif  // PLUMB_RUNNER_SUITE_REQUEST_BLOCK_READER_H_
