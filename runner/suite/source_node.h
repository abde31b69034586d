#ifndef PLUMB_RUNNER_SUITE_SOURCE_NODE_H_
#define PLUMB_RUNNER_SUITE_SOURCE_NODE_H_

/// A YAML or JSON document as a plain tree whose every node knows where it was written, so the
/// suite loader can pin each problem to file:line:column. The YAML reader
/// (runner/suite/yaml_reader.h) and the JSON-lines reader (runner/suite/jsonl_reader.h) produce it;
/// only the suite loader reads it.

#include <cstdint>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

namespace plumb {

struct SourceEntry;

struct SourceNode {
  enum class Kind { kNull, kScalar, kSequence, kMapping };
  Kind kind = Kind::kNull;
  int line = 0;    // 1-based
  int column = 0;  // 1-based, in code points
  /// kScalar: the text as written, quotes and escapes resolved.
  std::string scalar;
  /// kScalar: written quoted, as a block scalar or tagged !!str, so always a string; a plain
  /// scalar is resolved by the YAML 1.2 core schema (null, bool, int, float, else string).
  bool quoted = false;
  /// A local tag as written (`!case` in `q: !case question`); empty when the node has none.
  /// The pipeline config's request block reads it; elsewhere tags have no meaning.
  std::string tag;
  std::vector<SourceNode> items;     // kSequence
  std::vector<SourceEntry> entries;  // kMapping, in file order, duplicates kept

  bool IsNull() const { return kind == Kind::kNull; }
  bool IsScalar() const { return kind == Kind::kScalar; }
  bool IsSequence() const { return kind == Kind::kSequence; }
  bool IsMapping() const { return kind == Kind::kMapping; }
};

struct SourceEntry {
  SourceNode key;
  SourceNode value;
};

/// What the node is, for "expected X, got Y" messages: "a mapping", "a list", "null",
/// "a number", "a boolean" or "a string".
std::string DescribeNode(const SourceNode& node);

/// Core-schema readings of a scalar. Each returns false when the node is not a scalar of that
/// type; a quoted scalar is only ever a string.
bool ScalarAsInt(const SourceNode& node, int64_t* out);    // [-+]?[0-9]+, in range
bool ScalarAsNumber(const SourceNode& node, double* out);  // an int or a finite float
bool ScalarAsBool(const SourceNode& node, bool* out);      // true|True|TRUE|false|False|FALSE
/// Any scalar as the text written (`10` is "10"); false for null, lists and mappings.
bool ScalarAsString(const SourceNode& node, std::string* out);

/// The node as JSON: quoted scalars are strings, plain ones are typed by the core schema
/// (integers beyond int64 become floats), mappings keep their last value for a duplicate key.
nlohmann::json SourceNodeToJson(const SourceNode& node);

}  // namespace plumb

#endif  // PLUMB_RUNNER_SUITE_SOURCE_NODE_H_
