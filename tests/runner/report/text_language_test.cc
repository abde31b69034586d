// Which language the HTML report marks on a text (issue 20 item 2: `lang` on non-English text).
// The texts are the demo suite's (suites/ferry.yaml: fr-fin-embarquement, ja-car-checkin,
// ja-boarding-cutoff) and its gold answers, plus sentences written here for the other scripts.

#include "runner/report/text_language.h"

#include <catch2/catch.hpp>

using plumb::GuessTextLanguage;
using plumb::LangToMark;

TEST_CASE("text language: scripts that name a language", "[text_language]") {
  CHECK(
      GuessTextLanguage(
          "\xE3\x83\xB4\xE3\x82\xA7\xE3\x83\x80\xE3\x83\xBC\xE3\x83\x9E\xE3\x82\xB9\xE3\x81\xA7"
          "\xE8\xBB\x8A\xE3\x82\x92\xE4\xB9\x97\xE3\x81\x9B\xE3\x82\x8B",  // ヴェダーマスで車を乗せる
          "en") == "ja");
  // Han without kana ("10分前", a gold answer of ja-boarding-cutoff): the context decides.
  CHECK(GuessTextLanguage("10\xE5\x88\x86\xE5\x89\x8D", "ja") == "ja");
  CHECK(GuessTextLanguage("10\xE5\x88\x86\xE5\x89\x8D", "en") == "zh");
  CHECK(GuessTextLanguage("\xEC\x95\x88\xEB\x85\x95\xED\x95\x98\xEC\x84\xB8\xEC\x9A\x94", "en") ==
        "ko");                                                                  // 안녕하세요
  CHECK(GuessTextLanguage("\xCE\xA0\xCF\x8C\xCF\x84\xCE\xB5;", "en") == "el");  // Πότε;
  // Cyrillic is Russian unless the context is another language written in it.
  CHECK(GuessTextLanguage("\xD0\x9A\xD0\xBE\xD0\xB3\xD0\xB4\xD0\xB0?", "en") == "ru");
  CHECK(GuessTextLanguage("\xD0\x9A\xD0\xBE\xD0\xB3\xD0\xB4\xD0\xB0?", "uk") == "uk");
}

TEST_CASE("text language: Latin text by its common words", "[text_language]") {
  CHECK(GuessTextLanguage("Jusqu'\xC3\xA0 quand les passagers \xC3\xA0 pied peuvent-ils "
                          "embarquer ?",
                          "en") == "fr");
  CHECK(GuessTextLanguage("dix minutes avant l'heure de d\xC3\xA9part", "en") == "fr");
  CHECK(GuessTextLanguage("How long before the ship leaves do foot passengers have to be on "
                          "board?",
                          "en") == "en");
  CHECK(GuessTextLanguage("Wann f\xC3\xA4hrt die letzte F\xC3\xA4hre und ist sie voll?", "en") ==
        "de");
  // Too little to tell: numbers, one word, a tie.
  CHECK(GuessTextLanguage("14,50 \xC2\xA3", "en").empty());
  CHECK(GuessTextLanguage("Veddermouth", "en").empty());
  CHECK(GuessTextLanguage("", "fr").empty());
}

TEST_CASE("text language: what the page marks", "[text_language]") {
  // English is the page's own language: nothing to mark.
  CHECK(LangToMark("What does a car cost on the crossing?", "en").empty());
  // A text that does not tell takes the fallback (the question's language, or the suite's).
  CHECK(LangToMark("14,50 \xC2\xA3", "fr") == "fr");
  CHECK(LangToMark("14,50 \xC2\xA3", "en").empty());
  CHECK(LangToMark("dix minutes avant le d\xC3\xA9part", "en") == "fr");
  CHECK(plumb::LangAttribute("fr") == " lang=\"fr\"");
  CHECK(plumb::LangAttribute("a\"b") == " lang=\"a&quot;b\"");
  CHECK(plumb::LangAttribute("").empty());
}
