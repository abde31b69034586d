#include "runner/suite/yaml_reader.h"

#include <yaml-cpp/depthguard.h>
#include <yaml-cpp/eventhandler.h>
#include <yaml-cpp/yaml.h>

#include <algorithm>
#include <cstdio>
#include <exception>
#include <optional>
#include <sstream>
#include <unordered_map>
#include <vector>

#include "runner/base/code_points.h"

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

/// Builds the SourceNode tree of a YAML stream's first document straight from yaml-cpp's parse
/// events, with no yaml-cpp Node in between, and notes where a second document starts.
///
/// Reading events rather than calling YAML::LoadAll matters beyond speed: given a ',' where a
/// document's value should start (",", "x ,"), LoadAll returns empty documents forever without
/// reading on, and memory grows until the process is killed (found by
/// tests/fuzz/suite_yaml_fuzz.cc). Here the caller asks for two documents at most.
///
/// An alias use copies its anchor's finished tree (positions included, as yaml-cpp's shared
/// node had them), so the budgets of yaml_reader.h count it again: its nodes against
/// kMaxYamlNodes and its height on top of the nesting where it is used.
class TreeBuilder : public YAML::EventHandler {
 public:
  TreeBuilder(std::string_view text, const std::string& file)
      : text_(text), positions_(text), file_(file) {}

  std::vector<YAML::Mark> document_starts;
  SourceNode root;
  bool failed = false;
  Diagnostic error;

  void OnDocumentStart(const YAML::Mark& mark) override { document_starts.push_back(mark); }
  void OnDocumentEnd() override {}
  void OnNull(const YAML::Mark& mark, YAML::anchor_t anchor) override {
    Leaf(mark, anchor, SourceNode::Kind::kNull, "", "");
  }
  void OnScalar(const YAML::Mark& mark, const std::string& tag, YAML::anchor_t anchor,
                const std::string& value) override {
    if (!Ignoring() && tag == "!" && Unterminated(mark)) {
      const char quote = text_[static_cast<size_t>(mark.pos)];
      Fail(mark,
           std::string("YAML syntax error: the ") + (quote == '"' ? "double" : "single") +
               "-quoted string that starts here is never closed",
           quote == '"' ? "end it with '\"'; inside it, write \\\" for a quote"
                        : "end it with \"'\"; inside it, write '' for a quote");
      return;
    }
    Leaf(mark, anchor, SourceNode::Kind::kScalar, tag, value);
  }
  void OnAlias(const YAML::Mark& mark, YAML::anchor_t anchor) override {
    if (Ignoring()) return;
    auto it = anchored_.find(anchor);
    if (it == anchored_.end()) {  // the alias sits inside the node its anchor names
      Fail(mark, "an alias used inside the node its anchor names",
           "a node cannot contain itself; write the repeated part out");
      return;
    }
    if (!Count(mark, it->second.size, it->second.height)) return;
    Finish(Built(it->second));
  }
  void OnSequenceStart(const YAML::Mark& mark, const std::string& tag, YAML::anchor_t anchor,
                       YAML::EmitterStyle::value) override {
    Open(mark, anchor, SourceNode::Kind::kSequence, tag);
  }
  void OnSequenceEnd() override { Close(); }
  void OnMapStart(const YAML::Mark& mark, const std::string& tag, YAML::anchor_t anchor,
                  YAML::EmitterStyle::value) override {
    Open(mark, anchor, SourceNode::Kind::kMapping, tag);
  }
  void OnMapEnd() override { Close(); }

 private:
  /// A finished node with its node count and height (0 for a leaf), kept for aliases.
  struct Built {
    SourceNode node;
    int64_t size = 1;
    int height = 0;
  };
  /// A sequence or mapping being read: what it holds so far, and a key waiting for its value.
  struct Frame {
    Built built;
    YAML::anchor_t anchor = YAML::NullAnchor;
    std::optional<SourceNode> key;
  };

