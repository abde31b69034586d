#ifndef PLUMB_RUNNER_BASE_JSON_CURSOR_H_
#define PLUMB_RUNNER_BASE_JSON_CURSOR_H_

/// Where a strict one-pass JSON reader stands in its text, with the moves the three of them
/// share: the JSONL case reader (runner/suite/jsonl_reader.h), the plain case-line reader
/// (runner/suite/plain_case_line.h) and the flat-reply reader (runner/pipeline/flat_reply.h). A
/// reader derives from it and reads text_ from at_ on. Pure.

#include <cstddef>
#include <string_view>

namespace plumb {

class JsonCursor {
 protected:
  explicit JsonCursor(std::string_view text) : text_(text) {}

  /// RFC 8259 §2: whitespace is space, tab, line feed and carriage return, nothing else.
  void SkipSpace() {
    while (at_ < text_.size() &&
           (text_[at_] == ' ' || text_[at_] == '\t' || text_[at_] == '\r' || text_[at_] == '\n')) {
      ++at_;
    }
  }
  /// Steps over `c` if it comes next.
  bool Take(char c) {
    if (at_ >= text_.size() || text_[at_] != c) return false;
    ++at_;
    return true;
  }
  /// Steps over `word` (a literal such as "null", or the byte-order mark) if it comes next.
  bool TakeWord(std::string_view word) {
    if (text_.substr(at_, word.size()) != word) return false;
    at_ += word.size();
    return true;
  }
  /// Steps over the ASCII digits that come next; returns how many.
  size_t TakeDigits() {
    const size_t start = at_;
    while (at_ < text_.size() && text_[at_] >= '0' && text_[at_] <= '9') ++at_;
    return at_ - start;
  }
  /// The 1-based code-point column of at_: the bytes so far less the UTF-8 continuation bytes
  /// among them. Exact when only strings hold multi-byte sequences and each string read counts
  /// its own into continuation_bytes_ (ReadJsonString does, when given it).
  int Column() const { return static_cast<int>(at_ - continuation_bytes_) + 1; }

  std::string_view text_;
  size_t at_ = 0;
  size_t continuation_bytes_ = 0;
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_BASE_JSON_CURSOR_H_
