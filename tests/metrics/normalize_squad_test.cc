// The `squad` profile against the official SQuAD evaluation's normalize_answer:
//   Rajpurkar, Zhang, Lopyrev, Liang (2016), "SQuAD: 100,000+ Questions for Machine
//   Comprehension of Text" (evaluate-v1.1.py), and Rajpurkar, Jia, Liang (2018), "Know What You
//   Don't Know: Unanswerable Questions for SQuAD" (evaluate-v2.0.py). From memory, both define
//     normalize_answer(s) = white_space_fix(remove_articles(remove_punc(lower(s))))
//   with lower = str.lower, remove_punc = drop string.punctuation, remove_articles =
//   re.sub(r'\b(a|an|the)\b', ' ', text), white_space_fix = ' '.join(text.split()).
// Each expected value below is worked by hand through those four steps under Python 3's
// documented semantics (str.lower with SpecialCasing and Final_Sigma, re's Unicode \w, and
// str.split's whitespace). tests/reference/squad_normalize_reference.py checks the same function
// against Python itself on random input.

#include <catch2/catch.hpp>
#include <string>
#include <vector>

#include "metrics/normalize.h"

using plumb::metrics::NormalizeSquad;
using plumb::metrics::NormalizeSquadTokens;
using Tokens = std::vector<std::string>;

TEST_CASE("SQuAD normalization of ASCII answers, worked by hand", "[normalize_squad]") {
  // lower -> "the cat!", remove_punc -> "the cat", remove_articles -> "  cat", split -> ["cat"].
  CHECK(NormalizeSquad("The Cat!") == "cat");
  CHECK(NormalizeSquadTokens("The Cat!") == Tokens{"cat"});
  // Every article is a whole word here: "  apple   day" -> "apple day".
  CHECK(NormalizeSquad("An apple a day") == "apple day");
  // Articles must be whole \w runs: "theater", "anna", "then" keep their letters.
  CHECK(NormalizeSquad("the theater, anna and then") == "theater anna and then");
  // Punctuation goes before articles do, so it glues neighbours: "a-b" -> "ab", "the.cat" ->
  // "thecat"; '_' is in string.punctuation too.
  CHECK(NormalizeSquad("a-b") == "ab");
  CHECK(NormalizeSquad("the.cat") == "thecat");
  CHECK(NormalizeSquad("the_cat") == "thecat");
  // Digits are \w: "the1" is one word and stays.
  CHECK(NormalizeSquad("the1 a2") == "the1 a2");
  CHECK(NormalizeSquad("  Boarding   closes\t\n10 minutes. ") == "boarding closes 10 minutes");
  // A control character is neither \w nor whitespace: it ends the word "a" (an article, removed)
  // but does not split the token.
  CHECK(NormalizeSquadTokens("a\x01"
                             "b") == Tokens{"\x01"
                                            "b"});
  // U+001C..U+001F are whitespace for str.split().
  CHECK(NormalizeSquadTokens("ten\x1c"
                             "minutes\x1f") == Tokens{"ten", "minutes"});
}

TEST_CASE("SQuAD normalization of empty and punctuation-only answers", "[normalize_squad]") {
  CHECK(NormalizeSquad("").empty());
  CHECK(NormalizeSquadTokens("").empty());
  CHECK(NormalizeSquadTokens("?!...").empty());
  CHECK(NormalizeSquadTokens(" - ; ").empty());
  CHECK(NormalizeSquadTokens("The.").empty());  // remove_punc -> "the", an article -> " "
  CHECK(NormalizeSquadTokens("a an the").empty());
}

TEST_CASE("SQuAD normalization lowercases as Python's str.lower", "[normalize_squad]") {
  // U+0130 LATIN CAPITAL LETTER I WITH DOT ABOVE has the unconditional full lowercase mapping
  // 0069 0307 in SpecialCasing.txt, which str.lower applies.
  CHECK(NormalizeSquad("\xC4\xB0stanbul") == "i\xCC\x87stanbul");
  // Final_Sigma: capital sigma at the end of a word lowers to U+03C2, elsewhere to U+03C3.
  // "ΟΔΟΣ" -> "οδος" with final ς; "ΣΑΣ" -> "σας".
  CHECK(NormalizeSquad("\xCE\x9F\xCE\x94\xCE\x9F\xCE\xA3") == "\xCE\xBF\xCE\xB4\xCE\xBF\xCF\x82");
  CHECK(NormalizeSquad("\xCE\xA3\xCE\x91\xCE\xA3") == "\xCF\x83\xCE\xB1\xCF\x82");
  // A lone capital sigma has no cased letter before it: U+03C3.
  CHECK(NormalizeSquad("\xCE\xA3") == "\xCF\x83");
  // U+212A KELVIN SIGN lowers to ASCII 'k'.
  CHECK(NormalizeSquad("5 \xE2\x84\xAA") == "5 k");
  // Fullwidth letters lower to fullwidth letters, which are not the ASCII articles, and the
  // fullwidth "！" is not in string.punctuation: "ＴＨＥ ＣＡＴ！" -> "ｔｈｅ ｃａｔ！".
  CHECK(NormalizeSquad("\xEF\xBC\xB4\xEF\xBC\xA8\xEF\xBC\xA5 \xEF\xBC\xA3\xEF\xBC\xA1\xEF\xBC\xB4"
                       "\xEF\xBC\x81") ==
        "\xEF\xBD\x94\xEF\xBD\x88\xEF\xBD\x85 \xEF\xBD\x83\xEF\xBD\x81\xEF\xBD\x94\xEF\xBC\x81");
}