  /// True when a quoted scalar starting at `mark` runs to the end of the text: yaml-cpp 0.7
  /// takes the end of the input as its closing quote, and the suite then read as if the rest
  /// of the file were that one string (found by issue 17's audit: "case 'c1' has no 'answers'").
  bool Unterminated(const YAML::Mark& mark) const {
    if (mark.pos < 0 || static_cast<size_t>(mark.pos) >= text_.size()) return false;
    const char quote = text_[static_cast<size_t>(mark.pos)];
    if (quote != '"' && quote != '\'') return false;
    for (size_t i = static_cast<size_t>(mark.pos) + 1; i < text_.size(); ++i) {
      if (quote == '"' && text_[i] == '\\') {
        ++i;  // an escape: the next character cannot close the string
      } else if (text_[i] == quote) {
        if (quote == '\'' && i + 1 < text_.size() && text_[i + 1] == '\'') {
          ++i;  // '' is a quote inside a single-quoted string
          continue;
        }
        return false;
      }
    }
    return true;
  }

  /// Only the first document is built; events after it, or after a budget broke, are skipped.
  bool Ignoring() const { return failed || done_ || document_starts.size() != 1; }

  void Fail(const YAML::Mark& mark, const std::string& message, const std::string& hint) {
    SourcePos pos{file_, 0, 0};
    positions_.Set(mark, &pos.line, &pos.column);
    error = {pos, message, hint};
    failed = true;
  }

  /// Takes `size` more nodes, the deepest `height` levels below the current nesting; false
  /// (and failed) when that breaks a budget.
  bool Count(const YAML::Mark& mark, int64_t size, int height) {
    visited_ += size;
    if (visited_ > kMaxYamlNodes) {
      Fail(mark,
           "the document expands to more than " + std::to_string(kMaxYamlNodes) +
               " nodes (aliases are counted each time they are used)",
           "this looks like an alias bomb; write the data out, or split it into includes");
      return false;
    }
    if (static_cast<int64_t>(open_.size()) + height > kMaxYamlDepth) {
      Fail(mark, "nesting deeper than " + std::to_string(kMaxYamlDepth) + " levels",
           "flatten the structure");
      return false;
    }
    return true;
  }

  // A tag written with one '!' (`!case`), as the node keeps it; yaml-cpp's "?" (plain), "!"
  // (quoted) and the standard `!!` tags are not kept.
  static std::string LocalTag(const std::string& tag) {
    return tag.size() > 1 && tag[0] == '!' && tag[1] != '!' ? tag : std::string();
  }

  void Leaf(const YAML::Mark& mark, YAML::anchor_t anchor, SourceNode::Kind kind,
            const std::string& tag, const std::string& value) {
    if (Ignoring() || !Count(mark, 1, 0)) return;
    Built built;
    built.node.kind = kind;
    positions_.Set(mark, &built.node.line, &built.node.column);
    if (kind == SourceNode::Kind::kScalar) {
      built.node.scalar = value;
      // yaml-cpp tags plain scalars "?" and quoted or block scalars "!".
      built.node.quoted = tag == "!" || tag == "tag:yaml.org,2002:str";
    }
    built.node.tag = LocalTag(tag);
    Keep(anchor, built);
    Finish(std::move(built));
  }

  void Open(const YAML::Mark& mark, YAML::anchor_t anchor, SourceNode::Kind kind,
            const std::string& tag) {
    if (Ignoring() || !Count(mark, 1, 0)) return;
    Frame& frame = open_.emplace_back();
    frame.built.node.kind = kind;
    frame.built.node.tag = LocalTag(tag);
    positions_.Set(mark, &frame.built.node.line, &frame.built.node.column);
    frame.anchor = anchor;
  }

  void Close() {
    if (Ignoring()) return;
    Built built = std::move(open_.back().built);
    const YAML::anchor_t anchor = open_.back().anchor;
    open_.pop_back();
    Keep(anchor, built);
    Finish(std::move(built));
  }

  void Keep(YAML::anchor_t anchor, const Built& built) {
    if (anchor != YAML::NullAnchor) anchored_[anchor] = built;
  }

