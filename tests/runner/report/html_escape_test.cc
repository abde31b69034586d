// Escaping of untrusted text for the HTML report. Expected values are worked by hand from the
// WHATWG HTML standard (§13.1.2.6 "restrictions on the contents of raw text and escapable raw
// text elements" and §13.1.4 character references: `&`, `<`, `>` in text and the quote
// characters in attribute values are written as character references) and, for ill-formed
// UTF-8, from the Unicode Standard §3.9 "U+FFFD substitution of maximal subparts", cross-checked
// with Python's bytes.decode("utf-8", "replace"), which follows the same practice.

#include "runner/report/html_escape.h"

#include <catch2/catch.hpp>

using plumb::EscapeHtmlAttribute;
using plumb::EscapeHtmlText;

TEST_CASE("html escape: markup in text becomes character references", "[html_escape]") {
  CHECK(EscapeHtmlText("<script>alert('x')</script>") == "&lt;script&gt;alert('x')&lt;/script&gt;");
  CHECK(EscapeHtmlText("<img src=x onerror=\"alert(1)\">") ==
        "&lt;img src=x onerror=\"alert(1)\"&gt;");
  CHECK(EscapeHtmlText("</textarea><b>") == "&lt;/textarea&gt;&lt;b&gt;");
  CHECK(EscapeHtmlText("fish & chips") == "fish &amp; chips");
}

TEST_CASE("html escape: an existing reference is not decoded or kept", "[html_escape]") {
  // "&amp;" in a pipeline's answer is five characters of text, and must read as such.
  CHECK(EscapeHtmlText("&amp; &#60;") == "&amp;amp; &amp;#60;");
}

TEST_CASE("html escape: attribute values also escape both quotes", "[html_escape]") {
  CHECK(EscapeHtmlAttribute("\" onmouseover=\"x") == "&quot; onmouseover=&quot;x");
  CHECK(EscapeHtmlAttribute("it's") == "it&#39;s");
  CHECK(EscapeHtmlAttribute("javascript:alert(1)") == "javascript:alert(1)");  // text, not a URL
  CHECK(EscapeHtmlAttribute("a<b>&c") == "a&lt;b&gt;&amp;c");
}

TEST_CASE("html escape: non-ASCII text passes through unchanged", "[html_escape]") {
  CHECK(EscapeHtmlText("caf\xC3\xA9 \xE5\x8D\x81\xE5\x88\x86 \xF0\x9F\x9A\xA2") ==
        "caf\xC3\xA9 \xE5\x8D\x81\xE5\x88\x86 \xF0\x9F\x9A\xA2");
}

TEST_CASE("html escape: ill-formed UTF-8 becomes one U+FFFD per maximal subpart", "[html_escape]") {
  const std::string fffd = "\xEF\xBF\xBD";
  // Python: b'a\xe2\x82(b\xed\xa0\x80c'.decode('utf-8', 'replace') ==
  // 'a\ufffd(b\ufffd\ufffd\ufffdc'
  CHECK(EscapeHtmlText("a\xE2\x82(b\xED\xA0\x80"
                       "c") == "a" + fffd + "(b" + fffd + fffd + fffd + "c");
  CHECK(EscapeHtmlText("\xFF") == fffd);
  CHECK(EscapeHtmlText("\xC0\xAF") == fffd + fffd);      // overlong '/' (Unicode Table 3-8 style)
  CHECK(EscapeHtmlText("x\xF0\x9F\x9A") == "x" + fffd);  // truncated 4-byte sequence
}

TEST_CASE("html escape: controls other than tab and line breaks become U+FFFD", "[html_escape]") {
  const std::string fffd = "\xEF\xBF\xBD";
  CHECK(EscapeHtmlText(std::string("a\0b", 3)) == "a" + fffd + "b");
  CHECK(EscapeHtmlText("a\x07"
                       "b\tc\nd\re") == "a" + fffd + "b\tc\nd\re");
  CHECK(EscapeHtmlText("\xC2\x85") == fffd);  // U+0085 NEXT LINE, a C1 control
  CHECK(EscapeHtmlText("\x7F") == fffd);
}

// Issue 17 item 11: U+202E from a pipeline went raw into the page, so "txt.exe" could read as
// "exe.txt". The explicit formatting characters of UAX #9 §2 Table 1 (LRE, RLE, PDF, LRO,
// RLO = U+202A..U+202E; LRI, RLI, FSI, PDI = U+2066..U+2069), encoded in UTF-8 as E2 80 AA..AE
// and E2 81 A6..A9 (Unicode §3.9 Table 3-6), are shown as text; the implicit marks stay.
TEST_CASE("html escape: bidi override and isolate controls are shown, not obeyed",
          "[html_escape]") {
  CHECK(EscapeHtmlText("invoice\xE2\x80\xAEtxt.exe") == "invoice[U+202E]txt.exe");
  CHECK(EscapeHtmlAttribute("\xE2\x80\xAA\xE2\x80\xAB\xE2\x80\xAC\xE2\x80\xAD") ==
        "[U+202A][U+202B][U+202C][U+202D]");
  CHECK(EscapeHtmlText("\xE2\x81\xA6x\xE2\x81\xA7y\xE2\x81\xA8z\xE2\x81\xA9") ==
        "[U+2066]x[U+2067]y[U+2068]z[U+2069]");
  // U+200F RIGHT-TO-LEFT MARK and U+2065 (unassigned, next to the isolates) pass unchanged.
  CHECK(EscapeHtmlText("\xE2\x80\x8F\xE2\x81\xA5") == "\xE2\x80\x8F\xE2\x81\xA5");
}
