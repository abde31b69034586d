// UTF-8 decoding and code-point offsets (metrics/utf8.h). The replacement of ill-formed input
// follows The Unicode Standard, §3.9 "U+FFFD Substitution of Maximal Subparts", whose Table 3-8
// (from memory) decodes 61 F1 80 80 E1 80 C2 62 80 63 80 BF 64 as
// 0061 FFFD FFFD FFFD 0062 FFFD 0063 FFFD FFFD 0064; Python's errors="replace" agrees.

#include "metrics/utf8.h"

#include <catch2/catch.hpp>
#include <string>
#include <string_view>

using namespace plumb::metrics;

TEST_CASE("Maximal subparts decode to one U+FFFD each (Unicode Table 3-8)", "[utf8]") {
  const std::string bytes = "\x61\xF1\x80\x80\xE1\x80\xC2\x62\x80\x63\x80\xBF\x64";
  CHECK(DecodeUtf8(bytes) ==
        std::u32string{0x61, 0xFFFD, 0xFFFD, 0xFFFD, 0x62, 0xFFFD, 0x63, 0xFFFD, 0xFFFD, 0x64});
  CHECK(CodePointCount(bytes) == 10);
  // Overlong C0 AF and encoded surrogate ED A0 80: each byte is its own maximal subpart.
  CHECK(DecodeUtf8("\xC0\xAF") == std::u32string{0xFFFD, 0xFFFD});
  CHECK(DecodeUtf8("\xED\xA0\x80") == std::u32string{0xFFFD, 0xFFFD, 0xFFFD});
  // Beyond U+10FFFF: F4 90 is not a valid start, four U+FFFD.
  CHECK(DecodeUtf8("\xF4\x90\x80\x80") == std::u32string{0xFFFD, 0xFFFD, 0xFFFD, 0xFFFD});
  // A truncated sequence at the end is one maximal subpart.
  CHECK(DecodeUtf8("a\xE2\x82") == std::u32string{0x61, 0xFFFD});
}

TEST_CASE("Valid text round-trips", "[utf8]") {
  // "é" U+00E9, "€" U+20AC, "😀" U+1F600: 2, 3 and 4 bytes.
  const std::string text = "\xC3\xA9\xE2\x82\xAC\xF0\x9F\x98\x80";
  CHECK(DecodeUtf8(text) == std::u32string{0xE9, 0x20AC, 0x1F600});
  CHECK(EncodeUtf8(DecodeUtf8(text)) == text);
  std::string out;
  AppendUtf8(0xD800, &out);  // a surrogate cannot be encoded
  CHECK(out == "\xEF\xBF\xBD");
}

TEST_CASE("Code-point and byte offsets convert both ways", "[utf8]") {
  const std::string text =
      "a\xC3\xA9\xE2\x82\xAC"
      "b";  // a é € b: bytes 0, 1, 3, 6
  CHECK(ByteOffsetAt(text, 0) == 0);
  CHECK(ByteOffsetAt(text, 2) == 3);
  CHECK(ByteOffsetAt(text, 4) == 7);  // one past the end
  CHECK(ByteOffsetAt(text, 5) == std::string_view::npos);
  CHECK(CodePointOffsetAt(text, 0) == 0);
  CHECK(CodePointOffsetAt(text, 2) == 1);  // inside é
  CHECK(CodePointOffsetAt(text, 6) == 3);
  CHECK(CodePointOffsetAt(text, 7) == 4);
  std::string_view sub;
  REQUIRE(CodePointSubstr(text, 1, 3, &sub));
  CHECK(sub == "\xC3\xA9\xE2\x82\xAC");
  REQUIRE(CodePointSubstr(text, 4, 4, &sub));
  CHECK(sub.empty());
  CHECK_FALSE(CodePointSubstr(text, 3, 5, &sub));
  CHECK_FALSE(CodePointSubstr(text, 2, 1, &sub));
}
