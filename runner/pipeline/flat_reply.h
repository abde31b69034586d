#ifndef PLUMB_RUNNER_PIPELINE_FLAT_REPLY_H_
#define PLUMB_RUNNER_PIPELINE_FLAT_REPLY_H_

/// FlatReply reads the most common shape of a recorded reply in one pass, without building a
/// JSON tree: one object whose members are strings, numbers, true, false or null, such as
/// {"id": "c1", "answer": "ten minutes", "latency_ms": 12.5}. It accepts a line only when
/// nlohmann::json (the general path) would read the same object from it, and declines anything
/// else: a nested array or object, a repeated key, an escape in a key, a number with an
/// exponent or more than 17 digits, a byte-order mark, text that is not RFC 8259 JSON or not
/// well-formed UTF-8. A declined line is not an error; the caller reads it the general way.
/// Pure functions, safe on several threads.

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "runner/base/json_writer.h"
#include "runner/pipeline/response.h"

namespace plumb {

struct FlatValue {
  enum class Kind { kString, kInteger, kDouble, kTrue, kFalse, kNull };
  Kind kind = Kind::kNull;
  std::string text;  // kString: the decoded string
  int64_t integer = 0;
  double number = 0;
};

struct FlatReply {
  /// Members in nlohmann's order (by key, bytewise), keys decoded.
  std::vector<std::pair<std::string_view, FlatValue>> members;

  const FlatValue* Find(std::string_view key) const;
  /// The object as the general path writes it in the journal: the same text as
  /// JsonWriter::Value of nlohmann's parse.
  void Write(JsonWriter* out) const;
};

/// Reads `line` into *reply; false when the line is not a flat object this reader takes (see
/// above). Keys point into `line`, which must outlive the reply.
bool ReadFlatReply(std::string_view line, FlatReply* reply);

/// What `plumb score` takes from a line of recorded replies: the case id, the repeat, the
/// latency, and the reply as ParseResponseJson reads it with the default reply map (SPEC §5).
struct FlatPrediction {
  std::string_view id;
  int repeat = 0;
  double latency_ms = 0;
  Response parsed;
};

/// Reads a prediction line that is a flat reply (ReadFlatReply into *reply) with a string
/// "id", a "repeat" from 0 to `max_repeat` if any, a string or null "answer", "abstained" true,
/// false or null if any, and no "citations", "retrieved" or "usage" (lists and usage take the
/// general path). False declines the line: not an error, the general path then reads it, and
/// words any problem it has. The id points into `reply`.
bool ReadFlatPrediction(std::string_view line, int64_t max_repeat, FlatReply* reply,
                        FlatPrediction* out);

}  // namespace plumb

#endif  // PLUMB_RUNNER_PIPELINE_FLAT_REPLY_H_
