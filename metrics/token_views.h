#ifndef PLUMB_METRICS_TOKEN_VIEWS_H_
#define PLUMB_METRICS_TOKEN_VIEWS_H_

/// TokenViews: a normalized text's tokens without a std::string per token (normalize.h fills
/// it; answer_metrics.cc compares with it).

#include <cstddef>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

namespace plumb::metrics {

/// One text's tokens as views into characters the object owns, for callers that compare tokens
/// and then drop them (ScoreAnswer, NormalizeGold). Short pure-ASCII squad input fills it without
/// touching the heap. Not copyable: the views point into the object; refilling it invalidates
/// views taken before.
class TokenViews {
 public:
  TokenViews() = default;
  TokenViews(const TokenViews&) = delete;
  TokenViews& operator=(const TokenViews&) = delete;

  size_t size() const { return size_; }
  bool empty() const { return size_ == 0; }
  std::string_view operator[](size_t i) const {
    return std::string_view(chars_ + spans_[i].begin, spans_[i].size);
  }

  /// Replaces the contents with copies of `tokens`.
  void Assign(const std::vector<std::string>& tokens);

  /// For tokenizers: drops the contents and points `*chars` at room for `max_chars` characters
  /// and `*spans` at room for `max_tokens` spans into them; SetSize(count) then publishes the
  /// first `count` spans.
  struct Span {
    size_t begin;
    size_t size;
  };
  void Reset(size_t max_chars, size_t max_tokens, char** chars, Span** spans);
  void SetSize(size_t count) { size_ = count; }

 private:
  static constexpr size_t kInlineChars = 256;
  static constexpr size_t kInlineTokens = 129;  // kInlineChars / 2 + 1, the ASCII tokenizer's most

  // Left uninitialized: only the first size_ spans and the characters they cover are read.
  char inline_chars_[kInlineChars];
  Span inline_spans_[kInlineTokens];
  std::unique_ptr<char[]> heap_chars_;
  std::unique_ptr<Span[]> heap_spans_;
  size_t heap_chars_capacity_ = 0;
  size_t heap_spans_capacity_ = 0;
  char* chars_ = inline_chars_;
  Span* spans_ = inline_spans_;
  size_t size_ = 0;
};

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_TOKEN_VIEWS_H_
