// Offset units: UTF-8 bytes, UTF-16 code units and code points in one document.
//
// Every expected offset below is worked out by hand from the encoding forms' definitions:
// UTF-8 byte lengths from RFC 3629 §3 (U+0000..007F one byte, U+0080..07FF two, U+0800..FFFF
// three, U+10000..10FFFF four) and UTF-16 lengths from RFC 2781 §2.1 (one unit below U+10000,
// a surrogate pair of two units above).

#include "metrics/offset_units.h"

#include <catch2/catch.hpp>
#include <string>

namespace plumb::metrics {
namespace {

// Converts with both the text overload and a prebuilt index, which must agree.
bool Convert(const std::string& text, OffsetUnit unit, int64_t offset, int64_t* cp,
             std::string* error) {
  int64_t via_index = -7;
  std::string index_error;
  const bool ok_index =
      ConvertToCodePoints(CodePointIndex(text), unit, offset, &via_index, &index_error);
  const bool ok = ConvertToCodePoints(text, unit, offset, cp, error);
  CHECK(ok == ok_index);
  if (ok) CHECK(*cp == via_index);
  if (!ok) CHECK(*error == index_error);
  return ok;
}

int64_t CodePointsOf(const std::string& text, OffsetUnit unit, int64_t offset) {
  int64_t cp = -1;
  std::string error;
  INFO(OffsetUnitName(unit) << " offset " << offset);
  REQUIRE(Convert(text, unit, offset, &cp, &error));
  return cp;
}

std::string ErrorOf(const std::string& text, OffsetUnit unit, int64_t offset) {
  int64_t cp = -1;
  std::string error;
  INFO(OffsetUnitName(unit) << " offset " << offset);
  REQUIRE_FALSE(Convert(text, unit, offset, &cp, &error));
  CHECK(cp == -1);
  return error;
}

TEST_CASE("offset unit names parse", "[offset_units]") {
  OffsetUnit unit = OffsetUnit::kCodePoints;
  REQUIRE(ParseOffsetUnit("utf8", &unit));
  CHECK(unit == OffsetUnit::kUtf8Bytes);
  REQUIRE(ParseOffsetUnit("utf16", &unit));
  CHECK(unit == OffsetUnit::kUtf16Units);
  REQUIRE(ParseOffsetUnit("codepoints", &unit));
  CHECK(unit == OffsetUnit::kCodePoints);
  CHECK_FALSE(ParseOffsetUnit("bytes", &unit));
  CHECK_FALSE(ParseOffsetUnit("UTF8", &unit));
  CHECK_FALSE(ParseOffsetUnit("", &unit));
  CHECK(std::string(OffsetUnitName(OffsetUnit::kUtf16Units)) == "utf16");
}

// "é乗🚢a": é U+00E9 (2 bytes, 1 unit), 乗 U+4E57 (3 bytes, 1 unit), 🚢 U+1F6A2 (4 bytes,
// 2 units), a (1, 1).
//   code point:  0   1   2   3   4(end)
//   utf8 byte:   0   2   5   9   10
//   utf16 unit:  0   1   2   4   5
const std::string kMixed = "\u00e9\u4e57\U0001F6A2a";

TEST_CASE("one code point of each UTF-8 length", "[offset_units]") {
  CodePointIndex index(kMixed);
  CHECK(index.bytes() == 10);
  CHECK(index.code_points() == 4);
  CHECK(index.utf16_units() == 5);

  const OffsetUnit u8 = OffsetUnit::kUtf8Bytes;
  CHECK(CodePointsOf(kMixed, u8, 0) == 0);
  CHECK(CodePointsOf(kMixed, u8, 2) == 1);
  CHECK(CodePointsOf(kMixed, u8, 5) == 2);
  CHECK(CodePointsOf(kMixed, u8, 9) == 3);
  CHECK(CodePointsOf(kMixed, u8, 10) == 4);
  for (int64_t inside : {1, 3, 4, 6, 7, 8}) ErrorOf(kMixed, u8, inside);

  const OffsetUnit u16 = OffsetUnit::kUtf16Units;
  CHECK(CodePointsOf(kMixed, u16, 0) == 0);
  CHECK(CodePointsOf(kMixed, u16, 1) == 1);
  CHECK(CodePointsOf(kMixed, u16, 2) == 2);
  CHECK(CodePointsOf(kMixed, u16, 4) == 3);
  CHECK(CodePointsOf(kMixed, u16, 5) == 4);
  ErrorOf(kMixed, u16, 3);  // between the high and low surrogate of U+1F6A2

  // Code points are the identity within range.
  CHECK(CodePointsOf(kMixed, OffsetUnit::kCodePoints, 3) == 3);
  CHECK(CodePointsOf(kMixed, OffsetUnit::kCodePoints, 4) == 4);
}

TEST_CASE("the index maps code points back to bytes and UTF-16 units", "[offset_units]") {
  CodePointIndex index(kMixed);
  CHECK(index.ByteOfCodePoint(0) == 0);
  CHECK(index.ByteOfCodePoint(1) == 2);
  CHECK(index.ByteOfCodePoint(2) == 5);
  CHECK(index.ByteOfCodePoint(3) == 9);
  CHECK(index.ByteOfCodePoint(4) == 10);
  CHECK(index.ByteOfCodePoint(5) == -1);
  CHECK(index.ByteOfCodePoint(-1) == -1);
  CHECK(index.Utf16OfCodePoint(2) == 2);
  CHECK(index.Utf16OfCodePoint(3) == 4);
  CHECK(index.Utf16OfCodePoint(4) == 5);
  CHECK(index.Utf16OfCodePoint(5) == -1);
  CHECK(index.IsBoundary(9));
  CHECK_FALSE(index.IsBoundary(8));
  CHECK_FALSE(index.IsBoundary(11));
}

TEST_CASE("French accents shift byte offsets but not UTF-16 ones", "[offset_units]") {
  // "Départ à 8h": D0 é1 p2 a3 r4 t5 ' '6 à7 ' '8 8(9) h10, 11 code points. é and à are two
  // bytes each, so from 'p' on a byte offset is one more than the code point, from after 'à' two
  // more: 'à' starts at byte 7 + 1 = 8, '8' at byte 9 + 2 = 11, the end at 11 + 2 = 13 bytes.
  const std::string text = "D\u00e9part \u00e0 8h";
  CHECK(CodePointsOf(text, OffsetUnit::kUtf8Bytes, 1) == 1);   // é
  CHECK(CodePointsOf(text, OffsetUnit::kUtf8Bytes, 3) == 2);   // p
  CHECK(CodePointsOf(text, OffsetUnit::kUtf8Bytes, 8) == 7);   // à
  CHECK(CodePointsOf(text, OffsetUnit::kUtf8Bytes, 11) == 9);  // 8
  CHECK(CodePointsOf(text, OffsetUnit::kUtf8Bytes, 13) == 11);
  ErrorOf(text, OffsetUnit::kUtf8Bytes, 2);  // second byte of é
  ErrorOf(text, OffsetUnit::kUtf8Bytes, 9);  // second byte of à
  // Every character is in the BMP: UTF-16 offsets equal code points.
  CHECK(CodePointsOf(text, OffsetUnit::kUtf16Units, 7) == 7);
  CHECK(CodePointsOf(text, OffsetUnit::kUtf16Units, 11) == 11);
  ErrorOf(text, OffsetUnit::kUtf16Units, 12);
}

TEST_CASE("Japanese is three bytes per character", "[offset_units]") {
  // "乗船は十分前": six characters of three bytes each, so byte 3k is code point k.
  const std::string text = "\u4e57\u8239\u306f\u5341\u5206\u524d";
  CHECK(CodePointsOf(text, OffsetUnit::kUtf8Bytes, 9) == 3);
  CHECK(CodePointsOf(text, OffsetUnit::kUtf8Bytes, 18) == 6);
  ErrorOf(text, OffsetUnit::kUtf8Bytes, 10);
  ErrorOf(text, OffsetUnit::kUtf8Bytes, 17);
  CHECK(CodePointsOf(text, OffsetUnit::kUtf16Units, 6) == 6);
}

TEST_CASE("a long mixed text keeps its offsets across many index words", "[offset_units]") {
  // 100 copies of kMixed: copy k starts at byte 10k, code point 4k, UTF-16 unit 5k, and inside
  // it the offsets of the table above shifted by those amounts. 1000 bytes span 16 words of the
  // index's 64-bit boundary map.
  std::string text;
  for (int k = 0; k < 100; ++k) text += kMixed;
  CodePointIndex index(text);
  REQUIRE(index.bytes() == 1000);
  REQUIRE(index.code_points() == 400);
  REQUIRE(index.utf16_units() == 500);
  for (int64_t k = 0; k < 100; ++k) {
    INFO("copy " << k);
    int64_t cp = -1;
    CHECK((index.CodePointOfByte(10 * k + 5, &cp) && cp == 4 * k + 2));  // 🚢
    CHECK((index.CodePointOfByte(10 * k + 9, &cp) && cp == 4 * k + 3));  // a
    CHECK_FALSE(index.CodePointOfByte(10 * k + 1, &cp));
    CHECK_FALSE(index.CodePointOfByte(10 * k + 8, &cp));
    CHECK((index.CodePointOfUtf16(5 * k + 4, &cp) && cp == 4 * k + 3));
    CHECK_FALSE(index.CodePointOfUtf16(5 * k + 3, &cp));
    CHECK(index.ByteOfCodePoint(4 * k + 1) == 10 * k + 2);  // 乗
    CHECK(index.ByteOfCodePoint(4 * k + 3) == 10 * k + 9);
    CHECK(index.Utf16OfCodePoint(4 * k + 3) == 5 * k + 4);
  }
}

TEST_CASE("an ASCII text has identical offsets in every unit", "[offset_units]") {
  const std::string text = "Boarding closes ten minutes before departure.";  // 45 characters
  for (OffsetUnit unit :
       {OffsetUnit::kCodePoints, OffsetUnit::kUtf8Bytes, OffsetUnit::kUtf16Units}) {
    CHECK(CodePointsOf(text, unit, 0) == 0);
    CHECK(CodePointsOf(text, unit, 16) == 16);
    CHECK(CodePointsOf(text, unit, 45) == 45);
  }
  CodePointIndex index(text);
  CHECK(index.ByteOfCodePoint(45) == 45);
  CHECK(index.ByteOfCodePoint(46) == -1);
}

TEST_CASE("errors name the offset and what is wrong with it", "[offset_units]") {
  CHECK(ErrorOf(kMixed, OffsetUnit::kUtf8Bytes, 7) ==
        "utf8 offset 7 falls inside a UTF-8 sequence; the nearest code-point boundaries are "
        "bytes 5 and 9");
  CHECK(ErrorOf(kMixed, OffsetUnit::kUtf16Units, 3) ==
        "utf16 offset 3 splits a surrogate pair; the pair spans units 2 and 3, so use 2 or 4");
  CHECK(ErrorOf(kMixed, OffsetUnit::kUtf8Bytes, 11) ==
        "utf8 offset 11 is beyond the end of the text (10 bytes)");
  CHECK(ErrorOf(kMixed, OffsetUnit::kUtf16Units, 6) ==
        "utf16 offset 6 is beyond the end of the text (5 UTF-16 units)");
  CHECK(ErrorOf(kMixed, OffsetUnit::kCodePoints, 5) ==
        "codepoints offset 5 is beyond the end of the text (4 code points)");
  CHECK(ErrorOf(kMixed, OffsetUnit::kUtf8Bytes, -1) == "utf8 offset -1 is negative");
}

TEST_CASE("empty text has only offset 0", "[offset_units]") {
  CHECK(CodePointsOf("", OffsetUnit::kUtf8Bytes, 0) == 0);
  CHECK(CodePointsOf("", OffsetUnit::kUtf16Units, 0) == 0);
  ErrorOf("", OffsetUnit::kUtf8Bytes, 1);
}

TEST_CASE("ill-formed UTF-8 counts one code point per maximal subpart", "[offset_units]") {
  // Unicode §3.9, "U+FFFD Substitution of Maximal Subparts" (from memory); the same counts as
  // Python 3's bytes.decode("utf-8", errors="replace"):
  //   b"a\xffb"          -> "a\ufffdb"  3 code points (\xff is never valid)
  //   b"\xe4\xb9x"       -> "\ufffdx"   2 code points (a three-byte sequence cut after two)
  //   b"\xf0\x9f\x9aa"   -> "\ufffda"   2 code points (a four-byte sequence cut after three)
  CHECK(CodePointIndex("a\xff"
                       "b")
            .code_points() == 3);
  const std::string cut3 = "\xe4\xb9x";
  CHECK(CodePointIndex(cut3).code_points() == 2);
  CHECK(CodePointsOf(cut3, OffsetUnit::kUtf8Bytes, 2) == 1);
  ErrorOf(cut3, OffsetUnit::kUtf8Bytes, 1);  // inside the cut sequence
  const std::string cut4 =
      "\xf0\x9f\x9a"
      "a";
  CHECK(CodePointIndex(cut4).code_points() == 2);
  CHECK(CodePointIndex(cut4).utf16_units() == 2);  // U+FFFD is one UTF-16 unit
  CHECK(CodePointsOf(cut4, OffsetUnit::kUtf8Bytes, 3) == 1);
}

}  // namespace
}  // namespace plumb::metrics
