#ifndef PLUMB_RUNNER_BASE_JSON_WRITER_H_
#define PLUMB_RUNNER_BASE_JSON_WRITER_H_

/// JsonWriter appends JSON text to a string as values arrive, without building a tree first: the
/// run journal writes one line per case with it, and run.json (one entry per case) is written by
/// it in one pass. Output is RFC 8259 JSON in the same shape nlohmann's dump() gives:
///   - compact (indent < 0): no whitespace at all; indented: one member or element per line,
///     `indent` spaces per level, "key": value, empty containers as {} and [];
///   - strings escaped like dump(): \" \\ \b \f \n \r \t, other controls as \u00xx (lowercase
///     hex), everything else as UTF-8; an ill-formed UTF-8 sequence becomes U+FFFD (each maximal
///     invalid subpart, as metrics::NextCodePoint decodes it), so the output is always valid;
///   - doubles in the shortest form that reads back to the same double, with ".0" added to an
///     integral value so it stays a floating-point number when read back; NaN and infinities as
///     null (JSON has no spelling for them);
///   - object members in the order written (the caller chooses it).
/// The caller keeps the nesting right (Key before each member value, every Begin matched by an
/// End); a mismatch is a programming error, checked by assert in debug builds. Not thread-safe.
///
/// The writer owns its text and hands it over with Take(). It writes through a cursor into a
/// buffer with room to spare, so each piece is one memcpy rather than a std::string::append (a
/// journal line is some forty small pieces; the appends were most of its cost).

#include <algorithm>
#include <cassert>
#include <cstdint>
#include <cstring>
#include <nlohmann/json.hpp>
#include <string>
#include <string_view>
#include <vector>

namespace plumb {

class JsonWriter {
 public:
  explicit JsonWriter(int indent = -1) : indent_(indent) {}
  /// A writer for a part of a document that goes inside `depth` open objects of another writer
  /// with the same indent: parts of one document written apart (run.json's case entries) and
  /// put together by concatenation. It starts in an empty object at that depth; MarkFilled
  /// tells it that members came before.
  JsonWriter(int indent, size_t depth) : indent_(indent), levels_(depth) {}
  /// An indented writer writes what lies deeper than `depth` open containers compact, on the
  /// line of the member or element that holds it: run.json gives each case entry one line.
  void CompactDeeperThan(size_t depth) { indented_depth_ = depth; }

  /// The text written so far; the writer starts again empty.
  std::string Take();
  /// The text written so far, valid until the next write.
  std::string_view text() const { return std::string_view(buffer_.data(), size_); }
  size_t size() const { return size_; }
  /// Starts again empty but keeps the buffer, for a writer reused across many documents.
  void Clear();
  /// Room for `bytes` of text in all, set aside at once: a writer whose size is known roughly
  /// then grows without copying what it holds (and touching fresh memory) at each doubling.
  void Reserve(size_t bytes) { buffer_.reserve(bytes); }
  /// A newline after a top-level value: the separator of JSON lines.
  JsonWriter& EndLine();
  /// Drops the text written so far but keeps the nesting: for a writer whose text is handed
  /// out in pieces as it grows.
  void DropText() { size_ = 0; }
  /// Counts the innermost open container as holding items already (written by another writer,
  /// see JsonWriter(indent, depth)), so the next item gets its comma and the close its newline.
  JsonWriter& MarkFilled();

  JsonWriter& BeginObject();
  JsonWriter& EndObject();
  JsonWriter& BeginArray();
  JsonWriter& EndArray();
  /// The next member's name; its value follows.
  JsonWriter& Key(std::string_view key);
  /// Key() for a name spelled in the source, of ASCII letters, digits and '_' (checked by assert
  /// in debug builds): written without looking for bytes to escape. The hot record writers use
  /// it for their fixed member names.
  JsonWriter& PlainKey(std::string_view key);

