#ifndef PLUMB_RUNNER_SUITE_NODE_CHECKER_H_
#define PLUMB_RUNNER_SUITE_NODE_CHECKER_H_

/// Typed reads over one file's SourceNode tree that report every mismatch as a Diagnostic at
/// the offending node ("wrong type for 'answers'; expected a list of strings, got a mapping").
/// The suite loader and the pipeline-config reader validate with it, one NodeChecker per file.

#include <algorithm>
#include <cstdint>
#include <map>
#include <string>
#include <string_view>
#include <vector>

#include "runner/suite/diagnostic.h"
#include "runner/suite/source_node.h"

namespace plumb {

/// The entries of a mapping by key, first occurrence, as NodeChecker::Keys finds them. Ordered
/// by key like the std::map it replaces, but a flat list: a mapping holds a handful of keys (a
/// case at most eight), so this costs one allocation where a map costs one per key.
class KeyIndex {
 public:
  using value_type = std::pair<std::string, const SourceEntry*>;
  using const_iterator = std::vector<value_type>::const_iterator;

  const_iterator find(std::string_view key) const {
    return std::find_if(entries_.begin(), entries_.end(),
                        [key](const value_type& entry) { return entry.first == key; });
  }
  size_t count(std::string_view key) const { return find(key) != end() ? 1 : 0; }
  /// Adds `key` unless present; the iterator points at its entry either way.
  std::pair<const_iterator, bool> emplace(std::string key, const SourceEntry* entry) {
    auto it =
        std::lower_bound(entries_.begin(), entries_.end(), key,
                         [](const value_type& a, const std::string& b) { return a.first < b; });
    if (it != entries_.end() && it->first == key) return {it, false};
    it = entries_.emplace(it, std::move(key), entry);
    return {it, true};
  }
  void reserve(size_t n) { entries_.reserve(n); }
  const_iterator begin() const { return entries_.begin(); }
  const_iterator end() const { return entries_.end(); }
  size_t size() const { return entries_.size(); }

 private:
  std::vector<value_type> entries_;
};

class NodeChecker {
 public:
  /// `errors` and `warnings` must outlive the checker; reports are appended to them.
  NodeChecker(std::string file, Diagnostics* errors, Diagnostics* warnings)
      : file_(std::move(file)), errors_(errors), warnings_(warnings) {}

  const std::string& file() const { return file_; }
  SourcePos Pos(const SourceNode& node) const { return {file_, node.line, node.column}; }
  void Error(const SourceNode& at, std::string message, std::string hint = "");
  void Warning(const SourceNode& at, std::string message, std::string hint = "");
  size_t error_count() const { return errors_->size(); }

  /// The entries of `mapping` by key, first occurrence. Reports a key not in `valid` (with
  /// "did you mean"), a repeated key and a non-scalar key; those are left out. `place` finishes
  /// "unknown key 'x' ..." (e.g. "in a case"). Reports and returns {} when `mapping` is not a
  /// mapping (`what` names it: "a case"). Keys in `retired` (names an earlier format used) are
  /// returned without a report: the caller reports them with the new form of that entry, and
  /// they are never offered as suggestions.
  KeyIndex Keys(const SourceNode& mapping, const std::vector<std::string>& valid,
                std::string_view place, std::string_view what,
                const std::vector<std::string>& retired = {});

  // Each read reports "wrong type for 'FIELD'" at `node` with "expected X, got Y" and returns
  // false when the node does not have the type. `field` names the key being read.
  bool Mapping(const SourceNode& node, std::string_view field);
  bool Sequence(const SourceNode& node, std::string_view field, std::string_view of);
  bool String(const SourceNode& node, std::string_view field, std::string* out);
  bool NonEmptyString(const SourceNode& node, std::string_view field, std::string* out);
  bool Int(const SourceNode& node, std::string_view field, int64_t* out);
  bool Number(const SourceNode& node, std::string_view field, double* out);
  bool Bool(const SourceNode& node, std::string_view field, bool* out);
  /// A number in [0, 1].
  bool Fraction(const SourceNode& node, std::string_view field, double* out);
  /// A list whose items are all strings; bad items are reported and skipped.
  bool StringList(const SourceNode& node, std::string_view field, std::vector<std::string>* out,
                  std::vector<const SourceNode*>* item_nodes = nullptr);
  /// A mapping of string values (e.g. env, headers); bad values are reported and skipped.
  bool StringMap(const SourceNode& node, std::string_view field,
                 std::vector<std::pair<const SourceNode*, const SourceNode*>>* out);

 private:
  void WrongType(const SourceNode& node, std::string_view field, std::string_view expected);

  std::string file_;
  Diagnostics* errors_;
  Diagnostics* warnings_;
};

/// True when `text` is non-empty and every byte is an ASCII letter, a digit or one of `extra`.
bool IsNameOf(std::string_view text, std::string_view extra);

/// "file:line:column" of a position, as diagnostics name other places.
std::string FormatPos(const SourcePos& pos);

}  // namespace plumb

#endif  // PLUMB_RUNNER_SUITE_NODE_CHECKER_H_
