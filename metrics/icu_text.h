#ifndef PLUMB_METRICS_ICU_TEXT_H_
#define PLUMB_METRICS_ICU_TEXT_H_

/// The ICU text operations the `mlqa` and `unicode` normalization profiles share (SPEC §6.1):
/// UTF-8 <-> UTF-16, NFKC, case mapping, the character classes Python's str and re use, and
/// UAX #29 word segments. Every function is pure and safe to call from any thread.

#include <unicode/uchar.h>
#include <unicode/unistr.h>

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace plumb::metrics {

/// Decodes UTF-8. Each maximal ill-formed subsequence becomes one U+FFFD (Unicode §3.9 best
/// practice), which is what Python's bytes.decode("utf-8", errors="replace") produces.
icu::UnicodeString FromUtf8(std::string_view utf8);
std::string ToUtf8(const icu::UnicodeString& text);

/// NFKC through ICU's Normalizer2 NFKC instance. Returns false, with a sentence in `err`, only
/// when ICU's normalization data cannot be loaded (a broken ICU install).
bool Nfkc(const icu::UnicodeString& text, icu::UnicodeString* out, std::string* err);

/// Full default case folding (CaseFolding.txt C + F, U_FOLD_CASE_DEFAULT): "ß" -> "ss".
icu::UnicodeString FoldCase(const icu::UnicodeString& text);

/// Full lowercase in the root locale, with the Final_Sigma context: what Python's str.lower()
/// computes ("İ" -> "i̇", "ΟΔΟΣ" -> "οδος").
icu::UnicodeString LowerCase(const icu::UnicodeString& text);

/// General category P* (Pc, Pd, Ps, Pe, Pi, Pf, Po).
bool IsPunctuation(UChar32 c);

/// Python's str.isspace(), which str.split() splits on: bidi class WS, B or S, or category Zs.
bool IsPythonWhitespace(UChar32 c);

/// Python re's \w for str patterns: str.isalnum() (categories L*, or any Numeric_Type) or '_'.
bool IsPythonWordChar(UChar32 c);

/// Python's str.split() with no arguments: appends each maximal run of non-whitespace (as
/// IsPythonWhitespace defines it) to `tokens`, as UTF-8.
void AppendPythonSplit(const icu::UnicodeString& text, std::vector<std::string>* tokens);

/// Script_Extensions include Han, Hiragana or Katakana (so "ー" and "々" count).
bool IsHanOrKana(UChar32 c);

/// One UAX #29 word segment: UTF-16 offsets [start, limit) into the segmented text, and ICU's
/// rule status (UBRK_WORD_NONE for spaces, punctuation and symbols; NUMBER, LETTER, KANA, IDEO
/// ranges otherwise).
struct WordSegment {
  int32_t start = 0;
  int32_t limit = 0;
  int32_t status = 0;
};

/// Splits `text` at the boundaries of ICU's root-locale word BreakIterator (UAX #29, with ICU's
/// dictionaries for Chinese, Japanese and the South-East Asian scripts). The segments tile the
/// text. Returns false, with a sentence in `err`, only when ICU's break data cannot be loaded.
bool WordSegments(const icu::UnicodeString& text, std::vector<WordSegment>* segments,
                  std::string* err);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_ICU_TEXT_H_
