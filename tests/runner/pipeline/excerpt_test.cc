// RedactSecrets finds a secret in every form a JSON encoder writes it (RFC 8259 §7: the
// two-character escapes, \uXXXX in either hex case, UTF-16 surrogate pairs beyond the BMP), in
// any mix, and masks the whole occurrence. The escaped spellings below are written by hand from
// RFC 8259 §7; the UTF-16 pair of U+1D518 (D835 DD18) is from the Unicode code charts' UTF-16
// form of that code point (common practice: (0x1D518 - 0x10000) >> 10 = 0x35, & 0x3FF = 0x118).

#include "runner/pipeline/excerpt.h"

#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>
#include <string>

using plumb::RedactSecrets;

TEST_CASE("a secret is masked in each escaped form and in mixes of them") {
  const std::vector<std::string> secret = {
      "K\"w/\\\t\n\xC3\xA9\xF0\x9D\x94\x98"};  // K"w/\<tab><lf>é𝔘
  // As itself.
  CHECK(RedactSecrets("<" + secret[0] + ">", secret) == "<***>");
  // As a JSON encoder writes it (short escapes, non-ASCII raw).
  CHECK(RedactSecrets(R"(<K\"w/\\\t\né)"
                      "\xF0\x9D\x94\x98>",
                      secret) == "<***>");
  // ensure_ascii style: lowercase \u escapes, a surrogate pair, '/' as '\/'.
  CHECK(RedactSecrets(R"(<K\"w\/\\\u0009\u000a\u00e9\ud835\udd18>)", secret) == "<***>");
  // Every code point as \uXXXX, uppercase hex.
  CHECK(RedactSecrets(R"(<\u004B\u0022\u0077\u002F\u005C\u0009\u000A\u00E9\uD835\uDD18>)",
                      secret) == "<***>");
  // Not a complete secret: untouched.
  CHECK(RedactSecrets(R"(<K\"w\/\\\u0009\u000a\u00e9>)", secret) ==
        R"(<K\"w\/\\\u0009\u000a\u00e9>)");
}

TEST_CASE("nlohmann's encodings of a secret are all masked") {
  const std::string value = "Qx\"7\\u004b-\xE6\x97\xA5\t";
  const nlohmann::json reply = {{"answer", "before " + value + " after"}};
  CHECK(RedactSecrets(reply.dump(), {value}) == R"({"answer":"before *** after"})");
  CHECK(RedactSecrets(reply.dump(-1, ' ', true), {value}) == R"({"answer":"before *** after"})");
}

TEST_CASE("decoded JSON strings are redacted, keys included") {
  nlohmann::json value = nlohmann::json::parse(R"({"a\u0062c": ["x abc y", {"k": "abc"}]})");
  plumb::RedactJsonStrings(&value, {"abc"});
  CHECK(value == nlohmann::json::parse(R"({"***": ["x *** y", {"k": "***"}]})"));
}

TEST_CASE("a secret of backslashes against a long run of them ends") {
  // Each backslash may be itself or an escaped one; the matcher follows all ways at once.
  const std::string secret(40, '\\');
  const std::string text = std::string(4000, '\\') + "x";
  CHECK(RedactSecrets(text, {secret + "y"}) == text);
  CHECK(RedactSecrets(text, {secret}).find('\\') == std::string::npos);
}
