#include "metrics/token_views.h"

#include <cstring>

namespace plumb::metrics {

void TokenViews::Reset(size_t max_chars, size_t max_tokens, char** chars, Span** spans) {
  size_ = 0;
  if (max_chars <= kInlineChars) {
    chars_ = inline_chars_;
  } else {
    if (max_chars > heap_chars_capacity_) {
      heap_chars_ = std::make_unique<char[]>(max_chars);
      heap_chars_capacity_ = max_chars;
    }
    chars_ = heap_chars_.get();
  }
  if (max_tokens <= kInlineTokens) {
    spans_ = inline_spans_;
  } else {
    if (max_tokens > heap_spans_capacity_) {
      heap_spans_ = std::make_unique<Span[]>(max_tokens);
      heap_spans_capacity_ = max_tokens;
    }
    spans_ = heap_spans_.get();
  }
  *chars = chars_;
  *spans = spans_;
}

void TokenViews::Assign(const std::vector<std::string>& tokens) {
  size_t chars = 0;
  for (const std::string& token : tokens) chars += token.size();
  char* out = nullptr;
  Span* spans = nullptr;
  Reset(chars, tokens.size(), &out, &spans);
  size_t n = 0;
  for (size_t i = 0; i < tokens.size(); ++i) {
    if (!tokens[i].empty()) std::memcpy(out + n, tokens[i].data(), tokens[i].size());
    spans[i] = Span{n, tokens[i].size()};
    n += tokens[i].size();
  }
  SetSize(tokens.size());
}

}  // namespace plumb::metrics
