// The `unicode` profile (SPEC §6.1), plumb's own: a normalization that treats every script alike
// instead of reproducing one evaluation script. The steps, in order:
//
//   1. NFKC (ICU Normalizer2). First, because compatibility characters map to forms the later
//      steps must see: "Ⅰ" (U+2160) and "㎒" become "I" and "MHz", whose capitals only the fold
//      after NFKC lowers; "！" (U+FF01) becomes "!", and NFKC even creates punctuation out of
//      symbols and numbers: "⑴" (U+2474, So) is "(1)", "⒈" (U+2488, No) is "1.".
//   2. Full case folding (U_FOLD_CASE_DEFAULT): "STRASSE" and "straße" both become "strasse".
//      Case folding, not lowercasing, because it is the Unicode relation for caseless matching.
//   3. Delete P* characters. After NFKC so the punctuation NFKC creates goes too; before word
//      segmentation so punctuation is deleted rather than split at, like the squad and mlqa
//      profiles do: "Saint-Malo" is one token "saintmalo" under all three.
//   4. UAX #29 words: ICU's root-locale word BreakIterator; only segments whose rule status is
//      not UBRK_WORD_NONE (letters, numbers, kana, ideographs) are kept, so spaces and symbols
//      ("+", "€", emoji) go.
//   5. Segments holding Han, Hiragana or Katakana characters are cut into one token per such
//      character (ICU's dictionary groups "出発" into one word; gold answers need not agree with
//      its dictionary). Combining marks stay with the character before them; any other
//      characters in such a segment stay together as one token.
//   6. Drop article tokens for `lang` (ArticleWords); for ar, strip the joined article "ال".
//
// ICU's data is compiled into libicudata, so steps 1 and 4 fail only on a broken install; then
// NFKC is skipped and tokens fall back to whitespace splitting, which still compares answers
// rather than calling everything equal.

#include <unicode/ubrk.h>

#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "metrics/articles.h"
#include "metrics/icu_text.h"
#include "metrics/normalize.h"

namespace plumb::metrics {

namespace {

icu::UnicodeString RemovePunctuation(const icu::UnicodeString& text) {
  icu::UnicodeString kept;
  for (int32_t i = 0; i < text.length(); i = text.moveIndex32(i, 1)) {
    const UChar32 c = text.char32At(i);
    if (!IsPunctuation(c)) kept.append(c);
  }
  return kept;
}

bool IsMark(UChar32 c) { return (U_GET_GC_MASK(c) & U_GC_M_MASK) != 0; }

bool HasHanOrKana(const icu::UnicodeString& segment) {
  for (int32_t i = 0; i < segment.length(); i = segment.moveIndex32(i, 1)) {
    if (IsHanOrKana(segment.char32At(i))) return true;
  }
  return false;
}

void AppendSegmentTokens(const icu::UnicodeString& segment, std::vector<std::string>* tokens) {
  if (!HasHanOrKana(segment)) {
    tokens->push_back(ToUtf8(segment));
    return;
  }
  icu::UnicodeString current;
  bool current_is_han_or_kana = false;
  auto flush = [&] {
    if (!current.isEmpty()) tokens->push_back(ToUtf8(current));
    current.remove();
  };
  for (int32_t i = 0; i < segment.length(); i = segment.moveIndex32(i, 1)) {
    const UChar32 c = segment.char32At(i);
    // Marks first: U+3099 (combining voiced sound mark) has Hiragana and Katakana among its
    // Script_Extensions but belongs to the kana before it.
    if (IsMark(c)) {
      current.append(c);
    } else if (IsHanOrKana(c)) {
      flush();
      current.append(c);
      current_is_han_or_kana = true;
    } else {
      if (current_is_han_or_kana) flush();
      current.append(c);
      current_is_han_or_kana = false;
    }
  }
  flush();
}

// Arabic writes its article joined to the noun ("البحر", the sea). Stripping it only when at
// least two characters remain is the usual guard of Arabic light stemmers (common practice,
// from memory), so short words that merely begin with alif-lam keep them.
std::vector<std::string> StripArabicArticle(std::vector<std::string> tokens) {
  std::vector<std::string> out;
  for (std::string& token : tokens) {
    if (token == kArabicArticle) continue;
    if (token.compare(0, kArabicArticle.size(), kArabicArticle) == 0) {
      const icu::UnicodeString rest =
          FromUtf8(std::string_view(token).substr(kArabicArticle.size()));
      if (rest.countChar32() >= 2) token = ToUtf8(rest);
    }
    out.push_back(std::move(token));
  }
  return out;
}

std::vector<std::string> DropArticles(std::vector<std::string> tokens, std::string_view lang) {
  if (lang == "ar") return StripArabicArticle(std::move(tokens));
  const std::vector<std::string_view>& articles = ArticleWords(lang);
  if (articles.empty()) return tokens;
  std::vector<std::string> out;
  for (std::string& token : tokens) {
    bool is_article = false;
    for (std::string_view article : articles) {
      if (token == article) is_article = true;
    }
    if (!is_article) out.push_back(std::move(token));
  }
  return out;
}

}  // namespace

std::vector<std::string> NormalizeUnicodeTokens(std::string_view text, std::string_view lang) {
  const icu::UnicodeString decoded = FromUtf8(text);
  icu::UnicodeString composed;
  std::string err;
  if (!Nfkc(decoded, &composed, &err)) composed = decoded;
  const icu::UnicodeString normalized = RemovePunctuation(FoldCase(composed));

  std::vector<std::string> tokens;
  std::vector<WordSegment> segments;
  if (WordSegments(normalized, &segments, &err)) {
    for (const WordSegment& segment : segments) {
      if (segment.status < UBRK_WORD_NONE_LIMIT) continue;
      AppendSegmentTokens(normalized.tempSubStringBetween(segment.start, segment.limit), &tokens);
    }
  } else {
    AppendPythonSplit(normalized, &tokens);
  }
  return DropArticles(std::move(tokens), lang);
}

}  // namespace plumb::metrics
