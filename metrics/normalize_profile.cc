#include <cstring>

#include "metrics/normalize.h"

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

bool ParseNormalizationProfile(std::string_view name, NormalizationProfile* out) {
  if (name == "squad") {
    *out = NormalizationProfile::kSquad;
  } else if (name == "mlqa") {
    *out = NormalizationProfile::kMlqa;
  } else if (name == "unicode") {
    *out = NormalizationProfile::kUnicode;
  } else {
    return false;
  }
  return true;
}

const char* NormalizationProfileName(NormalizationProfile profile) {
  switch (profile) {
    case NormalizationProfile::kSquad:
      return "squad";
    case NormalizationProfile::kMlqa:
      return "mlqa";
    case NormalizationProfile::kUnicode:
      return "unicode";
  }
  return "squad";
}

}  // namespace plumb::metrics

namespace plumb::metrics {

std::vector<std::string> NormalizeTokens(std::string_view text, NormalizationProfile profile,
                                         std::string_view lang) {
  switch (profile) {
    case NormalizationProfile::kSquad:
      return NormalizeSquadTokens(text);
    case NormalizationProfile::kMlqa:
      return NormalizeMlqaTokens(text, lang);
    case NormalizationProfile::kUnicode:
      return NormalizeUnicodeTokens(text, lang);
  }
  return NormalizeSquadTokens(text);
}

void NormalizeTokens(std::string_view text, NormalizationProfile profile, std::string_view lang,
                     TokenViews* out) {
  if (profile == NormalizationProfile::kSquad) {
    NormalizeSquadTokens(text, out);
  } else {
    out->Assign(NormalizeTokens(text, profile, lang));
  }
}

}  // namespace plumb::metrics
