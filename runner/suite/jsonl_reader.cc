#include "runner/suite/jsonl_reader.h"

#include <algorithm>
#include <charconv>
#include <cstdint>
#include <nlohmann/json.hpp>
#include <system_error>
#include <utility>

#include "runner/base/code_points.h"
#include "runner/base/json_cursor.h"
#include "runner/base/json_string.h"

namespace plumb {
namespace {

const char kOneCaseHint[] = "each line of a .jsonl include is one case object";

// Built field by field: GCC 12 misreports a braced Diagnostic temporary as maybe-uninitialized.
Diagnostic MakeError(const std::string& file, int line, int column, std::string message,
                     std::string hint) {
  Diagnostic d;
  d.pos = SourcePos{file, line, column};
  d.message = std::move(message);
  d.hint = std::move(hint);
  return d;
}

// True when `number`, already matched to the JSON grammar, is beyond the range of a double:
// nlohmann refuses it ("number overflow") but takes a number that underflows to zero.
// from_chars reports both as out of range; they lie some 600 decades apart, so the decimal
// exponent of the leading nonzero digit tells them apart.
bool OverflowsDouble(std::string_view number) {
  double value;
  const char* end = number.data() + number.size();
  if (std::from_chars(number.data(), end, value).ec != std::errc::result_out_of_range) {
    return false;
  }
  if (number[0] == '-') number.remove_prefix(1);
  size_t e = std::min(number.find_first_of("eE"), number.size());
  std::string_view mantissa = number.substr(0, e);
  size_t point = std::min(mantissa.find('.'), mantissa.size());
  int64_t leading = int64_t(point) - 1;  // "123.4" -> 2
  if (mantissa.substr(0, point) == "0") {
    size_t nonzero = mantissa.find_first_not_of('0', point + 1);
    if (nonzero == std::string_view::npos) return false;  // zero itself
    leading = int64_t(point) - int64_t(nonzero);          // "0.004" -> -3
  }
  int64_t exponent = 0;
  if (e < number.size()) {
    std::string_view digits = number.substr(e + 1);  // [+-]?[0-9]+
    bool negative = digits[0] == '-';
    if (digits[0] == '-' || digits[0] == '+') digits.remove_prefix(1);
    for (char c : digits) exponent = std::min<int64_t>(exponent * 10 + (c - '0'), 1 << 30);
    if (negative) exponent = -exponent;
  }
  return leading + exponent > 0;
}

// One strict pass over a line: accepts the RFC 8259 texts nlohmann::json accepts, builds their
// SourceNode tree on the way, and refuses the rest without saying why (nlohmann words that).
// It refuses two kinds of line that nlohmann accepts: nesting deeper than kMaxJsonDepth, and
// a value followed by a NUL byte, which nlohmann reads as the end of its input.
class PositionedScanner : JsonCursor {
 public:
  PositionedScanner(std::string_view text, int line) : JsonCursor(text), line_(line) {}

  bool Document(SourceNode* root) {
    // nlohmann skips a UTF-8 byte-order mark at the very start; it is one code point.
    if (TakeWord("\xEF\xBB\xBF")) continuation_bytes_ = 2;
    if (!Value(0, root)) return false;
    SkipSpace();
    return at_ == text_.size();  // RFC 8259 §2: one value, nothing after it
  }

  bool too_deep() const { return too_deep_; }
  size_t stopped_at() const { return at_; }  // for a NUL after the value, its offset

 private:
  bool Value(int depth, SourceNode* out) {
    SkipSpace();
    if (at_ >= text_.size()) return false;
    if (depth > kMaxJsonDepth) {
      too_deep_ = true;
      return false;
    }
    out->line = line_;
    out->column = Column();
    switch (text_[at_]) {
      case '{':
        return Object(depth, out);
      case '[':
        return Array(depth, out);
      case '"':
        out->kind = SourceNode::Kind::kScalar;
        out->quoted = true;
        return ReadJsonString(text_, &at_, &out->scalar, &continuation_bytes_);
      case 'n':
        out->kind = SourceNode::Kind::kNull;
        return TakeWord("null");
      case 't':
        return Word("true", out);
      case 'f':
        return Word("false", out);
      default:
        out->kind = SourceNode::Kind::kScalar;
        return Number(&out->scalar);
    }
  }

