#ifndef PLUMB_RUNNER_SUITE_FLOW_YAML_H_
#define PLUMB_RUNNER_SUITE_FLOW_YAML_H_

/// A SourceNode written back as one line of YAML flow syntax (`{q: !case question, k: 4}`), so
/// an error about a key an earlier format used can show the entry in its new form, ready to
/// paste. Strings written quoted, and strings that flow syntax would misread, are double-quoted
/// with JSON escapes (valid YAML); numbers, booleans and plain words stay as written.

#include <string>

#include "runner/suite/source_node.h"

namespace plumb {

/// `node` as flow YAML on one line, with its tag (`!case question`) when it carries one.
std::string FlowYaml(const SourceNode& node);

/// A scalar string as flow YAML: plain when that reads back as the same string, otherwise
/// double-quoted.
std::string FlowYamlString(const std::string& text);

}  // namespace plumb

#endif  // PLUMB_RUNNER_SUITE_FLOW_YAML_H_