  JsonWriter& String(std::string_view text);
  JsonWriter& Int(int64_t value);
  JsonWriter& Double(double value);
  JsonWriter& Bool(bool value);
  JsonWriter& Null();
  /// An array of strings.
  JsonWriter& StringArray(const std::vector<std::string>& texts);
  /// A whole nlohmann value, laid out with this writer's indentation (its object keys in
  /// nlohmann's sorted order).
  JsonWriter& Value(const nlohmann::json& value);
  /// Text that is already one complete JSON value (not checked), copied as it is.
  JsonWriter& Raw(std::string_view json);

  /// Key(key) followed by the value: shorthands for the common member forms.
  JsonWriter& Member(std::string_view key, std::string_view text) { return Key(key).String(text); }
  JsonWriter& Member(std::string_view key, const char* text) { return Key(key).String(text); }
  JsonWriter& Member(std::string_view key, const std::string& text) {
    return Key(key).String(text);
  }
  JsonWriter& Member(std::string_view key, int64_t value) { return Key(key).Int(value); }
  JsonWriter& Member(std::string_view key, int value) { return Key(key).Int(value); }
  JsonWriter& Member(std::string_view key, double value) { return Key(key).Double(value); }
  JsonWriter& Member(std::string_view key, bool value) { return Key(key).Bool(value); }
  JsonWriter& Member(std::string_view key, const std::vector<std::string>& texts);

 private:
  /// Separator and line break before a value or key at the current level.
  void BeforeItem();
  void NewLine(size_t depth);
  JsonWriter& Close(char bracket);

  /// Room for `n` more bytes at the cursor; the caller writes them and advances size_.
  char* Room(size_t n) {
    if (size_ + n > buffer_.size()) Grow(n);
    return &buffer_[size_];
  }
  void Grow(size_t n);
  void Put(const char* data, size_t n) {
    std::memcpy(Room(n), data, n);
    size_ += n;
  }
  void Put(std::string_view text) { Put(text.data(), text.size()); }
  void PutChar(char c) {
    *Room(1) = c;
    size_ += 1;
  }
  void PutString(std::string_view text);
  void PutDouble(double value);

  /// Per open container, innermost last: 1 while it has no item yet. The first levels live in
  /// the writer itself, so a writer allocates nothing for its nesting in practice.
  class LevelStack {
   public:
    explicit LevelStack(size_t depth = 0) {
      for (size_t i = 0; i < depth; ++i) Push();
    }
    bool empty() const { return size_ == 0; }
    size_t size() const { return size_; }
    void Push() {
      if (size_ < kInline) {
        inline_[size_] = 1;
      } else {
        overflow_.push_back(1);
      }
      ++size_;
    }
    void Pop() {
      --size_;
      if (size_ >= kInline) overflow_.pop_back();
    }
    char& Back() { return size_ <= kInline ? inline_[size_ - 1] : overflow_.back(); }
    void Clear() {
      size_ = 0;
      overflow_.clear();
    }

   private:
    static constexpr size_t kInline = 32;
    char inline_[kInline];
    std::vector<char> overflow_;
    size_t size_ = 0;
  };

  std::string buffer_;  // [0, size_) is the text; the rest is room
  size_t size_ = 0;
  /// Whether the items of the innermost open container (at depth `levels`) go one per line.
  bool Indented(size_t levels) const { return indent_ >= 0 && levels <= indented_depth_; }

  int indent_;
  size_t indented_depth_ = SIZE_MAX;
  LevelStack levels_;
  bool after_key_ = false;
};

// In the header, so that a name spelled in the source is copied with its length known.
inline JsonWriter& JsonWriter::PlainKey(std::string_view key) {
  assert(!levels_.empty() && !after_key_);
  assert(std::all_of(key.begin(), key.end(), [](char c) {
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_';
  }));
  BeforeItem();
  const size_t separator = Indented(levels_.size()) ? 2 : 1;
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

}  // namespace plumb

#endif  // PLUMB_RUNNER_BASE_JSON_WRITER_H_
