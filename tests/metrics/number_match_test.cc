// number_match (SPEC §6.2): the numbers read from an answer and the tolerance check. The reading
// rules are the ones stated in metrics/number_match.h; each expected list below is worked by hand
// from those rules, and the tolerance edges from |x - value| <= tolerance.

#include "metrics/number_match.h"

#include <catch2/catch.hpp>
#include <limits>
#include <vector>

using plumb::metrics::ExtractNumbers;
using plumb::metrics::NumberMatches;
using Numbers = std::vector<double>;

TEST_CASE("Integers, decimals and several numbers in one answer", "[number_match]") {
  CHECK(ExtractNumbers("Boarding closes 10 minutes before the 14 o'clock sailing") ==
        Numbers{10, 14});
  CHECK(ExtractNumbers("3.5 hours") == Numbers{3.5});
  CHECK(ExtractNumbers("It takes 10.") == Numbers{10});  // a sentence period, not a decimal
  CHECK(ExtractNumbers("about .5 km") == Numbers{0.5});
  CHECK(ExtractNumbers("version 1.2.3") == Numbers{1.2, 3});
  CHECK(ExtractNumbers("no digits here").empty());
  CHECK(ExtractNumbers("").empty());
}

TEST_CASE("Units and currency glued to numbers", "[number_match]") {
  CHECK(ExtractNumbers("Boarding closes 10min before departure") == Numbers{10});
  CHECK(ExtractNumbers("\xE2\x82\xAC"
                       "25 for adults, \xE2\x82\xAC"
                       "12.50 for children") == Numbers{25, 12.5});
  CHECK(ExtractNumbers("25% off, 2km away") == Numbers{25, 2});
  CHECK(ExtractNumbers("deck 3B") == Numbers{3});
}

TEST_CASE("Signs: minus, plus and the Unicode minus sign", "[number_match]") {
  CHECK(ExtractNumbers("between -5 and \xE2\x88\x92"
                       "3 degrees") == Numbers{-5, -3});
  CHECK(ExtractNumbers("(\xE2\x88\x92"
                       "4)") == Numbers{-4});
  CHECK(ExtractNumbers("x=-2, +3") == Numbers{-2, 3});
  CHECK(ExtractNumbers("-0.25") == Numbers{-0.25});
  // A hyphen after a digit or letter is a range or a name, not a sign.
  CHECK(ExtractNumbers("10-12 minutes") == Numbers{10, 12});
  CHECK(ExtractNumbers("UTC-5") == Numbers{5});
}

TEST_CASE("Thousands separators", "[number_match]") {
  CHECK(ExtractNumbers("1,200 passengers and 1 200 cars") == Numbers{1200, 1200});
  CHECK(ExtractNumbers("1\xC2\xA0"
                       "200") == Numbers{1200});  // NBSP
  CHECK(ExtractNumbers("1\xE2\x80\xAF"
                       "200") == Numbers{1200});  // narrow NBSP
  CHECK(ExtractNumbers("12,345,678 and 1,200.50") == Numbers{12345678, 1200.5});
  // Not thousands groups: a comma is no decimal mark, groups have exactly three digits, the
  // leading part at most three, and one number keeps one separator.
  CHECK(ExtractNumbers("1,5") == Numbers{1, 5});
  CHECK(ExtractNumbers("1,2345") == Numbers{1, 2345});
  CHECK(ExtractNumbers("1234,567") == Numbers{1234, 567});
  CHECK(ExtractNumbers("1,200 300") == Numbers{1200, 300});
  CHECK(ExtractNumbers("1.200") == Numbers{1.2});
}

TEST_CASE("Spelled English numbers zero to twenty", "[number_match]") {
  CHECK(ExtractNumbers("Ten minutes") == Numbers{10});
  CHECK(ExtractNumbers("TWELVE or zero or Twenty") == Numbers{12, 0, 20});
  CHECK(ExtractNumbers("twenty-one seats") == Numbers{21});
  CHECK(ExtractNumbers("ten-minute walk") == Numbers{10});
  // Not whole words: no numbers.
  CHECK(ExtractNumbers("often the tenth Tenerife ferry").empty());
}

TEST_CASE("Digits of other scripts", "[number_match]") {
  CHECK(ExtractNumbers("\xEF\xBC\x91\xEF\xBC\x90\xE5\x88\x86") == Numbers{10});  // "１０分"
  CHECK(ExtractNumbers("\xD9\xA3") == Numbers{3});                               // Arabic-Indic 3
}

TEST_CASE("Number match within tolerance, inclusive", "[number_match]") {
  CHECK(NumberMatches("ten minutes", 10, 0));
  CHECK_FALSE(NumberMatches("11 minutes", 10, 0));
  CHECK(NumberMatches("It is 9 or 11 minutes", 10, 1));  // |11 - 10| = 1 <= 1
  CHECK_FALSE(NumberMatches("11.0001 minutes", 10, 1));
  CHECK(NumberMatches("closes at -5", -4, 1));
  // 0.4 and 0.2 are within 0.1 of 0.3 although 0.4 - 0.3 > 0.1 in binary floating point.
  CHECK(NumberMatches("0.4", 0.3, 0.1));
  CHECK(NumberMatches("0.2", 0.3, 0.1));
  CHECK_FALSE(NumberMatches("0.41", 0.3, 0.1));
  // The epsilon stays tiny for large values: 10^12 + 1 is not 10^12.
  CHECK_FALSE(NumberMatches("1,000,000,000,001", 1e12, 0));
  CHECK(NumberMatches("1,000,000,000,000", 1e12, 0));
  // A negative tolerance counts as 0; NaN never matches; no number never matches.
  CHECK(NumberMatches("10", 10, -1));
  CHECK_FALSE(NumberMatches("10", std::numeric_limits<double>::quiet_NaN(), 1));
  CHECK_FALSE(NumberMatches("no number", 0, 100));
}
