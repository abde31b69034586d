// The corpus: safe doc-id resolution, UTF-8 validation, quote location with code-point offsets
// and the fingerprint. Offsets are counted by hand on the document below.

#include "runner/suite/corpus.h"

#include <sys/stat.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <cstdlib>
#include <string>

#include "runner/base/code_points.h"
#include "runner/base/sha256.h"
#include "tests/support/temp_dir.h"

namespace plumb {
namespace {

using plumb_test::TempDir;

// Code points, counted by hand:
//   "Le café — ferry\n"  L0 e1 _2 c3 a4 f5 é6 _7 —8 _9 f10 e11 r12 r13 y14 \n15
//   "Boarding  closes\tten minutes before departure.\n"
//    B16..g23, two spaces 24-25, closes 26..31, tab 32, ten 33..35, _36, minutes 37..43, _44,
//    before 45..50, _51, departure 52..60, '.'61, \n62
// 63 code points; é is 2 bytes and — (U+2014) 3 in UTF-8, so 66 bytes.
const char kDoc[] =
    "Le caf\xC3\xA9 \xE2\x80\x94 ferry\nBoarding  closes\tten minutes before departure.\n";

TEST_CASE("a document's length is in code points") {
  TempDir dir;
  dir.Write("docs/boarding.md", kDoc);
  Corpus corpus;
  std::string error;
  REQUIRE(corpus.Open(dir.path() + "/docs", &error));
  const Document* doc = corpus.Get("boarding.md", &error);
  REQUIRE(doc != nullptr);
  CHECK(doc->text.size() == 66);
  CHECK(doc->length_cp == 63);
  CHECK(doc->sha256 == Sha256Hex(kDoc));
  CHECK(corpus.Get("boarding.md", &error) == doc);  // cached
}

TEST_CASE("FindQuote: exact matches give code-point offsets") {
  Document doc{"boarding.md", kDoc, 63, "", {}};
  int64_t start = -1, end = -1;
  int occurrences = 0;
  REQUIRE(FindQuote(doc, "ferry", &start, &end, &occurrences));
  CHECK(start == 10);
  CHECK(end == 15);
  CHECK(occurrences == 1);
  REQUIRE(FindQuote(doc, "caf\xC3\xA9 \xE2\x80\x94 ferry", &start, &end, &occurrences));
  CHECK(start == 3);
  CHECK(end == 15);
  CHECK(CodePointSlice(doc, 3, 7) == "caf\xC3\xA9");

  // "re" is in "before" (r49 e50) and "departure" (r58 e59): first one used, both counted.
  REQUIRE(FindQuote(doc, "re", &start, &end, &occurrences));
  CHECK(start == 49);
  CHECK(end == 51);
  CHECK(occurrences == 2);
}

TEST_CASE("FindQuote: whitespace runs collapse and map back to the original text") {
  Document doc{"boarding.md", kDoc, 63, "", {}};
  int64_t start = -1, end = -1;
  int occurrences = 0;
  // The document has two spaces after "Boarding" and a tab after "closes".
  REQUIRE(FindQuote(doc, "Boarding closes ten minutes", &start, &end, &occurrences));
  CHECK(start == 16);
  CHECK(end == 44);
  CHECK(occurrences == 1);
  CHECK(CodePointSlice(doc, start, end) == "Boarding  closes\tten minutes");

  // Across the newline, with the quote's own whitespace different again and padded.
  REQUIRE(FindQuote(doc, "  ferry \u00A0 Boarding\n", &start, &end, &occurrences));
  CHECK(start == 10);
  CHECK(end == 24);

  CHECK_FALSE(FindQuote(doc, "ferry  boarding", &start, &end, &occurrences));  // case differs
  CHECK(occurrences == 0);
  CHECK_FALSE(FindQuote(doc, "", &start, &end, &occurrences));
  CHECK_FALSE(FindQuote(doc, " \t ", &start, &end, &occurrences));
}

TEST_CASE("doc ids that leave the corpus are refused") {
  TempDir dir;
  dir.Write("docs/a.md", "inside");
  dir.Write("secret.md", "outside");
  Corpus corpus;
  std::string error;
  REQUIRE(corpus.Open(dir.path() + "/docs", &error));

  CHECK(corpus.Get("../secret.md", &error) == nullptr);
  CHECK(error ==
        "doc '../secret.md' contains a '..' component; docs must be relative paths inside the "
        "corpus dir, with '/' separators");
  CHECK(corpus.Get(dir.path() + "/secret.md", &error) == nullptr);
  CHECK(error.find("is an absolute path; docs must be relative paths inside the corpus dir") !=
        std::string::npos);
  CHECK(corpus.Get("sub\\a.md", &error) == nullptr);
  CHECK(error.find("contains a backslash") != std::string::npos);
  CHECK(corpus.Get("./a.md", &error) == nullptr);
  CHECK(corpus.Get("missing.md", &error) == nullptr);
  CHECK(error == "no document 'missing.md' in corpus '" + dir.path() + "/docs'");

  // A symlink inside the corpus pointing outside it: the id looks harmless, realpath does not.
  REQUIRE(symlink((dir.path() + "/secret.md").c_str(), (dir.path() + "/docs/link.md").c_str()) ==
          0);
  CHECK(corpus.Get("link.md", &error) == nullptr);
  CHECK(error.find("doc 'link.md' resolves to '") == 0);
  CHECK(error.find("outside the corpus dir; docs must be relative paths inside the corpus dir") !=
        std::string::npos);

  // A symlink that stays inside is fine.
  REQUIRE(symlink("a.md", (dir.path() + "/docs/alias.md").c_str()) == 0);
  const Document* doc = corpus.Get("alias.md", &error);
  REQUIRE(doc != nullptr);
  CHECK(doc->text == "inside");
}

TEST_CASE("a document that is not UTF-8 is named with the first bad byte offset") {
  TempDir dir;
  // "ok " then 0xC3 0x28: a lead byte followed by a non-continuation byte, at offset 3.
  dir.Write("docs/bad.md", std::string("ok \xC3\x28 rest"));
  // An overlong encoding of '/' (0xC0 0xAF), RFC 3629 §3 forbids it, at offset 1.
  dir.Write("docs/overlong.md", std::string("a\xC0\xAF"));
  Corpus corpus;
  std::string error;
  REQUIRE(corpus.Open(dir.path() + "/docs", &error));
  CHECK(corpus.Get("bad.md", &error) == nullptr);
  CHECK(error == "doc 'bad.md' is not valid UTF-8: ill-formed byte sequence at byte offset 3");
  CHECK(corpus.Get("overlong.md", &error) == nullptr);
  CHECK(error == "doc 'overlong.md' is not valid UTF-8: ill-formed byte sequence at byte offset 1");
}

TEST_CASE("UTF-8 validation follows RFC 3629") {
  size_t bad = 0;
  CHECK(IsValidUtf8("caf\xC3\xA9 \xF0\x9F\x9A\xA2", &bad));  // é and U+1F6A2 (ship)
  CHECK_FALSE(IsValidUtf8("\xED\xA0\x80", &bad));            // a UTF-16 surrogate, U+D800
  CHECK(bad == 0);
  CHECK_FALSE(IsValidUtf8("ab\xF4\x90\x80\x80", &bad));  // above U+10FFFF
  CHECK(bad == 2);
  CHECK_FALSE(IsValidUtf8("abc\xE2\x80", &bad));  // truncated
  CHECK(bad == 3);
  // ASCII is skipped eight bytes at a time: a bad byte at every offset past such runs, and
  // good multi-byte text between them, keep their offsets.
  for (size_t at = 0; at < 40; ++at) {
    std::string text = std::string(at, 'x') + "\xC3\xA9" + std::string(11, 'y');
    CHECK(IsValidUtf8(text, &bad));
    text[at + 1] = 'z';  // é's second byte replaced: the lead byte at `at` is now ill-formed
    CHECK_FALSE(IsValidUtf8(text, &bad));
    CHECK(bad == at);
  }
}

TEST_CASE("the fingerprint covers every regular file and changes with an edit") {
  TempDir dir;
  dir.Write("docs/a.md", "alpha");
  dir.Write("docs/sub/b.md", "beta");
  Corpus corpus;
  std::string error;
  REQUIRE(corpus.Open(dir.path() + "/docs", &error));

  // The definition, written out: sha256 over sorted "id NUL sha256(text) LF".
  std::string expected_input = std::string("a.md") + '\0' + Sha256Hex("alpha") + "\n" + "sub/b.md" +
                               '\0' + Sha256Hex("beta") + "\n";
  CHECK(corpus.Fingerprint() == Sha256Hex(expected_input));

  // Symlinks are not regular files: adding one leaves the fingerprint alone.
  REQUIRE(symlink("a.md", (dir.path() + "/docs/link.md").c_str()) == 0);
  CHECK(corpus.Fingerprint() == Sha256Hex(expected_input));

  std::string before = corpus.Fingerprint();
  dir.Write("docs/sub/b.md", "beta!");
  CHECK(corpus.Fingerprint() != before);
}

// Issue 17 item 9: `corpus: /` made plumb check read every file on the machine and block on
// /proc/kmsg. The walk skips what is not a regular file or directory, stays on the corpus's
// file system, and stops at its bounds; each skip is counted for the warning.
TEST_CASE("the fingerprint skips FIFOs and symlinks and says what it skipped") {
  TempDir dir;
  dir.Write("docs/a.md", "alpha");
  REQUIRE(mkfifo((dir.path() + "/docs/pipe").c_str(), 0644) == 0);  // open(2) would block
  REQUIRE(symlink("a.md", (dir.path() + "/docs/link.md").c_str()) == 0);
  Corpus corpus;
  std::string error;
  REQUIRE(corpus.Open(dir.path() + "/docs", &error));
  FingerprintSkips skips;
  CHECK(corpus.Fingerprint({}, &skips) ==
        Sha256Hex(std::string("a.md") + '\0' + Sha256Hex("alpha") + "\n"));
  CHECK(skips.not_regular == 2);
  CHECK(skips.stopped.empty());
  CHECK(skips.Describe("docs") ==
        "the fingerprint of corpus 'docs' skipped 2 entries that are not a regular file or "
        "directory (symlinks, devices, FIFOs, sockets)");
}

TEST_CASE("the fingerprint stops at its bounds and covers the same files every time") {
  TempDir dir;
  dir.Write("docs/a.md", "alpha");
  dir.Write("docs/b/c.md", "gamma");
  dir.Write("docs/d.md", "delta");
  Corpus corpus;
  std::string error;
  REQUIRE(corpus.Open(dir.path() + "/docs", &error));
  // Names in byte order: a.md, b, b/c.md, d.md; three entries cover a.md and b/c.md.
  FingerprintLimits limits;
  limits.max_entries = 3;
  FingerprintSkips skips;
  const std::string covered = Sha256Hex(std::string("a.md") + '\0' + Sha256Hex("alpha") + "\n" +
                                        "b/c.md" + '\0' + Sha256Hex("gamma") + "\n");
  CHECK(corpus.Fingerprint(limits, &skips) == covered);
  CHECK(skips.stopped == "stopped after 3 directory entries");
  CHECK(skips.Describe("docs") ==
        "the fingerprint of corpus 'docs' stopped after 3 directory entries; it covers the "
        "files read before. Point 'corpus' at the documents' own directory");

  limits = FingerprintLimits{};
  limits.max_bytes = 10;  // "alpha" and "gamma" fit, "delta" would make 15
  skips = FingerprintSkips{};
  CHECK(corpus.Fingerprint(limits, &skips) == covered);
  CHECK(skips.stopped == "stopped at d.md, past 10 bytes read");
}

TEST_CASE("Open refuses what is not a directory") {
  TempDir dir;
  std::string file = dir.Write("file.md", "x");
  Corpus corpus;
  std::string error;
  CHECK_FALSE(corpus.Open(dir.path() + "/nope", &error));
  CHECK(error == "corpus directory '" + dir.path() + "/nope' does not exist");
  CHECK_FALSE(corpus.Open(file, &error));
  CHECK(error == "corpus directory '" + file + "' is not a directory");
}

}  // namespace
}  // namespace plumb
