#include "runner/suite/flow_yaml.h"

#include <nlohmann/json.hpp>

namespace plumb {
namespace {

// Characters that end or change a plain scalar in flow context, or start a different node.
bool NeedsQuotes(const std::string& text) {
  if (text.empty() || text.front() == ' ' || text.back() == ' ') return true;
  if (std::string("!&*?|>'\"%@`-").find(text.front()) != std::string::npos) return true;
  for (char c : text) {
    if (std::string(",[]{}#:\n\r\t\\").find(c) != std::string::npos) return true;
    if (static_cast<unsigned char>(c) < 0x20) return true;
  }
  return false;
}

}  // namespace

std::string FlowYamlString(const std::string& text) {
  SourceNode probe;
  probe.kind = SourceNode::Kind::kScalar;
  probe.scalar = text;
  // A word the core schema would read as a number, boolean or null must stay a string.
  if (NeedsQuotes(text) || DescribeNode(probe) != "a string") {
    return nlohmann::json(text).dump(-1, ' ', false, nlohmann::json::error_handler_t::replace);
  }
  return text;
}

std::string FlowYaml(const SourceNode& node) {
  std::string out;
  if (!node.tag.empty()) out = node.tag + " ";
  switch (node.kind) {
    case SourceNode::Kind::kNull:
      return out + "null";
    case SourceNode::Kind::kScalar:
      // A string the user quoted stays quoted (in JSON's escapes, which YAML reads alike).
      if (node.quoted) {
        return out + nlohmann::json(node.scalar)
                         .dump(-1, ' ', false, nlohmann::json::error_handler_t::replace);
      }
      return out + (NeedsQuotes(node.scalar) ? FlowYamlString(node.scalar) : node.scalar);
    case SourceNode::Kind::kSequence: {
      out += "[";
      for (size_t i = 0; i < node.items.size(); ++i) {
        out += (i == 0 ? "" : ", ") + FlowYaml(node.items[i]);
      }
      return out + "]";
    }
    case SourceNode::Kind::kMapping: {
      out += "{";
      for (size_t i = 0; i < node.entries.size(); ++i) {
        out += (i == 0 ? "" : ", ") + FlowYaml(node.entries[i].key) + ": " +
               FlowYaml(node.entries[i].value);
      }
      return out + "}";
    }
  }
  return out;
}

}  // namespace plumb
