#include "runner/yaml_reader.h"

#include <yaml-cpp/depthguard.h>
#include <yaml-cpp/yaml.h>

#include <algorithm>
#include <exception>
#include <vector>

#include "runner/code_points.h"

namespace plumb {
namespace {

// Turns yaml-cpp marks (0-based line, byte column) into 1-based line and code-point column.
class PositionMap {
 public:
  explicit PositionMap(std::string_view text) : text_(text) {
    line_starts_.push_back(0);
    for (size_t i = 0; i < text.size(); ++i) {
      if (text[i] == '\n') line_starts_.push_back(i + 1);
    }
  }

  void Set(const YAML::Mark& mark, int* line, int* column) const {
    if (mark.pos < 0 || size_t(mark.pos) > text_.size()) {
      *line = mark.line + 1;
      *column = mark.column + 1;
      return;
    }
    size_t pos = size_t(mark.pos);
    auto after = std::upper_bound(line_starts_.begin(), line_starts_.end(), pos);
    size_t line_index = size_t(after - line_starts_.begin()) - 1;
    *line = int(line_index) + 1;
    *column = int(CountCodePoints(
                  text_.substr(line_starts_[line_index], pos - line_starts_[line_index]))) +
              1;
  }

 private:
  std::string_view text_;
  std::vector<size_t> line_starts_;
};

class TreeBuilder {
 public:
  TreeBuilder(std::string_view text, const std::string& file) : positions_(text), file_(file) {}

  // False with *error set when a budget is exceeded.
  bool Build(const YAML::Node& node, int depth, SourceNode* out, Diagnostic* error) {
    positions_.Set(node.Mark(), &out->line, &out->column);
    if (++visited_ > kMaxYamlNodes) {
      *error = {{file_, out->line, out->column},
                "the document expands to more than " + std::to_string(kMaxYamlNodes) +
                    " nodes (aliases are counted each time they are used)",
                "this looks like an alias bomb; write the data out, or split it into includes"};
      return false;
    }
    if (depth > kMaxYamlDepth) {
      *error = {{file_, out->line, out->column},
                "nesting deeper than " + std::to_string(kMaxYamlDepth) + " levels",
                "flatten the structure"};
      return false;
    }
    switch (node.Type()) {
      case YAML::NodeType::Scalar:
        out->kind = SourceNode::Kind::kScalar;
        out->scalar = node.Scalar();
        // yaml-cpp tags plain scalars "?" and quoted or block scalars "!".
        out->quoted = node.Tag() == "!" || node.Tag() == "tag:yaml.org,2002:str";
        return true;
      case YAML::NodeType::Sequence:
        out->kind = SourceNode::Kind::kSequence;
        out->items.reserve(node.size());
        for (const YAML::Node& item : node) {
          out->items.emplace_back();
          if (!Build(item, depth + 1, &out->items.back(), error)) return false;
        }
        return true;
      case YAML::NodeType::Map:
        out->kind = SourceNode::Kind::kMapping;
        out->entries.reserve(node.size());
        for (auto it = node.begin(); it != node.end(); ++it) {
          out->entries.emplace_back();
          SourceEntry& entry = out->entries.back();
          if (!Build(it->first, depth + 1, &entry.key, error)) return false;
          if (!Build(it->second, depth + 1, &entry.value, error)) return false;
          // yaml-cpp marks an empty value ("key:" then a newline) at the next token, often
          // lines below; the key is where a reader looks for it.
          if (entry.value.IsNull() && entry.value.line > entry.key.line) {
            entry.value.line = entry.key.line;
            entry.value.column = entry.key.column;
          }
        }
        return true;
      case YAML::NodeType::Null:
      case YAML::NodeType::Undefined:
        out->kind = SourceNode::Kind::kNull;
        return true;
    }
    return true;
  }

 private:
  PositionMap positions_;
  const std::string& file_;
  int64_t visited_ = 0;
};

}  // namespace

bool ReadYaml(std::string_view text, const std::string& file, SourceNode* root, Diagnostic* error) {
  if (text.substr(0, 3) == "\xEF\xBB\xBF") text.remove_prefix(3);
  *root = SourceNode();
  try {
    std::vector<YAML::Node> documents = YAML::LoadAll(std::string(text));
    if (documents.empty()) {
      root->line = root->column = 1;
      return true;
    }
    if (documents.size() > 1) {
      SourcePos pos{file, 0, 0};
      PositionMap(text).Set(documents[1].Mark(), &pos.line, &pos.column);
      *error = {pos, "the file holds more than one YAML document",
                "remove the '---' separator; one file is one document"};
      return false;
    }
    TreeBuilder builder(text, file);
    return builder.Build(documents[0], 0, root, error);
  } catch (const YAML::DeepRecursion& e) {
    SourcePos pos{file, 0, 0};
    if (e.mark.line >= 0) PositionMap(text).Set(e.mark, &pos.line, &pos.column);
    *error = {pos,
              "the YAML nests too deeply for the parser (" + std::to_string(e.depth()) + " levels)",
              "flatten the structure"};
    return false;
  } catch (const YAML::Exception& e) {
    // ParserException and its kin carry yaml-cpp's 0-based mark (a byte column).
    SourcePos pos{file, 0, 0};
    if (e.mark.line >= 0) {
      PositionMap(text).Set(e.mark, &pos.line, &pos.column);
    }
    *error = {pos, "YAML syntax error: " + e.msg, ""};
    return false;
  } catch (const std::exception& e) {
    // Field by field: GCC 12 misreports a braced Diagnostic here as maybe-uninitialized.
    error->pos = SourcePos{file, 0, 0};
    error->message = std::string("cannot parse YAML: ") + e.what();
    error->hint.clear();
    return false;
  }
}

}  // namespace plumb
