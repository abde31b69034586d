// The `unicode` profile (SPEC §6.1) on hand-worked examples. The steps (normalize_unicode.cc):
// NFKC, full case folding, P* deleted, UAX #29 words kept when their ICU rule status is not
// UBRK_WORD_NONE, Han/Hiragana/Katakana characters as single tokens, articles dropped.
//
// Sources for the hand-working: NFKC and case folding from the Unicode Character Database
// (UnicodeData.txt decompositions, CaseFolding.txt C+F), word boundaries from UAX #29 (a break
// falls between letters and spaces, between a digit and an ideograph, and around any symbol;
// MidNumLet "'" between letters does not break), general categories from UnicodeData.txt.
// Article lists: French, Italian, Portuguese from memory / common practice; the others are the
// MLQA script's (from memory, see normalize_mlqa_test.cc).

#include <catch2/catch.hpp>
#include <string>
#include <vector>

#include "metrics/normalize.h"

namespace {

using plumb::metrics::NormalizeUnicodeTokens;
using Tokens = std::vector<std::string>;

TEST_CASE("unicode fr: L'été à Saint-Malo!", "[unicode]") {
  // fold: "l'été à saint-malo!"; delete ' (Po), - (Pd), ! (Po): "lété à saintmalo";
  // words: lété, à, saintmalo. "l" is an article only when it stands apart from its noun.
  CHECK(NormalizeUnicodeTokens("L'\u00e9t\u00e9 \u00e0 Saint-Malo!", "fr") ==
        Tokens{"l\u00e9t\u00e9", "\u00e0", "saintmalo"});
  // Typographic apostrophe U+2019 (Pf) written apart: "l été" -> drop "l".
  CHECK(NormalizeUnicodeTokens("L\u2019 \u00e9t\u00e9", "fr") == Tokens{"\u00e9t\u00e9"});
  // "Le port de l'île": drop "le"; "de" is a preposition, not in the list.
  CHECK(NormalizeUnicodeTokens("Le port de l'\u00eele", "fr") == Tokens{"port", "de", "l\u00eele"});
  // Decomposed input composes under NFKC: e + U+0301 is é.
  CHECK(NormalizeUnicodeTokens("E\u0301te\u0301", "fr") == Tokens{"\u00e9t\u00e9"});
  // « » are Pi/Pf.
  CHECK(NormalizeUnicodeTokens("\u00ab Les horaires \u00bb", "fr") == Tokens{"horaires"});
}

TEST_CASE("unicode de: Der Fährhafen, and case folding of ß", "[unicode]") {
  CHECK(NormalizeUnicodeTokens("Der F\u00e4hrhafen", "de") == Tokens{"f\u00e4hrhafen"});
  // Decomposed a + U+0308 composes to ä under NFKC.
  CHECK(NormalizeUnicodeTokens("der Fa\u0308hrhafen", "de") == Tokens{"f\u00e4hrhafen"});
  // CaseFolding.txt: 00DF; F; 0073 0073 and 1E9E; F; 0073 0073.
  CHECK(NormalizeUnicodeTokens("STRASSE", "de") == Tokens{"strasse"});
  CHECK(NormalizeUnicodeTokens("stra\u00dfe", "de") == Tokens{"strasse"});
  CHECK(NormalizeUnicodeTokens("STRA\u1e9eE", "de") == Tokens{"strasse"});
  CHECK(NormalizeUnicodeTokens("Die F\u00e4hre f\u00e4hrt um 10 Uhr.", "de") ==
        Tokens{"f\u00e4hre", "f\u00e4hrt", "um", "10", "uhr"});
}

TEST_CASE("unicode ja: 乗船は出発の10分前に締め切ります。", "[unicode]") {
  // "。" (U+3002, Po) is deleted; "10" is a number word (a digit and an ideograph always break);
  // every Han and kana character becomes its own token, whatever ICU's dictionary groups.
  CHECK(NormalizeUnicodeTokens("\u4e57\u8239\u306f\u51fa\u767a\u306e10\u5206\u524d\u306b"
                               "\u7de0\u3081\u5207\u308a\u307e\u3059\u3002",
                               "ja") ==
        Tokens{"\u4e57", "\u8239", "\u306f", "\u51fa", "\u767a", "\u306e", "10", "\u5206", "\u524d",
               "\u306b", "\u7de0", "\u3081", "\u5207", "\u308a", "\u307e", "\u3059"});
  // フェリー: "ー" (U+30FC) is Common script but its Script_Extensions are Hiragana, Katakana.
  CHECK(NormalizeUnicodeTokens("\u30d5\u30a7\u30ea\u30fc", "ja") ==
        Tokens{"\u30d5", "\u30a7", "\u30ea", "\u30fc"});
  // Halfwidth ﾌｪﾘｰ is the same after NFKC; halfwidth ｶﾞ composes to ガ (one token).
  CHECK(NormalizeUnicodeTokens("\uff8c\uff6a\uff98\uff70", "ja") ==
        Tokens{"\u30d5", "\u30a7", "\u30ea", "\u30fc"});
  CHECK(NormalizeUnicodeTokens("\uff76\uff9e", "ja") == Tokens{"\u30ac"});
}

TEST_CASE("unicode zh: ideographs one by one, Latin and digits as words", "[unicode]") {
  // 渡轮每天早上七点开船。
  CHECK(NormalizeUnicodeTokens("\u6e21\u8f6e\u6bcf\u5929\u65e9\u4e0a\u4e03\u70b9\u5f00\u8239"
                               "\u3002",
                               "zh") == Tokens{"\u6e21", "\u8f6e", "\u6bcf", "\u5929", "\u65e9",
                                               "\u4e0a", "\u4e03", "\u70b9", "\u5f00", "\u8239"});
  // 乘坐3号渡轮，Ferry渡轮: ideograph|digit and letter|ideograph are breaks; "，" is Po.
  CHECK(NormalizeUnicodeTokens("\u4e58\u57503\u53f7\u6e21\u8f6e\uff0cFerry\u6e21\u8f6e", "zh") ==
        Tokens{"\u4e58", "\u5750", "3", "\u53f7", "\u6e21", "\u8f6e", "ferry", "\u6e21", "\u8f6e"});
  // Extension B (U+20000) and the U+9FA6.. tail are Han too.
  CHECK(NormalizeUnicodeTokens("\U00020000\u9fa6", "zh") == Tokens{"\U00020000", "\u9fa6"});
}

TEST_CASE("unicode: NFKC before folding before punctuation removal", "[unicode]") {
  // ㎒ (U+3392) is <square> 004D 0048 007A: NFKC gives "MHz", the fold then "mhz".
  CHECK(NormalizeUnicodeTokens("\u3392", "") == Tokens{"mhz"});
  // Ⅰ (U+2160) is <compat> 0049.
  CHECK(NormalizeUnicodeTokens("\u2160", "") == Tokens{"i"});
  // NFKC creates punctuation: ⑴ (U+2474, So) is "(1)", ⒈ (U+2488, No) is "1."; fullwidth
  // ＡＢＣ！ is "ABC!".
  CHECK(NormalizeUnicodeTokens("\u2474 \u2488 \uff21\uff22\uff23\uff01", "") ==
        Tokens{"1", "1", "abc"});
  // Greek: fold maps both σ and final ς to σ, so ΟΔΟΣ and οδος meet.
  CHECK(NormalizeUnicodeTokens("\u039f\u0394\u039f\u03a3", "el") ==
        Tokens{"\u03bf\u03b4\u03bf\u03c3"});
  CHECK(NormalizeUnicodeTokens("\u03bf\u03b4\u03bf\u03c2", "el") ==
        Tokens{"\u03bf\u03b4\u03bf\u03c3"});
  // Cherokee folds to the capitals (CaseFolding.txt AB70; C; 13A0).
  CHECK(NormalizeUnicodeTokens("\uab70", "") == Tokens{"\u13a0"});
}

TEST_CASE("unicode: symbols, spaces and emoji are not words", "[unicode]") {
  // '+' is Sm, '€' Sc, U+1F6A2 So: kept by the P* step, dropped as UBRK_WORD_NONE segments.
  CHECK(NormalizeUnicodeTokens("C++ costs \u20ac5 \U0001f6a2", "en") == Tokens{"c", "costs", "5"});
  // "3.5": the full stop is deleted before segmentation, as squad and mlqa delete it.
  CHECK(NormalizeUnicodeTokens("3.5 km", "en") == Tokens{"35", "km"});
  CHECK(NormalizeUnicodeTokens("  \u00a0\t", "en") == Tokens{});
  CHECK(NormalizeUnicodeTokens("", "en") == Tokens{});
}

TEST_CASE("unicode: articles by language", "[unicode]") {
  CHECK(NormalizeUnicodeTokens("The ferry", "en") == Tokens{"ferry"});
  CHECK(NormalizeUnicodeTokens("The ferry", "") == Tokens{"the", "ferry"});
  CHECK(NormalizeUnicodeTokens("The ferry", "de") == Tokens{"the", "ferry"});
  CHECK(NormalizeUnicodeTokens("Gli orari dei traghetti", "it") ==
        Tokens{"orari", "dei", "traghetti"});
  CHECK(NormalizeUnicodeTokens("O barco e a balsa", "pt") == Tokens{"barco", "e", "balsa"});
  CHECK(NormalizeUnicodeTokens("Los barcos", "es") == Tokens{"barcos"});
  // Vietnamese decomposed "của" composes under NFKC, so the article goes (mlqa keeps it).
  CHECK(NormalizeUnicodeTokens("Cu\u0309a ta\u0300u", "vi") == Tokens{"t\u00e0u"});
}

TEST_CASE("unicode ar: the joined article is stripped when two letters remain", "[unicode]") {
  // البحر -> بحر; a lone ال goes; الم (alif-lam + one letter) is kept whole.
  CHECK(NormalizeUnicodeTokens("\u0627\u0644\u0628\u062d\u0631", "ar") ==
        Tokens{"\u0628\u062d\u0631"});
  CHECK(NormalizeUnicodeTokens("\u0627\u0644 \u0627\u0644\u0645", "ar") ==
        Tokens{"\u0627\u0644\u0645"});
  CHECK(NormalizeUnicodeTokens("\u0627\u0644\u0628\u062d\u0631", "en") ==
        Tokens{"\u0627\u0644\u0628\u062d\u0631"});
}

TEST_CASE("unicode: invalid UTF-8 decodes to U+FFFD, which is a symbol", "[unicode]") {
  // U+FFFD is So: a UBRK_WORD_NONE segment of its own.
  CHECK(NormalizeUnicodeTokens("\xff"
                               "ferry",
                               "en") == Tokens{"ferry"});
}

}  // namespace
