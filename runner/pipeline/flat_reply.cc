#include "runner/pipeline/flat_reply.h"

#include <algorithm>
#include <charconv>

#include "runner/base/code_points.h"
#include "runner/base/json_cursor.h"
#include "runner/base/json_string.h"

namespace plumb {
namespace {

// A number nlohmann reads as a double may be written with up to this many digits and still be
// read the same way by std::from_chars (both round correctly; the limit only keeps the
// accepted forms few and plain).
constexpr size_t kMaxNumberDigits = 17;

class FlatScanner : JsonCursor {
 public:
  explicit FlatScanner(std::string_view text) : JsonCursor(text) {}

  bool Read(FlatReply* reply) {
    SkipSpace();
    if (!Take('{')) return false;
    SkipSpace();
    if (Take('}')) return AtEnd();
    while (true) {
      std::string_view key;
      if (!Key(&key)) return false;
      SkipSpace();
      if (!Take(':')) return false;
      SkipSpace();
      FlatValue value;
      if (!Value(&value)) return false;
      reply->members.emplace_back(key, std::move(value));
      SkipSpace();
      if (Take(',')) {
        SkipSpace();
        continue;
      }
      if (!Take('}')) return false;
      break;
    }
    if (!AtEnd()) return false;
    auto& members = reply->members;
    std::sort(members.begin(), members.end(),
              [](const auto& a, const auto& b) { return a.first < b.first; });
    for (size_t i = 1; i < members.size(); ++i) {
      if (members[i].first == members[i - 1].first) return false;  // nlohmann keeps the last
    }
    return true;
  }

 private:
  bool AtEnd() {
    SkipSpace();
    return at_ == text_.size();
  }
  // A key without escapes: the bytes between the quotes, checked as a string's are.
  bool Key(std::string_view* key) {
    if (!Take('"')) return false;
    const size_t start = at_;
    while (at_ < text_.size() && text_[at_] != '"') {
      if (text_[at_] == '\\') return false;
      ++at_;
    }
    if (at_ == text_.size()) return false;
    *key = text_.substr(start, at_ - start);
    ++at_;
    return WellFormed(*key);
  }

  // No control characters, and well-formed UTF-8 (what nlohmann checks as it reads).
  static bool WellFormed(std::string_view text) {
    bool ascii = true;
    for (unsigned char c : text) {
      if (c < 0x20) return false;
      ascii = ascii && c < 0x80;
    }
    size_t bad = 0;
    return ascii || IsValidUtf8(text, &bad);
  }

  bool Value(FlatValue* value) {
    if (at_ >= text_.size()) return false;
    switch (text_[at_]) {
      case '"':
        value->kind = FlatValue::Kind::kString;
        return ReadJsonString(text_, &at_, &value->text, nullptr);
      case 't':
        value->kind = FlatValue::Kind::kTrue;
        return TakeWord("true");
      case 'f':
        value->kind = FlatValue::Kind::kFalse;
        return TakeWord("false");
      case 'n':
        value->kind = FlatValue::Kind::kNull;
        return TakeWord("null");
      default:
        return Number(value);
    }
  }

  // -?(0|[1-9][0-9]*)(\.[0-9]+)? with no more than kMaxNumberDigits digits; no exponent.
  bool Number(FlatValue* value) {
    const size_t start = at_;
    Take('-');
    const size_t int_start = at_;
    const size_t int_digits = TakeDigits();
    if (int_digits == 0 || (int_digits > 1 && text_[int_start] == '0')) return false;
    size_t frac_digits = 0;
    bool fraction = false;
    if (Take('.')) {
      fraction = true;
      frac_digits = TakeDigits();
      if (frac_digits == 0) return false;
    }
    if (at_ < text_.size() && (text_[at_] == 'e' || text_[at_] == 'E')) return false;
    if (int_digits + frac_digits > kMaxNumberDigits) return false;
    const char* first = text_.data() + start;
    const char* last = text_.data() + at_;
    if (!fraction) {
      value->kind = FlatValue::Kind::kInteger;
      return std::from_chars(first, last, value->integer).ec == std::errc();
    }
    value->kind = FlatValue::Kind::kDouble;
    return std::from_chars(first, last, value->number).ec == std::errc();
  }
};

}  // namespace

const FlatValue* FlatReply::Find(std::string_view key) const {
  for (const auto& [name, value] : members) {
    if (name == key) return &value;
  }
  return nullptr;
}

void FlatReply::Write(JsonWriter* out) const {
  JsonWriter& w = *out;
  w.BeginObject();
  for (const auto& [key, value] : members) {
    w.Key(key);
    switch (value.kind) {
      case FlatValue::Kind::kString:
        w.String(value.text);
        break;
      case FlatValue::Kind::kInteger:
        w.Int(value.integer);
        break;
      case FlatValue::Kind::kDouble:
        w.Double(value.number);
        break;
      case FlatValue::Kind::kTrue:
        w.Bool(true);
        break;
      case FlatValue::Kind::kFalse:
        w.Bool(false);
        break;
      case FlatValue::Kind::kNull:
        w.Null();
        break;
    }
  }
  w.EndObject();
}

bool ReadFlatReply(std::string_view line, FlatReply* reply) {
  reply->members.clear();
  FlatScanner scanner(line);
  return scanner.Read(reply);
}

}  // namespace plumb

namespace plumb {

bool ReadFlatPrediction(std::string_view line, int64_t max_repeat, FlatReply* reply,
                        FlatPrediction* out) {
  using Kind = FlatValue::Kind;
  if (!ReadFlatReply(line, reply)) return false;
  const FlatValue* id = reply->Find("id");
  if (id == nullptr || id->kind != Kind::kString) return false;
  out->id = id->text;
  out->repeat = 0;
  if (const FlatValue* repeat = reply->Find("repeat")) {
    if (repeat->kind != Kind::kInteger || repeat->integer < 0 || repeat->integer > max_repeat) {
      return false;
    }
    out->repeat = static_cast<int>(repeat->integer);
  }
  if (reply->Find("citations") != nullptr || reply->Find("retrieved") != nullptr ||
      reply->Find("usage") != nullptr) {
    return false;
  }
  out->parsed = Response();
  const FlatValue* answer = reply->Find("answer");
  if (answer == nullptr) return false;
  if (answer->kind == Kind::kString) {
    out->parsed.answer = answer->text;
  } else if (answer->kind != Kind::kNull) {
    return false;
  }
  out->parsed.abstained = !out->parsed.answer.has_value();
  if (const FlatValue* abstained = reply->Find("abstained")) {
    if (abstained->kind == Kind::kTrue) {
      out->parsed.abstained = true;
      out->parsed.answer.reset();
    } else if (abstained->kind != Kind::kFalse && abstained->kind != Kind::kNull) {
      return false;
    }
  }
  out->latency_ms = 0;
  if (const FlatValue* latency = reply->Find("latency_ms")) {
    if (latency->kind == Kind::kInteger) out->latency_ms = static_cast<double>(latency->integer);
    if (latency->kind == Kind::kDouble) out->latency_ms = latency->number;
  }
  return true;
}

}  // namespace plumb
