#include "runner/jsonl_reader.h"

#include <algorithm>
#include <nlohmann/json.hpp>
#include <utility>

#include "runner/code_points.h"

namespace plumb {
namespace {

// Built field by field: GCC 12 misreports a braced Diagnostic temporary as maybe-uninitialized.
Diagnostic MakeError(const std::string& file, int line, int column, std::string message,
                     std::string hint) {
  Diagnostic d;
  d.pos = SourcePos{file, line, column};
  d.message = std::move(message);
  d.hint = std::move(hint);
  return d;
}

// Walks text nlohmann has already accepted, so it only needs to be right on valid JSON; it
// still stops (returns false) rather than read out of bounds on anything unexpected.
class PositionedScanner {
 public:
  PositionedScanner(std::string_view text, int line) : text_(text), line_(line) {}

  bool Value(int depth, SourceNode* out) {
    SkipSpace();
    if (at_ >= text_.size() || depth > kMaxJsonDepth) return false;
    out->line = line_;
    out->column = ColumnAt(at_);
    char c = text_[at_];
    if (c == '{') return Object(depth, out);
    if (c == '[') return Array(depth, out);
    if (c == '"') {
      out->kind = SourceNode::Kind::kScalar;
      out->quoted = true;
      return String(&out->scalar);
    }
    size_t start = at_;
    while (at_ < text_.size() && !IsDelimiter(text_[at_])) ++at_;
    std::string_view word = text_.substr(start, at_ - start);
    if (word.empty()) return false;
    if (word == "null") {
      out->kind = SourceNode::Kind::kNull;
    } else {
      out->kind = SourceNode::Kind::kScalar;
      out->scalar = std::string(word);  // a number, true or false
    }
    return true;
  }

  bool AtEnd() {
    SkipSpace();
    return at_ == text_.size();
  }

 private:
  static bool IsDelimiter(char c) {
    return c == ',' || c == ']' || c == '}' || c == ' ' || c == '\t' || c == '\r' || c == '\n';
  }

  void SkipSpace() {
    while (at_ < text_.size() &&
           (text_[at_] == ' ' || text_[at_] == '\t' || text_[at_] == '\r' || text_[at_] == '\n')) {
      ++at_;
    }
  }

  // Offsets only ever grow, so the code-point count is carried forward from the last one.
  int ColumnAt(size_t offset) {
    if (offset < counted_to_) {
      counted_to_ = 0;
      counted_ = 0;
    }
    counted_ += CountCodePoints(text_.substr(counted_to_, offset - counted_to_));
    counted_to_ = offset;
    return int(counted_) + 1;
  }

  bool Object(int depth, SourceNode* out) {
    out->kind = SourceNode::Kind::kMapping;
    ++at_;  // '{'
    SkipSpace();
    if (at_ < text_.size() && text_[at_] == '}') {
      ++at_;
      return true;
    }
    while (true) {
      out->entries.emplace_back();
      SourceEntry& entry = out->entries.back();
      if (!Value(depth + 1, &entry.key) || !entry.key.quoted) return false;
      SkipSpace();
      if (at_ >= text_.size() || text_[at_] != ':') return false;
      ++at_;
      if (!Value(depth + 1, &entry.value)) return false;
      SkipSpace();
      if (at_ >= text_.size()) return false;
      if (text_[at_++] == '}') return true;
      if (text_[at_ - 1] != ',') return false;
    }
  }

  bool Array(int depth, SourceNode* out) {
    out->kind = SourceNode::Kind::kSequence;
    ++at_;  // '['
    SkipSpace();
    if (at_ < text_.size() && text_[at_] == ']') {
      ++at_;
      return true;
    }
    while (true) {
      out->items.emplace_back();
      if (!Value(depth + 1, &out->items.back())) return false;
      SkipSpace();
      if (at_ >= text_.size()) return false;
      if (text_[at_++] == ']') return true;
      if (text_[at_ - 1] != ',') return false;
    }
  }

  bool Hex4(uint32_t* out) {
    if (at_ + 4 > text_.size()) return false;
    uint32_t value = 0;
    for (int k = 0; k < 4; ++k) {
      char c = text_[at_++];
      value <<= 4;
      if (c >= '0' && c <= '9') {
        value |= uint32_t(c - '0');
      } else if (c >= 'a' && c <= 'f') {
        value |= uint32_t(c - 'a' + 10);
      } else if (c >= 'A' && c <= 'F') {
        value |= uint32_t(c - 'A' + 10);
      } else {
        return false;
      }
    }
    *out = value;
    return true;
  }

  bool String(std::string* out) {
    ++at_;  // '"'
    while (at_ < text_.size()) {
      char c = text_[at_++];
      if (c == '"') return true;
      if (c != '\\') {
        *out += c;
        continue;
      }
      if (at_ >= text_.size()) return false;
      char escape = text_[at_++];
      switch (escape) {
        case '"':
        case '\\':
        case '/':
          *out += escape;
          break;
        case 'b':
          *out += '\b';
          break;
        case 'f':
          *out += '\f';
          break;
        case 'n':
          *out += '\n';
          break;
        case 'r':
          *out += '\r';
          break;
        case 't':
          *out += '\t';
          break;
        case 'u': {
          uint32_t unit;
          if (!Hex4(&unit)) return false;
          // RFC 8259 §7: characters outside the BMP come as a UTF-16 surrogate pair.
          if (unit >= 0xD800 && unit <= 0xDBFF) {
            uint32_t low;
            if (at_ + 2 > text_.size() || text_[at_] != '\\' || text_[at_ + 1] != 'u') {
              return false;
            }
            at_ += 2;
            if (!Hex4(&low) || low < 0xDC00 || low > 0xDFFF) return false;
            unit = 0x10000 + ((unit - 0xD800) << 10) + (low - 0xDC00);
          }
          AppendUtf8(char32_t(unit), out);
          break;
        }
        default:
          return false;
      }
    }
    return false;
  }

  std::string_view text_;
  int line_;
  size_t at_ = 0;
  size_t counted_to_ = 0;
  int64_t counted_ = 0;
};

}  // namespace

bool ReadJsonLine(std::string_view line, const std::string& file, int line_number, SourceNode* root,
                  Diagnostic* error) {
  *root = SourceNode();
  try {
    // accept() checks without building a value; parse() runs only to word the error.
    if (!nlohmann::json::accept(line)) {
      nlohmann::json parsed = nlohmann::json::parse(line);
      (void)parsed;
    }
  } catch (const nlohmann::json::parse_error& e) {
    // e.byte is the 1-based index of the byte where parsing stopped.
    size_t before = e.byte > 0 ? std::min<size_t>(e.byte - 1, line.size()) : 0;
    int column = int(CountCodePoints(line.substr(0, before))) + 1;
    std::string message = e.what();
    size_t detail = message.find(": ", message.find("column"));
    if (detail != std::string::npos) message = message.substr(detail + 2);
    *error = MakeError(file, line_number, column, "not valid JSON: " + message,
                       "each line of a .jsonl include is one case object");
    return false;
  } catch (const std::exception& e) {
    *error = MakeError(file, line_number, 1, std::string("cannot parse JSON: ") + e.what(), "");
    return false;
  }
  PositionedScanner scanner(line, line_number);
  if (!scanner.Value(0, root) || !scanner.AtEnd()) {
    *error = MakeError(file, line_number, 1,
                       "JSON nests deeper than " + std::to_string(kMaxJsonDepth) + " levels",
                       "flatten the structure");
    return false;
  }
  return true;
}

}  // namespace plumb
