#ifndef PLUMB_RUNNER_SUITE_REPLY_BLOCK_READER_H_
#define PLUMB_RUNNER_SUITE_REPLY_BLOCK_READER_H_

/// Reads a pipeline's `reply:` block (where the values plumb scores live in the pipeline's
/// reply) into ReplyFields, for the pipeline-config reader:
///   answer, abstained, refusal, input_tokens, output_tokens, latency_ms: one RFC 6901 JSON
///     Pointer each;
///   abstain_when: an RE2 pattern searched in the answer (an answer it matches abstains);
///   citations, retrieved: a pointer, or {at: POINTER, doc:, start:, end:, quote:} where the
///     four names are each item's members (a name, or a pointer from '/' into the item).
/// The block is checked here (pointers well formed, the pattern compiles); the pipeline layer
/// compiles it (runner/pipeline/reply_mapping.h). UpgradeMapToReply turns an earlier format's
/// `map:` block into the `reply:` that reads the same replies, for the upgrade message.

#include <string>

#include "runner/suite/node_checker.h"
#include "runner/suite/source_node.h"
#include "runner/suite/suite.h"

namespace plumb {

/// Reads `node` into *out (out->given set); problems go to *check.
void ReadReplyBlock(const SourceNode& node, NodeChecker* check, ReplyFields* out);

/// `map: {answer: /a, citations: /c, retrieved: /r, usage: /u, fields: {doc: source}}` as
/// `{answer: /a, input_tokens: /u/input_tokens, ..., citations: {at: /c, doc: source}, ...}`.
std::string UpgradeMapToReply(const SourceNode& map);

/// True for "" and for strings starting with '/' whose '~' escapes are ~0 or ~1 (RFC 6901 §3).
bool IsJsonPointer(const std::string& pointer);

}  // namespace plumb

#endif  // PLUMB_RUNNER_SUITE_REPLY_BLOCK_READER_H_
