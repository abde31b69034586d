#include "runner/suite/node_checker.h"

#include <utility>

#include "runner/suite/did_you_mean.h"

namespace plumb {

void NodeChecker::Error(const SourceNode& at, std::string message, std::string hint) {
  errors_->push_back({Pos(at), std::move(message), std::move(hint)});
}

void NodeChecker::Warning(const SourceNode& at, std::string message, std::string hint) {
  warnings_->push_back({Pos(at), std::move(message), std::move(hint)});
}

void NodeChecker::WrongType(const SourceNode& node, std::string_view field,
                            std::string_view expected) {
  // A number that is no usable number (1e400, .nan, .inf, an integer beyond 64 bits) is of
  // the right type; "expected a number, got a number" would say nothing.
  if (DescribeNode(node) == "a number") {
    const std::string& text = node.scalar;
    const bool special = !text.empty() && text[text[0] == '-' || text[0] == '+' ? 1 : 0] == '.';
    const bool wants_integer = expected == "an integer";
    if (wants_integer && !special && text.find_first_of(".eE") == std::string::npos) {
      Error(node, "'" + std::string(field) + "' is " + text + ", too large for an integer",
            "give an integer between -9223372036854775808 and 9223372036854775807");
    } else if (wants_integer) {
      Error(node, "wrong type for '" + std::string(field) + "'",
            "expected an integer, got " + text);
    } else if (special) {
      Error(node, "'" + std::string(field) + "' is " + text + ", which is not a finite number",
            "give a finite number such as 0.5 or 10");
    } else {
      Error(node,
            "'" + std::string(field) + "' is " + text +
                ", beyond the range of a number (about 1.8e308 at most)",
            "give a finite number such as 0.5 or 10");
    }
    return;
  }
  Error(node, "wrong type for '" + std::string(field) + "'",
        "expected " + std::string(expected) + ", got " + DescribeNode(node));
}

KeyIndex NodeChecker::Keys(const SourceNode& mapping, const std::vector<std::string>& valid,
                           std::string_view place, std::string_view what,
                           const std::vector<std::string>& retired) {
  KeyIndex keys;
  if (!mapping.IsMapping()) {
    Error(mapping, "expected " + std::string(what) + " (a mapping), got " + DescribeNode(mapping));
    return keys;
  }
  keys.reserve(mapping.entries.size());
  for (const SourceEntry& entry : mapping.entries) {
    std::string key;
    if (!ScalarAsString(entry.key, &key)) {
      Error(entry.key, "a key must be a plain name, got " + DescribeNode(entry.key));
      continue;
    }
    bool known = false;
    for (const std::string& name : valid) known = known || name == key;
    for (const std::string& name : retired) known = known || name == key;
    if (!known) {
      Error(entry.key, "unknown key '" + key + "' " + std::string(place),
            DidYouMeanHint(key, valid, "keys"));
      continue;
    }
    auto [it, inserted] = keys.emplace(key, &entry);
    if (!inserted) {
      Error(entry.key, "duplicate key '" + key + "'",
            "first given at " + FormatPos(Pos(it->second->key)));
    }
  }
  return keys;
}

bool NodeChecker::Mapping(const SourceNode& node, std::string_view field) {
  if (node.IsMapping()) return true;
  WrongType(node, field, "a mapping");
  return false;
}

bool NodeChecker::Sequence(const SourceNode& node, std::string_view field, std::string_view of) {
  if (node.IsSequence()) return true;
  std::string hint = "expected a list of " + std::string(of) + ", got " + DescribeNode(node);
  if (node.IsScalar()) hint += " (write [" + node.scalar + "] for a single one)";
  Error(node, "wrong type for '" + std::string(field) + "'", hint);
  return false;
}

bool NodeChecker::String(const SourceNode& node, std::string_view field, std::string* out) {
  if (ScalarAsString(node, out)) return true;
  WrongType(node, field, "a string");
  return false;
}

bool NodeChecker::NonEmptyString(const SourceNode& node, std::string_view field, std::string* out) {
  if (!String(node, field, out)) return false;
  if (out->find_first_not_of(" \t\r\n") != std::string::npos) return true;
  Error(node, "'" + std::string(field) + "' is empty", "expected a non-empty string");
  return false;
}

bool NodeChecker::Int(const SourceNode& node, std::string_view field, int64_t* out) {
  if (ScalarAsInt(node, out)) return true;
  WrongType(node, field, "an integer");
  return false;
}

bool NodeChecker::Number(const SourceNode& node, std::string_view field, double* out) {
  if (ScalarAsNumber(node, out)) return true;
  WrongType(node, field, "a number");
  return false;
}

bool NodeChecker::Bool(const SourceNode& node, std::string_view field, bool* out) {
  if (ScalarAsBool(node, out)) return true;
  WrongType(node, field, "true or false");
  return false;
}

bool NodeChecker::Fraction(const SourceNode& node, std::string_view field, double* out) {
  if (!ScalarAsNumber(node, out)) {
    WrongType(node, field, "a number between 0 and 1");
    return false;
  }
  if (*out >= 0 && *out <= 1) return true;
  Error(node, "'" + std::string(field) + "' is " + node.scalar + ", out of range",
        "expected a number between 0 and 1");
  return false;
}

bool NodeChecker::StringList(const SourceNode& node, std::string_view field,
                             std::vector<std::string>* out,
                             std::vector<const SourceNode*>* item_nodes) {
  if (!Sequence(node, field, "strings")) return false;
  bool ok = true;
  out->reserve(out->size() + node.items.size());
  if (item_nodes != nullptr) item_nodes->reserve(item_nodes->size() + node.items.size());
  for (const SourceNode& item : node.items) {
    std::string value;
    if (!ScalarAsString(item, &value)) {
      Error(item, "wrong type for an item of '" + std::string(field) + "'",
            "expected a string, got " + DescribeNode(item));
      ok = false;
      continue;
    }
    out->push_back(std::move(value));
    if (item_nodes != nullptr) item_nodes->push_back(&item);
  }
  return ok;
}

bool NodeChecker::StringMap(const SourceNode& node, std::string_view field,
                            std::vector<std::pair<const SourceNode*, const SourceNode*>>* out) {
  if (!Mapping(node, field)) return false;
  bool ok = true;
  std::map<std::string, const SourceNode*> seen;
  for (const SourceEntry& entry : node.entries) {
    std::string key;
    if (!ScalarAsString(entry.key, &key)) {
      Error(entry.key,
            "a key in '" + std::string(field) + "' must be a name, got " + DescribeNode(entry.key));
      ok = false;
      continue;
    }
    auto [it, inserted] = seen.emplace(key, &entry.key);
    if (!inserted) {
      Error(entry.key, "duplicate key '" + key + "' in '" + std::string(field) + "'",
            "first given at " + FormatPos(Pos(*it->second)));
      ok = false;
      continue;
    }
    std::string value;
    if (!ScalarAsString(entry.value, &value)) {
      Error(entry.value, "wrong type for '" + std::string(field) + "." + key + "'",
            "expected a string, got " + DescribeNode(entry.value));
      ok = false;
      continue;
    }
    out->emplace_back(&entry.key, &entry.value);
  }
  return ok;
}

bool IsNameOf(std::string_view text, std::string_view extra) {
  if (text.empty()) return false;
  for (char c : text) {
    bool alnum = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9');
    if (!alnum && extra.find(c) == std::string_view::npos) return false;
  }
  return true;
}

std::string FormatPos(const SourcePos& pos) {
  return pos.file + ":" + std::to_string(pos.line) + ":" + std::to_string(pos.column);
}

}  // namespace plumb
