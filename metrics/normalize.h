#ifndef PLUMB_METRICS_NORMALIZE_H_
#define PLUMB_METRICS_NORMALIZE_H_

/// Answer normalization profiles (SPEC §6.1). Each turns a raw answer into the token list the
/// answer metrics compare. Pure functions over UTF-8 text; invalid UTF-8 is decoded with U+FFFD
/// replacement (as Python's errors="replace" would) so no input is ever rejected.

#include <cstddef>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

namespace plumb::metrics {

enum class NormalizationProfile {
  kSquad,    // the SQuAD v1.1/v2.0 evaluation script's normalize_answer, as Python 3 runs it
  kMlqa,     // the MLQA evaluation script's normalization, with per-language articles
  kUnicode,  // NFKC, full case folding, P* removed, UAX #29 words
};

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

/// Parses "squad" | "mlqa" | "unicode"; returns false for anything else.
bool ParseNormalizationProfile(std::string_view name, NormalizationProfile* out);
const char* NormalizationProfileName(NormalizationProfile profile);

/// The profile's tokens for `text`. `lang` is an ISO 639-1 code used by mlqa and unicode.
std::vector<std::string> NormalizeTokens(std::string_view text, NormalizationProfile profile,
                                         std::string_view lang);

/// The same tokens as views, refilling `out`; for squad, pure-ASCII text takes one pass and no
/// allocation (up to 256 bytes).
void NormalizeTokens(std::string_view text, NormalizationProfile profile, std::string_view lang,
                     TokenViews* out);

/// SQuAD's normalize_answer(text): the tokens joined by single spaces.
std::string NormalizeSquad(std::string_view text);

/// The per-profile tokenizers NormalizeTokens dispatches to.
std::vector<std::string> NormalizeSquadTokens(std::string_view text);
void NormalizeSquadTokens(std::string_view text, TokenViews* out);
std::vector<std::string> NormalizeMlqaTokens(std::string_view text, std::string_view lang);
std::vector<std::string> NormalizeUnicodeTokens(std::string_view text, std::string_view lang);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_NORMALIZE_H_
