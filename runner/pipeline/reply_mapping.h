#ifndef PLUMB_RUNNER_PIPELINE_REPLY_MAPPING_H_
#define PLUMB_RUNNER_PIPELINE_REPLY_MAPPING_H_

/// ReplyMapping reads the values plumb scores out of a pipeline's reply, wherever the
/// pipeline's `reply:` block says they are (runner/suite/reply_block_reader.h has the syntax),
/// so a service is scored in its own shape, unchanged. Anything that reads a pipeline's reply
/// uses it: the scheduler for `plumb run`, and graders that reuse a pipeline's reply shape.
///
/// Contract:
/// - Without a `reply:` block (or for a value the block does not name) the reply protocol's own
///   place is used (SPEC §5): /answer, /abstained, /citations and /retrieved with members doc,
///   start, end and quote, and token counts at /usage/input_tokens and /usage/output_tokens,
///   or else /usage/prompt_tokens and /usage/completion_tokens (the common chat-completion
///   names).
/// - The answer must resolve (a string, or null for an abstention); a reply without it is an
///   error. Every other value is optional in each reply: a mapped pointer that does not resolve
///   reads as absent (no citations, no token count). NeverResolved() names the mapped pointers
///   that resolved in none of the replies read, so a mistyped pointer is reported once per run
///   instead of scoring silently as "no citations".
/// - A reply abstains when its answer is null, `abstained` is true, `refusal` holds a non-empty
///   string, or `abstain_when` (RE2, unanchored) matches the answer text; the answer is then
///   dropped, as for `"abstained": true`.
/// - Token counts outside 0..1e9 or not numbers are left out (a pipeline's bug, not usage).
/// - Read() is const and safe to call from several threads at once; the resolution record it
///   keeps is atomic. Not copyable (it holds that record and the compiled pattern).

#include <atomic>
#include <memory>
#include <nlohmann/json.hpp>
#include <string>
#include <string_view>
#include <vector>

#include "runner/pipeline/response.h"
#include "runner/suite/suite.h"

namespace re2 {
class RE2;
}

namespace plumb {

class ReplyMapping {
 public:
  /// The reply protocol's own shape (no `reply:` block).
  ReplyMapping();
  ~ReplyMapping();
  ReplyMapping(const ReplyMapping&) = delete;
  ReplyMapping& operator=(const ReplyMapping&) = delete;

  /// The mapping a pipeline's `reply:` block describes. Null with a sentence in *error when the
  /// block is invalid (a bad pointer or pattern; the suite loader reports those first, at their
  /// line and column).
  static std::unique_ptr<ReplyMapping> Create(const ReplyFields& fields, std::string* error);

  /// Reads `reply` (a parsed reply body) into *out. False with a one-sentence reason in *error
  /// when the reply is not an object, has no answer, or a value has the wrong type (a list that
  /// is not a list, a malformed citation, a non-boolean `abstained`).
  bool Read(const nlohmann::json& reply, Response* out, std::string* error) const;

  struct Unresolved {
    std::string key;      // as in the `reply:` block: "citations", "input_tokens", ...
    std::string pointer;  // the pointer as written
  };
  /// The pointers the `reply:` block names that resolved in none of the replies Read was given
  /// (empty when no reply was read).
  std::vector<Unresolved> NeverResolved() const;
  /// How many replies Read was given that were JSON objects.
  int64_t replies_read() const { return replies_.load(std::memory_order_relaxed); }

 private:
  struct Empty {};
  explicit ReplyMapping(Empty);
  bool Init(const ReplyFields& fields, std::string* error);

  struct Pointer;
  struct SourceList;
  bool ReadList(const nlohmann::json& reply, const SourceList& list, const char* what,
                std::vector<SourceRef>* out, bool* present, std::string* error) const;
  const nlohmann::json* Resolve(const nlohmann::json& reply, const Pointer& p) const;

  std::vector<std::unique_ptr<Pointer>> pointers_;  // every pointer, for NeverResolved
  Pointer* answer_ = nullptr;
  Pointer* abstained_ = nullptr;
  Pointer* refusal_ = nullptr;
  std::vector<Pointer*> input_tokens_;  // tried in order; the first that resolves counts
  std::vector<Pointer*> output_tokens_;
  Pointer* latency_ms_ = nullptr;
  std::unique_ptr<SourceList> citations_;
  std::unique_ptr<SourceList> retrieved_;
  std::unique_ptr<re2::RE2> abstain_when_;
  bool any_mapped_ = false;  // replies are counted only when some pointer is mapped
  mutable std::atomic<int64_t> replies_{0};
};

/// The reply protocol's own shape (SPEC §5), shared: for `plumb score` and for reading the
/// journal back, whose records use the protocol's names.
const ReplyMapping& ProtocolReplyMapping();

}  // namespace plumb

#endif  // PLUMB_RUNNER_PIPELINE_REPLY_MAPPING_H_