  /// Puts a finished node where it belongs: an item, a key, a key's value, or the root.
  void Finish(Built built) {
    if (open_.empty()) {
      root = std::move(built.node);
      done_ = true;
      return;
    }
    Frame& parent = open_.back();
    parent.built.size += built.size;
    parent.built.height = std::max(parent.built.height, built.height + 1);
    SourceNode& holder = parent.built.node;
    if (holder.IsSequence()) {
      holder.items.push_back(std::move(built.node));
    } else if (!parent.key) {
      parent.key = std::move(built.node);
    } else {
      SourceEntry entry{std::move(*parent.key), std::move(built.node)};
      parent.key.reset();
      // yaml-cpp marks an empty value ("key:" then a newline) at the next token, often lines
      // below; the key is where a reader looks for it.
      if (entry.value.IsNull() && entry.value.line > entry.key.line) {
        entry.value.line = entry.key.line;
        entry.value.column = entry.key.column;
      }
      holder.entries.push_back(std::move(entry));
    }
  }

  std::string_view text_;
  PositionMap positions_;
  const std::string& file_;
  std::vector<Frame> open_;
  std::unordered_map<YAML::anchor_t, Built> anchored_;
  int64_t visited_ = 0;
  bool done_ = false;
};

}  // namespace

bool ReadYaml(std::string_view text, const std::string& file, SourceNode* root, Diagnostic* error) {
  if (text.substr(0, 3) == "\xEF\xBB\xBF") text.remove_prefix(3);
  *root = SourceNode();
  // YAML 1.2 §5.1: a stream holds printable characters only; C0 controls other than tab, line
  // feed and carriage return, and DEL, may appear only as escapes. yaml-cpp reads them (a NUL
  // included) into strings, where they would reach the pipeline and the reports.
  for (size_t i = 0; i < text.size(); ++i) {
    const unsigned char c = static_cast<unsigned char>(text[i]);
    if ((c >= 0x20 && c != 0x7F) || c == '\t' || c == '\n' || c == '\r') continue;
    YAML::Mark mark;
    mark.pos = static_cast<int>(i);
    SourcePos pos{file, 0, 0};
    PositionMap(text).Set(mark, &pos.line, &pos.column);
    char code[8];
    std::snprintf(code, sizeof code, "0x%02X", c);
    *error = {
        pos,
        std::string("a raw control character (byte ") + code + (c == 0 ? ", NUL" : "") +
            ") in the YAML; YAML allows none but tab and line breaks",
        std::string("remove it, or write it as an escape inside a double-quoted string (\"\\") +
            (c == 0      ? "0"
             : c == 0x7F ? "x7F"
                         : "x" + std::string(code + 2)) +
            "\")"};
    return false;
  }
  try {
    const std::string owned(text);
    std::istringstream in(owned);
    YAML::Parser parser(in);
    TreeBuilder builder(text, file);
    // A second document is looked for only to refuse it; its events are skipped.
    while (builder.document_starts.size() < 2 && !builder.failed &&
           parser.HandleNextDocument(builder)) {
    }
    if (builder.failed) {
      *error = builder.error;
      return false;
    }
    const std::vector<YAML::Mark>& documents = builder.document_starts;
    if (documents.empty()) {
      root->line = root->column = 1;
      return true;
    }
    if (documents.size() > 1) {
      const YAML::Mark& second = documents[1];
      SourcePos pos{file, 0, 0};
      PositionMap(text).Set(second, &pos.line, &pos.column);
      const bool in_text = second.pos >= 0 && static_cast<size_t>(second.pos) < text.size();
      if (in_text &&
          (second.pos == documents[0].pos || text[static_cast<size_t>(second.pos)] == ',')) {
        // The parser stopped on text that cannot start a value ("x ," reads as "x" and then a
        // second document starting at the ','); a real second document starts with '---'.
        *error = {pos,
                  "YAML syntax error: '" + std::string(1, text[static_cast<size_t>(second.pos)]) +
                      "' where a value should start",
                  "a ',' separates items only inside [ ] or { }; quote it to make it text"};
      } else {
        *error = {pos, "the file holds more than one YAML document",
                  "remove the '---' separator; one file is one document"};
      }
      return false;
    }
    *root = std::move(builder.root);
    return true;
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