TEST_CASE("SQuAD normalization uses re's Unicode word boundaries", "[normalize_squad]") {
  // A combining mark (Mn) is not \w, so "the" before U+0301 is a whole word: "the\u0301 cat" ->
  // " \u0301 cat" -> ["\u0301", "cat"].
  CHECK(NormalizeSquadTokens("the\xCC\x81 cat") == Tokens{"\xCC\x81", "cat"});
  // A letter (L*) is \w: "aé" is one word and stays.
  CHECK(NormalizeSquad("a\xC3\xA9") == "a\xC3\xA9");
  // Characters with a numeric value are \w: SUPERSCRIPT TWO (No), ROMAN NUMERAL TWELVE (Nl) and
  // the ideograph 三 (Unihan kPrimaryNumeric) all extend the word, so no article is removed.
  CHECK(NormalizeSquad("a\xC2\xB2") == "a\xC2\xB2");
  // UnicodeData.txt maps U+216B to the lowercase U+217B.
  CHECK(NormalizeSquad("a\xE2\x85\xAB") == "a\xE2\x85\xBB");
  CHECK(NormalizeSquad("the\xE4\xB8\x89") == "the\xE4\xB8\x89");
  // An emoji (So) is not \w: "the😀" -> " 😀".
  CHECK(NormalizeSquad("the\xF0\x9F\x98\x80") == "\xF0\x9F\x98\x80");
}

TEST_CASE("SQuAD normalization splits on Python's whitespace", "[normalize_squad]") {
  // NBSP U+00A0 (Zs), NEL U+0085 (bidi B), LINE SEPARATOR U+2028 (bidi WS), IDEOGRAPHIC SPACE
  // U+3000 (Zs) split; ZERO WIDTH SPACE U+200B (Cf, bidi BN) does not.
  CHECK(NormalizeSquadTokens("ten\xC2\xA0minutes") == Tokens{"ten", "minutes"});
  CHECK(NormalizeSquadTokens("ten\xC2\x85minutes") == Tokens{"ten", "minutes"});
  CHECK(NormalizeSquadTokens("ten\xE2\x80\xA8minutes") == Tokens{"ten", "minutes"});
  CHECK(NormalizeSquadTokens("ten\xE3\x80\x80minutes") == Tokens{"ten", "minutes"});
  CHECK(NormalizeSquadTokens("ten\xE2\x80\x8Bminutes") == Tokens{"ten\xE2\x80\x8Bminutes"});
  // An NBSP also bounds an article: "the\u00a0cat" -> ["cat"].
  CHECK(NormalizeSquadTokens("the\xC2\xA0"
                             "cat") == Tokens{"cat"});
}

TEST_CASE("SQuAD normalization decodes invalid UTF-8 as errors='replace'", "[normalize_squad]") {
  // Python's bytes.decode('utf-8', 'replace') turns FF into one U+FFFD, which is neither \w nor
  // whitespace: "a\xff" -> the article "a" goes, U+FFFD stays.
  CHECK(NormalizeSquad("a\xFF") == "\xEF\xBF\xBD");
  // An encoded surrogate ED A0 80 is three maximal invalid subparts: three U+FFFD.
  CHECK(NormalizeSquad("\xED\xA0\x80") == "\xEF\xBF\xBD\xEF\xBF\xBD\xEF\xBF\xBD");
}

TEST_CASE("SQuAD token views give the same tokens, inline and past 256 bytes",
          "[normalize_squad]") {
  using plumb::metrics::TokenViews;
  auto as_vector = [](const TokenViews& views) {
    Tokens out;
    for (size_t i = 0; i < views.size(); ++i) out.emplace_back(views[i]);
    return out;
  };
  TokenViews views;
  // Worked by hand as above: remove_punc glues "the,a" into "thea" (not an article) and "t'he"
  // into "the" (an article); "AN" lowers to the article "an".
  NormalizeSquadTokens(
      "the,a t'he AN\x1d"
      "Cat",
      &views);
  CHECK(as_vector(views) == Tokens{"thea", "cat"});
  // 100 copies of "ten a " (600 bytes): lower and remove_punc change nothing, every "a" is an
  // article, split() leaves 100 tokens "ten"; more than the inline buffers hold.
  std::string long_text;
  for (int i = 0; i < 100; ++i) long_text += "ten a ";
  NormalizeSquadTokens(long_text, &views);
  CHECK(as_vector(views) == Tokens(100, "ten"));
  CHECK(NormalizeSquadTokens(long_text) == Tokens(100, "ten"));
  // Refilled with short text after the heap was used; a non-ASCII letter takes the general
  // path: "É" lowers to "é", which is \w, so "aé" is one word and no article.
  NormalizeSquadTokens("A\xc3\x89 the", &views);
  CHECK(as_vector(views) == Tokens{"a\xc3\xa9"});
  NormalizeSquadTokens("", &views);
  CHECK(views.empty());
}
