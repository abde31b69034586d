#include "runner/json_writer.h"

#include <algorithm>
#include <cassert>
#include <charconv>
#include <cmath>
#include <cstdint>
#include <cstring>

#include "metrics/utf8.h"

#if defined(__SSE2__)
#include <emmintrin.h>
#endif

namespace plumb {
namespace {

constexpr char kHex[] = "0123456789abcdef";

#if !defined(__SSE2__)
// Bytes a JSON string can carry as they are: printable ASCII other than '"' and '\'.
bool IsPlainAscii(unsigned char c) { return c >= 0x20 && c < 0x80 && c != '"' && c != '\\'; }

// True when one of the 8 bytes of `word` is not plain ASCII: below 0x20, at or above 0x80, '"'
// or '\'. The usual SWAR tests (Mycroft's has-zero-byte and has-less-than, as in Anderson's
// "Bit Twiddling Hacks"), exact here because bytes at or above 0x80 are caught first.
bool HasSpecialByte(uint64_t word) {
  constexpr uint64_t kOnes = 0x0101010101010101ull;
  constexpr uint64_t kHigh = 0x8080808080808080ull;
  auto has_zero = [](uint64_t v) { return (v - kOnes) & ~v & kHigh; };
  const uint64_t below_space = (word - kOnes * 0x20) & ~word & kHigh;
  return ((word & kHigh) | below_space | has_zero(word ^ (kOnes * '"')) |
          has_zero(word ^ (kOnes * '\\'))) != 0;
}
#endif

#if defined(__SSE2__)
// A bit per byte of the 16 at `p`, set where the byte is not plain: signed, a byte below 0x20
// and one at or above 0x80 (negative) are both less than 0x20; then '"' and '\'.
int SpecialBytes16(const char* p) {
  const __m128i bytes = _mm_loadu_si128(reinterpret_cast<const __m128i*>(p));
  const __m128i special = _mm_or_si128(_mm_cmplt_epi8(bytes, _mm_set1_epi8(0x20)),
                                       _mm_or_si128(_mm_cmpeq_epi8(bytes, _mm_set1_epi8('"')),
                                                    _mm_cmpeq_epi8(bytes, _mm_set1_epi8('\\'))));
  return _mm_movemask_epi8(special);
}

// The length of the run of plain ASCII bytes that starts at text[from], 16 bytes at a time.
size_t PlainRun(std::string_view text, size_t from) {
  const char* p = text.data() + from;
  const size_t n = text.size() - from;
  size_t at = 0;
  for (; at + 16 <= n; at += 16) {
    if (const int mask = SpecialBytes16(p + at); mask != 0) return at + __builtin_ctz(mask);
  }
  if (at == n) return n;
  int mask;
  if (n >= 16) {
    // The last 16 bytes, overlapping those checked: bit k then stands for byte at + k.
    mask = SpecialBytes16(p + n - 16) >> (16 - (n - at));
  } else {
    char padded[16];
    std::memset(padded, 'a', sizeof padded);  // plain, so the padding never stops the run
    std::memcpy(padded, p + at, n - at);
    mask = SpecialBytes16(padded);
  }
  return mask != 0 ? at + __builtin_ctz(mask) : n;
}
#else
// The length of the run of plain ASCII bytes that starts at text[from].
size_t PlainRun(std::string_view text, size_t from) {
  size_t at = from;
  const size_t n = text.size();
  while (at + 8 <= n) {
    uint64_t word;
    std::memcpy(&word, text.data() + at, sizeof word);
    if (HasSpecialByte(word)) break;
    at += 8;
  }
  while (at < n && IsPlainAscii(static_cast<unsigned char>(text[at]))) ++at;
  return at - from;
}
#endif

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
  if (PlainRun(text, 0) == text.size()) {
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
    const size_t run = PlainRun(text, i);
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
  if (indent_ >= 0) NewLine(levels_.size());
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
  if (!empty && indent_ >= 0) NewLine(levels_.size());
  PutChar(bracket);
  return *this;
}

JsonWriter& JsonWriter::EndObject() { return Close('}'); }
JsonWriter& JsonWriter::EndArray() { return Close(']'); }

JsonWriter& JsonWriter::Key(std::string_view key) {
  assert(!levels_.empty() && !after_key_);
  BeforeItem();
  PutString(key);
  if (indent_ >= 0) {
    Put(": ", 2);
  } else {
    PutChar(':');
  }
  after_key_ = true;
  return *this;
}

JsonWriter& JsonWriter::PlainKey(std::string_view key) {
  assert(!levels_.empty() && !after_key_);
  assert(std::all_of(key.begin(), key.end(), [](char c) {
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_';
  }));
  BeforeItem();
  const size_t separator = indent_ >= 0 ? 2 : 1;
  char* at = Room(key.size() + 2 + separator);
  at[0] = '"';
  std::memcpy(at + 1, key.data(), key.size());
  at[key.size() + 1] = '"';
  at[key.size() + 2] = ':';
  if (separator == 2) at[key.size() + 3] = ' ';
  size_ += key.size() + 2 + separator;
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
