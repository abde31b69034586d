// The `mlqa` profile (SPEC §6.1) on hand-worked examples.
//
// Source: the normalization of the MLQA evaluation script, mlqa_evaluation_v1.py (Lewis et al.
// 2020, "MLQA: Evaluating Cross-lingual Extractive Question Answering"), transcribed FROM MEMORY
// as follows (tests/reference/mlqa_normalize_reference.py holds the same text as Python):
//
//   PUNCT = {chr(i) for i in range(sys.maxunicode)
//            if unicodedata.category(chr(i)).startswith('P')}.union(string.punctuation)
//   WHITESPACE_LANGS = ['en', 'es', 'hi', 'vi', 'de', 'ar']
//   MIXED_SEGMENTATION_LANGS = ['zh']
//   def whitespace_tokenize(text): return text.split()
//   def mixed_segmentation(text):
//       segs_out = []; temp_str = ""
//       for char in text:
//           if re.search(r'[\u4e00-\u9fa5]', char) or char in PUNCT:
//               if temp_str != "":
//                   segs_out.extend(whitespace_tokenize(temp_str)); temp_str = ""
//               segs_out.append(char)
//           else:
//               temp_str += char
//       if temp_str != "": segs_out.extend(whitespace_tokenize(temp_str))
//       return segs_out
//   def normalize_answer(s, lang):
//       remove_articles(text, lang):
//           en: re.sub(r'\b(a|an|the)\b', ' ', text)
//           es: re.sub(r'\b(un|una|unos|unas|el|la|los|las)\b', ' ', text)
//           hi: text
//           vi: re.sub(r'\b(của|là|cái|chiếc|những)\b', ' ', text)
//           de: re.sub(r'\b(ein|eine|einen|einem|eines|einer|der|die|das|den|dem|des)\b', ' ',
//                      text)
//           ar: re.sub('\sال^|ال', ' ', text)
//           zh: text
//           else: raise Exception('Unknown Language {}'.format(lang))
//       white_space_fix(text, lang): whitespace_tokenize for WHITESPACE_LANGS, mixed_segmentation
//           for MIXED_SEGMENTATION_LANGS, else raise; ' '.join(t for t in tokens if t.strip())
//       remove_punc(text): ''.join(ch for ch in text if ch not in PUNCT)
//       lower(text): text.lower()
//       return white_space_fix(remove_articles(remove_punc(lower(s)), lang), lang)
//   tokens (f1_score) = normalize_answer(s, lang).split()
//
// Python semantics the hand-working below relies on (Python 3.11 documentation): str.lower() is
// full lowercasing with Final_Sigma; re's \w is str.isalnum() or '_', so combining marks are not
// \w; str.split() splits on str.isspace() characters (NBSP, U+0085 and U+3000 among them, U+200B
// not). Each expected value is worked out by hand from the definition above.

#include <catch2/catch.hpp>
#include <string>
#include <vector>

#include "metrics/normalize.h"

