#ifndef PLUMB_RUNNER_SUITE_YAML_READER_H_
#define PLUMB_RUNNER_SUITE_YAML_READER_H_

/// Parses a YAML file (a suite, an include, a --pipelines file) into a positioned SourceNode
/// tree for the suite loader. yaml-cpp does the parsing; this layer turns its exceptions into a
/// Diagnostic and bounds the work an adversarial file can cause.

#include <cstdint>
#include <string>
#include <string_view>

#include "runner/suite/diagnostic.h"
#include "runner/suite/source_node.h"

namespace plumb {

/// yaml-cpp shares an aliased node instead of copying it, so a small file of nested aliases
/// ("billion laughs") describes an astronomically large tree. The reader counts every node it
/// visits (keys included, each alias use again) and gives up past this many.
constexpr int64_t kMaxYamlNodes = 1'000'000;
/// Nesting deeper than this is refused (the tree is walked recursively).
constexpr int kMaxYamlDepth = 200;

/// Parses the single YAML document in `text` (a leading UTF-8 byte-order mark is skipped) into
/// *root. An empty document gives a null root. Returns false with *error pinned to `file` when
/// the text is not YAML, holds more than one document, or exceeds the node or depth budget.
/// Never throws.
bool ReadYaml(std::string_view text, const std::string& file, SourceNode* root, Diagnostic* error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_SUITE_YAML_READER_H_
