#include "runner/base/json_writer.h"

#include <algorithm>
#include <cassert>
#include <charconv>
#include <cmath>
#include <cstdint>
#include <cstring>

#include "metrics/utf8.h"
#include "runner/base/plain_ascii.h"

namespace plumb {
namespace {

constexpr char kHex[] = "0123456789abcdef";

}  // namespace

void JsonWriter::Grow(size_t n) {
  // Doubling, but within the reserved capacity first: resize() up to it does not reallocate.
  size_t target = std::max({size_ + n, 2 * buffer_.size(), size_t{256}});
  if (size_ + n <= buffer_.capacity()) target = std::min(target, buffer_.capacity());
  buffer_.resize(target);
}

void JsonWriter::Clear() {
  size_ = 0;
  levels_.Clear();
  after_key_ = false;
}

JsonWriter& JsonWriter::EndLine() {
  assert(levels_.empty() && !after_key_);
  PutChar('\n');
  return *this;
}

std::string JsonWriter::Take() {
  buffer_.resize(size_);
  std::string text = std::move(buffer_);
  buffer_.clear();
  size_ = 0;
  levels_.Clear();
  after_key_ = false;
  return text;
}

void JsonWriter::PutString(std::string_view text) {
  // Most strings are short and plain (keys, ids, metric names): one check, one copy.
  if (PlainAsciiRun(text, 0) == text.size()) {
    char* at = Room(text.size() + 2);
    at[0] = '"';
    std::memcpy(at + 1, text.data(), text.size());
    at[text.size() + 1] = '"';
    size_ += text.size() + 2;
    return;
  }
  PutChar('"');
  size_t i = 0;
  const size_t n = text.size();
  while (i < n) {
    // Copy the longest run that needs no escaping in one go.
    const size_t run = PlainAsciiRun(text, i);
    Put(text.data() + i, run);
    i += run;
    if (i >= n) break;
    const unsigned char c = static_cast<unsigned char>(text[i]);
    if (c >= 0x80) {
      size_t next = i;
      const char32_t cp = metrics::NextCodePoint(text, &next);
      if (cp == metrics::kReplacementCharacter && text.substr(i, next - i) != "\xEF\xBF\xBD") {
        Put("\xEF\xBF\xBD");  // an ill-formed sequence
      } else {
        Put(text.data() + i, next - i);
      }
      i = next;
      continue;
    }
    switch (c) {
      case '"':
        Put("\\\"");
        break;
      case '\\':
        Put("\\\\");
        break;
      case '\b':
        Put("\\b");
        break;
      case '\f':
        Put("\\f");
        break;
      case '\n':
        Put("\\n");
        break;
      case '\r':
        Put("\\r");
        break;
      case '\t':
        Put("\\t");
        break;
      default: {
        const char escaped[] = {'\\', 'u', '0', '0', kHex[c >> 4], kHex[c & 15]};
        Put(escaped, sizeof escaped);
      }
    }
    ++i;
  }
  PutChar('"');
}

void JsonWriter::PutDouble(double value) {
  if (!std::isfinite(value)) {
    Put("null");
    return;
  }
  char* at = Room(32);
  // Whole numbers below 10^4 (most scores and latencies: 0 and 1) come out of to_chars as
  // their integer digits, and those are cheaper to write from the integer; from 10^5 on,
  // shortest form may be an exponent, so the rest take the general way. -0.0 does too.
  if (std::fabs(value) < 1e4 && !(value == 0 && std::signbit(value))) {
    const int64_t whole = static_cast<int64_t>(value);
    if (static_cast<double>(whole) == value) {
      size_ += static_cast<size_t>(std::to_chars(at, at + 32, whole).ptr - at);
      Put(".0");
      return;
    }
  }
  const std::to_chars_result result = std::to_chars(at, at + 32, value);
  const std::string_view digits(at, static_cast<size_t>(result.ptr - at));
  size_ += digits.size();
  if (digits.find_first_of(".e") == std::string_view::npos) Put(".0");
}

void JsonWriter::NewLine(size_t depth) {
  const size_t spaces = depth * static_cast<size_t>(indent_);
  char* at = Room(1 + spaces);
  at[0] = '\n';
  std::memset(at + 1, ' ', spaces);
  size_ += 1 + spaces;
}

void JsonWriter::BeforeItem() {
  if (after_key_) {
    after_key_ = false;
    return;
  }
  if (levels_.empty()) return;
  char& empty = levels_.Back();
  if (!empty) PutChar(',');
  empty = 0;
  if (Indented(levels_.size())) NewLine(levels_.size());
}

JsonWriter& JsonWriter::BeginObject() {
  BeforeItem();
  PutChar('{');
  levels_.Push();
  return *this;
}

JsonWriter& JsonWriter::BeginArray() {
  BeforeItem();
  PutChar('[');
  levels_.Push();
  return *this;
}

JsonWriter& JsonWriter::Close(char bracket) {
  assert(!levels_.empty() && !after_key_);
  const bool empty = levels_.Back() != 0;
  levels_.Pop();
  if (!empty && Indented(levels_.size() + 1)) NewLine(levels_.size());
  PutChar(bracket);
  return *this;
}

JsonWriter& JsonWriter::EndObject() { return Close('}'); }
JsonWriter& JsonWriter::EndArray() { return Close(']'); }

JsonWriter& JsonWriter::Key(std::string_view key) {
  assert(!levels_.empty() && !after_key_);
  BeforeItem();
  PutString(key);
  if (Indented(levels_.size())) {
    Put(": ", 2);
  } else {
    PutChar(':');
  }
  after_key_ = true;
  return *this;
}

JsonWriter& JsonWriter::String(std::string_view text) {
  BeforeItem();
  PutString(text);
  return *this;
}

JsonWriter& JsonWriter::Int(int64_t value) {
  BeforeItem();
  char* at = Room(24);
  size_ += static_cast<size_t>(std::to_chars(at, at + 24, value).ptr - at);
  return *this;
}

JsonWriter& JsonWriter::Double(double value) {
  BeforeItem();
  PutDouble(value);
  return *this;
}

JsonWriter& JsonWriter::Bool(bool value) {
  BeforeItem();
  Put(value ? std::string_view("true") : std::string_view("false"));
  return *this;
}

JsonWriter& JsonWriter::Null() {
  BeforeItem();
  Put("null");
  return *this;
}

JsonWriter& JsonWriter::Raw(std::string_view json) {
  BeforeItem();
  Put(json);
  return *this;
}

JsonWriter& JsonWriter::MarkFilled() {
  assert(!levels_.empty());
  levels_.Back() = 0;
  return *this;
}

JsonWriter& JsonWriter::StringArray(const std::vector<std::string>& texts) {
  BeginArray();
  for (const std::string& text : texts) String(text);
  return EndArray();
}

JsonWriter& JsonWriter::Member(std::string_view key, const std::vector<std::string>& texts) {
  return Key(key).StringArray(texts);
}

JsonWriter& JsonWriter::Value(const nlohmann::json& value) {
  switch (value.type()) {
    case nlohmann::json::value_t::object:
      BeginObject();
      for (auto it = value.begin(); it != value.end(); ++it) {
        Key(it.key());
        Value(it.value());
      }
      return EndObject();
    case nlohmann::json::value_t::array:
      BeginArray();
      for (const nlohmann::json& item : value) Value(item);
      return EndArray();
    case nlohmann::json::value_t::string:
      return String(value.get_ref<const std::string&>());
    case nlohmann::json::value_t::boolean:
      return Bool(value.get<bool>());
    case nlohmann::json::value_t::number_integer:
      return Int(value.get<int64_t>());
    case nlohmann::json::value_t::number_unsigned: {
      BeforeItem();
      char* at = Room(24);
      size_ += static_cast<size_t>(std::to_chars(at, at + 24, value.get<uint64_t>()).ptr - at);
      return *this;
    }
    case nlohmann::json::value_t::number_float:
      return Double(value.get<double>());
    default:  // null, discarded, binary (never produced by plumb's readers)
      return Null();
  }
}

}  // namespace plumb