namespace {

using plumb::metrics::NormalizeMlqaTokens;
using Tokens = std::vector<std::string>;

TEST_CASE("mlqa en: lower, punctuation deleted, whole-word articles", "[mlqa]") {
  // "the ferry leaves at 10:30!" -> remove_punc "the ferry leaves at 1030" -> " ferry ...".
  CHECK(NormalizeMlqaTokens("The ferry leaves at 10:30!", "en") ==
        Tokens{"ferry", "leaves", "at", "1030"});
  // \b(a|an|the)\b needs a word boundary on both sides: "another", "theatre" stay.
  CHECK(NormalizeMlqaTokens("Another theatre, an anthem", "en") ==
        Tokens{"another", "theatre", "anthem"});
  // '_' is \w but also in PUNCT (Pc), so it is gone before the article regex runs: "a_b" is "ab".
  CHECK(NormalizeMlqaTokens("a_b the_end", "en") == Tokens{"ab", "theend"});
}

TEST_CASE("mlqa: a combining mark ends a word-character run, so 'a' + U+0301 loses its 'a'",
          "[mlqa]") {
  // "a\u0301 ferry": the run "a" is followed by U+0301 (Mn, not \w), a boundary; it becomes ' '.
  CHECK(NormalizeMlqaTokens("a\u0301 ferry", "en") == Tokens{"\u0301", "ferry"});
  // Spanish "la" inside a decomposed "la\u0300" is removed the same way.
  CHECK(NormalizeMlqaTokens("la\u0300s", "es") == Tokens{"\u0300s"});
}

TEST_CASE("mlqa es: Unicode punctuation and Spanish articles", "[mlqa]") {
  // "¡el niño y la lancha!" -> "el niño y la lancha" -> " niño y   lancha".
  CHECK(NormalizeMlqaTokens("\u00a1El ni\u00f1o y LA lancha!", "es") ==
        Tokens{"ni\u00f1o", "y", "lancha"});
  CHECK(NormalizeMlqaTokens("Unos barcos, unas lanchas", "es") == Tokens{"barcos", "lanchas"});
}

TEST_CASE("mlqa de: str.lower() keeps ß, so STRASSE and Straße differ", "[mlqa]") {
  CHECK(NormalizeMlqaTokens("Der F\u00e4hrhafen und die STRASSE", "de") ==
        Tokens{"f\u00e4hrhafen", "und", "strasse"});
  CHECK(NormalizeMlqaTokens("Stra\u00dfe", "de") == Tokens{"stra\u00dfe"});
  CHECK(NormalizeMlqaTokens("Einem, eines; DAS.", "de") == Tokens{});
}

TEST_CASE("mlqa vi: precomposed articles match, decomposed ones do not", "[mlqa]") {
  // NFC "của tàu": the run "của" is an article.
  CHECK(NormalizeMlqaTokens("C\u1ee7a t\u00e0u", "vi") == Tokens{"t\u00e0u"});
  // NFD "cu\u0309a": the runs are "cu" and "a", neither in the Vietnamese list.
  CHECK(NormalizeMlqaTokens("Cu\u0309a ta\u0300u", "vi") == Tokens{"cu\u0309a", "ta\u0300u"});
  CHECK(NormalizeMlqaTokens("NH\u1eeeNG chi\u1ebfc ph\u00e0", "vi") == Tokens{"ph\u00e0"});
}

TEST_CASE("mlqa ar: every alif-lam becomes a space, inside words too", "[mlqa]") {
  // "البحر والسفن" -> " بحر و سفن".
  CHECK(NormalizeMlqaTokens("\u0627\u0644\u0628\u062d\u0631 \u0648\u0627\u0644\u0633\u0641\u0646",
                            "ar") == Tokens{"\u0628\u062d\u0631", "\u0648", "\u0633\u0641\u0646"});
  // "مال" (money) ends in alif-lam: "م ". The first branch '\sال^' never matches.
  CHECK(NormalizeMlqaTokens("\u0645\u0627\u0644", "ar") == Tokens{"\u0645"});
  // Arabic comma U+060C and question mark U+061F are Po.
  CHECK(NormalizeMlqaTokens("\u0642\u0628\u0644\u060c \u061f", "ar") ==
        Tokens{"\u0642\u0628\u0644"});
}

TEST_CASE("mlqa hi: no articles, danda removed", "[mlqa]") {
  // U+0964 DEVANAGARI DANDA is Po.
  CHECK(NormalizeMlqaTokens("\u0928\u094c\u0915\u093e \u0926\u0938\u0964", "hi") ==
        Tokens{"\u0928\u094c\u0915\u093e", "\u0926\u0938"});
  CHECK(NormalizeMlqaTokens("The ferry", "hi") == Tokens{"the", "ferry"});
}

TEST_CASE("mlqa zh: characters in U+4E00..U+9FA5 are single tokens", "[mlqa]") {
  // "渡轮在7:30出发。" -> remove_punc "渡轮在730出发" -> 渡 轮 在 730 出 发.
  CHECK(NormalizeMlqaTokens("\u6e21\u8f6e\u57287:30\u51fa\u53d1\u3002", "zh") ==
        Tokens{"\u6e21", "\u8f6e", "\u5728", "730", "\u51fa", "\u53d1"});
  // Fullwidth Latin lowercases to fullwidth (U+FF21 -> U+FF41) and stays one run.
  CHECK(NormalizeMlqaTokens("\uff21\uff22\u6e21", "zh") == Tokens{"\uff41\uff42", "\u6e21"});
  // U+9FA6 and Extension A's U+3400 are outside the class: they stay in runs.
  CHECK(NormalizeMlqaTokens("\u9fa6\u9fa6\u6e21\u3400\u3400 x", "zh") ==
        Tokens{"\u9fa6\u9fa6", "\u6e21", "\u3400\u3400", "x"});
}

TEST_CASE("mlqa: str.lower() is full lowercasing with Final_Sigma", "[mlqa]") {
  // ΟΔΟΣ -> οδος (final ς); ΣΑΣ -> σας; İ -> i + U+0307 (SpecialCasing.txt).
  CHECK(NormalizeMlqaTokens("\u039f\u0394\u039f\u03a3 \u03a3\u0391\u03a3", "en") ==
        Tokens{"\u03bf\u03b4\u03bf\u03c2", "\u03c3\u03b1\u03c2"});
  CHECK(NormalizeMlqaTokens("\u0130", "en") == Tokens{"i\u0307"});
}

TEST_CASE("mlqa: str.split() whitespace", "[mlqa]") {
  CHECK(NormalizeMlqaTokens("ten\u00a0minutes\u0085later\u3000now", "en") ==
        Tokens{"ten", "minutes", "later", "now"});
  // U+200B ZERO WIDTH SPACE is Cf with bidi BN: not whitespace to Python.
  CHECK(NormalizeMlqaTokens("ten\u200bminutes", "en") == Tokens{"ten\u200bminutes"});
}

TEST_CASE("mlqa: ASCII symbols are in string.punctuation, other symbols stay", "[mlqa]") {
  CHECK(NormalizeMlqaTokens("$10 \u20ac10 a+b", "en") == Tokens{"10", "\u20ac10", "ab"});
}

TEST_CASE("mlqa: languages the script rejects are tokenized like hi", "[mlqa]") {
  // The script raises 'Unknown Language'; the profile cannot fail, so no articles are removed.
  CHECK(NormalizeMlqaTokens("Le bateau!", "fr") == Tokens{"le", "bateau"});
  CHECK(NormalizeMlqaTokens("The ferry", "") == Tokens{"the", "ferry"});
}

TEST_CASE("mlqa: invalid UTF-8 decodes to U+FFFD, as errors='replace' does", "[mlqa]") {
  CHECK(NormalizeMlqaTokens("\xff"
                            "ferry \xed\xa0\x80",
                            "en") == Tokens{"\ufffd"
                                            "ferry",
                                            "\ufffd\ufffd\ufffd"});
}

}  // namespace
