// Quote location (SPEC §4 and §6.3: "located in the corpus document (exact, then
// whitespace-collapsed)"). Every expected span is counted by hand in code points; the counts
// are written out beside each check.

#include "metrics/quote_locator.h"

#include <catch2/catch.hpp>
#include <string>
#include <utility>

namespace plumb::metrics {
namespace {

// Boarding0-7 ' '8 closes9-14 ' '15 ten16-18 ' '19 minutes20-26 ' '27 before28-33 ' '34
// departure.35-44 '\n'45 Vehicles46-53 ' '54 must55-58 ...
const std::string kBoarding =
    "Boarding closes ten minutes before departure.\n"
    "Vehicles must check in thirty minutes before departure.\n";

// Locates with and without a prebuilt index; both must give the same span.
std::pair<int64_t, int64_t> Locate(const std::string& text, const std::string& quote) {
  int64_t start = -1;
  int64_t end = -1;
  const bool found = LocateQuote(text, quote, &start, &end);
  int64_t indexed_start = -1;
  int64_t indexed_end = -1;
  const bool indexed = LocateQuote(text, CodePointIndex(text), quote, &indexed_start, &indexed_end);
  CHECK(found == indexed);
  CHECK(start == indexed_start);
  CHECK(end == indexed_end);
  if (!found) return {-1, -1};
  return {start, end};
}

using Span = std::pair<int64_t, int64_t>;

TEST_CASE("an exact quote is found at its code-point span", "[quote_locator]") {
  // "ten minutes": ten starts at 16, minutes ends at 26, so [16, 27).
  CHECK(Locate(kBoarding, "ten minutes") == Span{16, 27});
  // The whole first sentence, "Boarding" .. "departure.": [0, 45).
  CHECK(Locate(kBoarding, "Boarding closes ten minutes before departure.") == Span{0, 45});
}

TEST_CASE("the first occurrence wins", "[quote_locator]") {
  // "thirty minutes before departure" occurs once; "minutes before departure" twice, first at
  // 20 (minutes20-26 ' '27 before28-33 ' '34 departure35-43), so [20, 44).
  CHECK(Locate(kBoarding, "minutes before departure") == Span{20, 44});
}

TEST_CASE("extra whitespace in the quote is collapsed", "[quote_locator]") {
  // The quote has two spaces and a newline where the document has single spaces. Collapsed, it
  // is "Boarding closes ten", the document's [0, 19) (ten ends at 18).
  CHECK(Locate(kBoarding, "Boarding  closes\nten") == Span{0, 19});
}

TEST_CASE("extra whitespace in the document is collapsed", "[quote_locator]") {
  // Vehicles0-7 ' '8 must9-12 ' '13 check14-18 ' '19 in20-21 "\n   "22-25 thirty26-31 ' '32
  // minutes33-39: the quote "check in thirty minutes" spans [14, 40), the document's newline and
  // three spaces included.
  const std::string text = "Vehicles must check in\n   thirty minutes before departure.";
  CHECK(Locate(text, "check in thirty minutes") == Span{14, 40});
  // The reverse: the first line break of kBoarding (45) sits where the quote has a space.
  // departure.35-44 '\n'45 Vehicles46-53 ' '54 must55-58 -> [35, 59).
  CHECK(Locate(kBoarding, "departure. Vehicles must") == Span{35, 59});
}

TEST_CASE("an exact match is preferred to an earlier collapsed one", "[quote_locator]") {
  // ten0-2 "  "3-4 minutes5-11 ;12 ' '13 ten14-16 ' '17 minutes18-24. Collapsed, the quote
  // would match at [0, 12) first; the exact pass finds [14, 25) and wins.
  CHECK(Locate("ten  minutes; ten minutes", "ten minutes") == Span{14, 25});
}

TEST_CASE("the quote's surrounding whitespace is dropped when collapsing", "[quote_locator]") {
  // Not exact (kBoarding has no newline after "minutes"); collapsed and trimmed it is
  // "ten minutes", [16, 27), and the span does not take in the neighbouring spaces.
  CHECK(Locate(kBoarding, " ten minutes\n") == Span{16, 27});
}

TEST_CASE("Unicode whitespace collapses too", "[quote_locator]") {
  // U+3000 IDEOGRAPHIC SPACE and U+00A0 NO-BREAK SPACE have the White_Space property (Unicode
  // PropList.txt). 乗0 船1 は2 U+3000(3) 出4 発5 の6 十7 分8 前9: the quote with an ASCII space
  // spans [0, 10).
  const std::string japanese =
      "\u4e57\u8239\u306f\u3000\u51fa\u767a\u306e\u5341\u5206\u524d\u306b\u7de0\u3081\u5207"
      "\u308a\u307e\u3059\u3002";
  CHECK(Locate(japanese, "\u4e57\u8239\u306f \u51fa\u767a\u306e\u5341\u5206\u524d") == Span{0, 10});
  // "10\u00a0minutes": 1 0 NBSP m..s -> the quote "10 minutes" spans [0, 10).
  CHECK(Locate("10\u00a0minutes before", "10 minutes") == Span{0, 10});
}

TEST_CASE("offsets count code points, not bytes", "[quote_locator]") {
  // L0 e1 ' '2 d3 é4 p5 a6 r7 t8 ' '9 e10 s11 t12 ' '13 à14 ' '15 8(16) h17 ' '18 ;19 ' '20
  // l21 '22 embarquement23-34 ' '35 ferme36-40: [21, 41) in code points, although the quote
  // starts at byte 23 (é and à take two bytes each).
  const std::string french = "Le d\u00e9part est \u00e0 8h ; l'embarquement ferme \u00e0 7h50.";
  CHECK(Locate(french, "l'embarquement ferme") == Span{21, 41});
  // 🚢0 ' '1 Ferry:2-7 ' '8 boarding9-16: one code point for four bytes.
  CHECK(Locate("\U0001F6A2 Ferry: boarding closes.", "boarding") == Span{9, 17});
  // The emoji itself.
  CHECK(Locate("\U0001F6A2 Ferry: boarding closes.", "\U0001F6A2") == Span{0, 1});
}

TEST_CASE("quotes that are not in the document are not found", "[quote_locator]") {
  CHECK(Locate(kBoarding, "eleven minutes") == Span{-1, -1});
  // No case folding: "boarding closes" differs from "Boarding closes".
  CHECK(Locate(kBoarding, "boarding closes") == Span{-1, -1});
  // No punctuation forgiveness: the document has no comma there.
  CHECK(Locate(kBoarding, "ten minutes, before") == Span{-1, -1});
  // Longer than the document.
  CHECK(Locate("ten", "ten minutes") == Span{-1, -1});
}

TEST_CASE("empty and whitespace-only quotes are never located", "[quote_locator]") {
  CHECK(Locate(kBoarding, "") == Span{-1, -1});
  CHECK(Locate(kBoarding, " ") == Span{-1, -1});
  CHECK(Locate(kBoarding, "\n\t ") == Span{-1, -1});
  int64_t start = 42;
  int64_t end = 43;
  CHECK_FALSE(LocateQuote(kBoarding, "", &start, &end));
  CHECK(start == 42);  // outputs untouched on failure
  CHECK(end == 43);
}

TEST_CASE("a byte match inside a UTF-8 sequence is not a match", "[quote_locator]") {
  // é is C3 A9; the lone byte A9 occurs in the text's bytes but not as a code point of it.
  CHECK(Locate("caf\u00e9", "\xa9") == Span{-1, -1});
  // The same byte as an ill-formed subpart of its own is a code point (U+FFFD): "a" A9 "b"
  // is a0 U+FFFD(1) b2, so the quote spans [1, 2).
  CHECK(Locate("a\xa9"
               "b",
               "\xa9") == Span{1, 2});
}

}  // namespace
}  // namespace plumb::metrics