  // true and false stay plain scalars holding their text, as a YAML reader would give them.
  bool Word(std::string_view word, SourceNode* out) {
    out->kind = SourceNode::Kind::kScalar;
    out->scalar = std::string(word);
    return TakeWord(word);
  }

  bool Object(int depth, SourceNode* out) {
    out->kind = SourceNode::Kind::kMapping;
    ++at_;  // '{'
    SkipSpace();
    if (Take('}')) return true;
    // A case object has a handful of keys: one allocation instead of four growth steps.
    out->entries.reserve(8);
    do {
      SkipSpace();
      if (at_ >= text_.size() || text_[at_] != '"') return false;  // RFC 8259 §4: names are strings
      out->entries.emplace_back();
      SourceEntry& entry = out->entries.back();
      if (!Value(depth + 1, &entry.key)) return false;
      SkipSpace();
      if (!Take(':') || !Value(depth + 1, &entry.value)) return false;
      SkipSpace();
    } while (Take(','));
    return Take('}');
  }

  bool Array(int depth, SourceNode* out) {
    out->kind = SourceNode::Kind::kSequence;
    ++at_;  // '['
    SkipSpace();
    if (Take(']')) return true;
    out->items.reserve(4);
    do {
      out->items.emplace_back();
      if (!Value(depth + 1, &out->items.back())) return false;
      SkipSpace();
    } while (Take(','));
    return Take(']');
  }

  // RFC 8259 §6: -?(0|[1-9][0-9]*)(\.[0-9]+)?([eE][+-]?[0-9]+)?, kept as written. A digit
  // after a leading 0 is left for the caller, which refuses it as it would any stray byte.
  bool Number(std::string* out) {
    size_t start = at_;
    Take('-');
    if (!Take('0') && TakeDigits() == 0) return false;
    if (Take('.') && TakeDigits() == 0) return false;
    if (Take('e') || Take('E')) {
      if (!Take('+')) Take('-');
      if (TakeDigits() == 0) return false;
    }
    out->assign(text_.data() + start, at_ - start);
    return !OverflowsDouble(*out);
  }

  int line_;
  bool too_deep_ = false;
};

// True, with *error worded as nlohmann words it, when nlohmann refuses `line`.
bool NlohmannRefuses(std::string_view line, const std::string& file, int line_number,
                     Diagnostic* error) {
  try {
    nlohmann::json parsed = nlohmann::json::parse(line);
    (void)parsed;
  } catch (const nlohmann::json::parse_error& e) {
    // e.byte is the 1-based index of the byte where parsing stopped.
    size_t before = e.byte > 0 ? std::min<size_t>(e.byte - 1, line.size()) : 0;
    int column = int(CountCodePoints(line.substr(0, before))) + 1;
    std::string message = e.what();
    size_t detail = message.find(": ", message.find("column"));
    if (detail != std::string::npos) message = message.substr(detail + 2);
    *error = MakeError(file, line_number, column, "not valid JSON: " + message, kOneCaseHint);
    return true;
  } catch (const std::exception& e) {
    *error = MakeError(file, line_number, 1, std::string("cannot parse JSON: ") + e.what(), "");
    return true;
  }
  return false;
}

}  // namespace

bool ReadJsonLine(std::string_view line, const std::string& file, int line_number, SourceNode* root,
                  Diagnostic* error) {
  *root = SourceNode();
  PositionedScanner scanner(line, line_number);
  if (scanner.Document(root)) return true;
  *root = SourceNode();
  if (NlohmannRefuses(line, file, line_number, error)) return false;
  // nlohmann took a line the scanner refused, in one of the two ways PositionedScanner names.
  if (scanner.too_deep()) {
    *error = MakeError(file, line_number, 1,
                       "JSON nests deeper than " + std::to_string(kMaxJsonDepth) + " levels",
                       "flatten the structure");
  } else {
    size_t nul = scanner.stopped_at();
    *error = MakeError(file, line_number, int(CountCodePoints(line.substr(0, nul))) + 1,
                       "not valid JSON: a NUL byte after the value", kOneCaseHint);
  }
  return false;
}

}  // namespace plumb
