// The suite loader (SPEC §4, §5): one test per validation error, checking the exact
// file:line:column and the message and hint, plus a full valid suite with includes. Every line
// and column below is counted by hand on the YAML written beside it (1-based, in characters).

#include "runner/suite/suite_loader.h"

#include <re2/re2.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <string>

#include "runner/base/sha256.h"
#include "runner/pipeline/adapter.h"
#include "tests/support/temp_dir.h"

namespace plumb {
namespace {

namespace fs = std::filesystem;

using plumb_test::TempDir;

// The document of tests/runner/corpus_test.cc, with its code points counted there:
// "Le café — ferry" is 0..14, "Boarding" 16..23, "Boarding  closes\tten minutes" 16..43,
// 63 code points in all.
const char kDoc[] =
    "Le caf\xC3\xA9 \xE2\x80\x94 ferry\nBoarding  closes\tten minutes before departure.\n";

struct Loaded {
  bool ok = false;
  Suite suite;
  Diagnostics errors;
  Diagnostics warnings;
};

Loaded Load(const std::string& path, const LoadOptions& options = {}) {
  Loaded out;
  out.ok = LoadSuite(path, options, &out.suite, &out.errors, &out.warnings);
  return out;
}

// The one diagnostic whose message contains `part`.
const Diagnostic& Find(const Diagnostics& list, const std::string& part) {
  const Diagnostic* found = nullptr;
  int count = 0;
  for (const Diagnostic& d : list) {
    if (d.message.find(part) != std::string::npos) {
      found = &d;
      ++count;
    }
  }
  INFO("looking for '" << part << "' in:\n" << FormatDiagnostics(list));
  REQUIRE(count == 1);
  return *found;
}

void CheckAt(const Diagnostic& d, const std::string& file, int line, int column) {
  INFO(d.Format());
  CHECK(d.pos.file == file);
  CHECK(d.pos.line == line);
  CHECK(d.pos.column == column);
}

// A suite with a corpus holding boarding.md; `body` follows the three header lines.
std::string WriteSuite(const TempDir& dir, const std::string& body) {
  dir.Write("docs/boarding.md", kDoc);
  return dir.Write("suite.yaml", "plumb: 1\nname: t\ncorpus: docs\n" + body);
}

TEST_CASE("unknown case key: did you mean, at the key") {
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "cases:\n"              // 4
                                 "  - id: a\n"           // 5, case at column 5
                                 "    question: Q?\n"    // 6
                                 "    anwsers: [x]\n");  // 7, key at column 5
  Loaded r = Load(suite);
  CHECK_FALSE(r.ok);
  const Diagnostic& unknown = Find(r.errors, "unknown key 'anwsers'");
  CheckAt(unknown, suite, 7, 5);
  CHECK(unknown.message == "unknown key 'anwsers' in a case");
  CHECK(unknown.hint == "did you mean 'answers'?");
  // The missing answers are reported too, at the case, and in file order.
  const Diagnostic& missing = Find(r.errors, "has no 'answers'");
  CheckAt(missing, suite, 5, 5);
  REQUIRE(r.errors.size() == 2);
  CHECK(&r.errors[0] == &missing);
}

TEST_CASE("unknown key with nothing close: the hint lists the valid keys") {
  TempDir dir;
  std::string suite = WriteSuite(dir, "colour: red\ncases: []\n");  // line 4, column 1
  Loaded r = Load(suite);
  const Diagnostic& d = Find(r.errors, "unknown key 'colour'");
  CheckAt(d, suite, 4, 1);
  CHECK(d.message == "unknown key 'colour' at the top level of the suite");
  // The keys of SPEC §4 plus correct_from, min_overlap and max_error_rate, in the loader's
  // order.
  CHECK(d.hint ==
        "valid keys are: plumb, name, corpus, normalize, lang, include, retrieval_k, case_pass, "
        "correct_from, min_overlap, max_error_rate, floors, ceilings, graders, pipelines, "
        "updates, cases");
}

TEST_CASE("wrong type: expected a list of strings, got a mapping") {
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "cases:\n"
                                 "  - id: a\n"
                                 "    question: Q?\n"
                                 "    answers: {a: b}\n");  // line 7; value at column 14
  Loaded r = Load(suite);
  const Diagnostic& d = Find(r.errors, "wrong type for 'answers'");
  CheckAt(d, suite, 7, 14);
  CHECK(d.hint == "expected a list of strings, got a mapping");
}

TEST_CASE("duplicate case id across an include names both places") {
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "cases:\n"
                                 "  - id: dup\n"  // line 5, value at column 9
                                 "    question: Q\n"
                                 "    answers: []\n"
                                 "include: [more.yaml]\n");
  std::string more = dir.Write("more.yaml",
                               "cases:\n"
                               "  - {id: dup, question: Q, answers: []}\n");  // 2:10
  Loaded r = Load(suite);
  const Diagnostic& d = Find(r.errors, "duplicate case id 'dup'");
  CheckAt(d, more, 2, 10);
  CHECK(d.hint == "first defined at " + suite + ":5:9");
}

TEST_CASE("missing question points at the case") {
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "cases:\n"
                                 "  - id: q-less\n"  // line 5, case at column 5
                                 "    answers: [x]\n");
  Loaded r = Load(suite);
  const Diagnostic& d = Find(r.errors, "no 'question'");
  CheckAt(d, suite, 5, 5);
  CHECK(d.message == "case 'q-less' has no 'question'");
  REQUIRE(r.errors.size() == 1);
}

TEST_CASE("a case without an id points at the case") {
  TempDir dir;
  std::string suite = WriteSuite(dir, "cases:\n  - {question: Q, answers: []}\n");  // 5:5
  Loaded r = Load(suite);
  CheckAt(Find(r.errors, "case has no 'id'"), suite, 5, 5);
}

TEST_CASE("quote not found names the doc and shows the quote's first 60 characters") {
  TempDir dir;
  std::string quote =
      "The gangway is lifted ten minutes before the departure time shown in the timetable.";
  std::string suite = WriteSuite(dir,
                                 "cases:\n"
                                 "  - id: a\n"
                                 "    question: Q\n"
                                 "    answers: [x]\n"
                                 "    sources:\n"
                                 "      - doc: boarding.md\n"  // 9
                                 "        quote: \"" +
                                     quote + "\"\n");  // 10, value at 16
  Loaded r = Load(suite);
  const Diagnostic& d = Find(r.errors, "quote not found");
  CheckAt(d, suite, 10, 16);
  CHECK(d.message == "quote not found in 'boarding.md': \"" + quote.substr(0, 60) + "...\"");
  CHECK(d.hint ==
        "the quote must appear in the document as written (runs of whitespace may differ)");
}

TEST_CASE("offsets out of range give the document's length") {
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "cases:\n"
                                 "  - id: a\n"
                                 "    question: Q\n"
                                 "    answers: [x]\n"
                                 "    sources:\n"
                                 "      - doc: boarding.md\n"
                                 "        start: 10\n"  // line 10, value at column 16
                                 "        end: 64\n"
                                 "      - {doc: boarding.md, start: 5, end: 5}\n"     // 12
                                 "      - {doc: boarding.md, start: 0, end: 63}\n");  // fine
  Loaded r = Load(suite);
  const Diagnostic& d = Find(r.errors, "offsets [10, 64)");
  CheckAt(d, suite, 10, 16);
  CHECK(d.message == "offsets [10, 64) are out of range for 'boarding.md'");
  CHECK(d.hint == "'boarding.md' is 63 code points long; offsets need 0 <= start < end <= 63");
  // "      - {doc: boarding.md, start: " is 34 characters: the 5 is at column 35.
  CheckAt(Find(r.errors, "offsets [5, 5)"), suite, 12, 35);
  CHECK(r.errors.size() == 2);
}

TEST_CASE("a doc escaping the corpus is refused, by path or by symlink") {
  TempDir dir;
  dir.Write("secret.md", "outside the corpus");
  std::string suite = WriteSuite(dir,
                                 "cases:\n"
                                 "  - id: a\n"
                                 "    question: Q\n"
                                 "    answers: [x]\n"
                                 "    sources:\n"
                                 "      - {doc: ../secret.md, quote: outside}\n"  // 9:15
                                 "      - {doc: link.md, quote: outside}\n");     // 10:15
  REQUIRE(symlink((dir.Path("secret.md")).c_str(), dir.Path("docs/link.md").c_str()) == 0);
  Loaded r = Load(suite);
  const Diagnostic& dots = Find(r.errors, "'../secret.md'");
  CheckAt(dots, suite, 9, 15);
  CHECK(dots.message ==
        "doc '../secret.md' contains a '..' component; docs must be relative paths inside the "
        "corpus dir, with '/' separators");
  const Diagnostic& link = Find(r.errors, "'link.md'");
  CheckAt(link, suite, 10, 15);
  CHECK(link.message.find("outside the corpus dir; docs must be relative paths inside the "
                          "corpus dir") != std::string::npos);
}

TEST_CASE("a bad pattern reports RE2's own message") {
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "cases:\n"
                                 "  - id: a\n"
                                 "    question: Q\n"
                                 "    answers: [x]\n"
                                 "    patterns: ['\\b(10|ten)\\s+min', '\\b(10']\n");  // 8
  Loaded r = Load(suite);
  // The reference: RE2 itself (Debian libre2-dev), compiling the same pattern.
  RE2::Options quiet;
  quiet.set_log_errors(false);
  RE2 reference("\\b(10", quiet);
  REQUIRE_FALSE(reference.ok());
  const Diagnostic& d = Find(r.errors, "invalid pattern");
  // "    patterns: ['\b(10|ten)\s+min', " is 35 characters: the second item starts at 36.
  CheckAt(d, suite, 8, 36);
  CHECK(d.message == "invalid pattern '\\b(10'");
  CHECK(d.hint == "RE2 says: " + reference.error());
  CHECK(r.errors.size() == 1);
}

TEST_CASE("an include cycle names the chain") {
  TempDir dir;
  std::string suite = WriteSuite(dir, "include: [a.yaml]\n");
  std::string a = dir.Write("a.yaml", "include: [b.yaml]\ncases: []\n");
  std::string b = dir.Write("b.yaml", "cases: []\ninclude: [a.yaml]\n");  // item at 2:11
  Loaded r = Load(suite);
  const Diagnostic& d = Find(r.errors, "include cycle");
  CheckAt(d, b, 2, 11);
  CHECK(d.message == "include cycle: " + a + " -> " + b + " -> " + a);
  CHECK(r.errors.size() == 1);
}

TEST_CASE("a file that includes itself is a cycle too") {
  TempDir dir;
  std::string suite = WriteSuite(dir, "include: [suite.yaml]\n");  // 4:11
  Loaded r = Load(suite);
  const Diagnostic& d = Find(r.errors, "include cycle");
  CheckAt(d, suite, 4, 11);
  CHECK(d.message == "include cycle: " + suite + " -> " + suite);
}

TEST_CASE("a YAML syntax error is pinned to file:line:column") {
  TempDir dir;
  // The second ':' on line 2 is an illegal map value: "name: ferry:" puts it at column 12.
  std::string suite = dir.Write("suite.yaml", "plumb: 1\nname: ferry: x\n");
  Loaded r = Load(suite);
  REQUIRE(r.errors.size() == 1);
  CheckAt(r.errors[0], suite, 2, 12);
  CHECK(r.errors[0].message == "YAML syntax error: illegal map value");
}

TEST_CASE("a ',' where a value should start is a syntax error, not endless empty documents") {
  // yaml-cpp 0.7's LoadAll returns empty documents forever at such a ',' (the process grew to
  // 24 GiB before the kernel killed it: found by tests/fuzz/suite_yaml_fuzz.cc).
  TempDir dir;
  const std::string lead = dir.Write("lead.yaml", "# a comment\n  , 3]\nplumb: 1\n");
  Loaded r = Load(lead);
  REQUIRE(r.errors.size() == 1);
  CheckAt(r.errors[0], lead, 2, 3);
  CHECK(r.errors[0].message == "YAML syntax error: ',' where a value should start");
  CHECK(r.errors[0].hint ==
        "a ',' separates items only inside [ ] or { }; quote it to make it text");
  // After a complete value the ',' would start a second document.
  const std::string after = dir.Write("after.yaml", "\"plumb\" ,\n");
  r = Load(after);
  REQUIRE(r.errors.size() == 1);
  CheckAt(r.errors[0], after, 1, 9);
  CHECK(r.errors[0].message == "YAML syntax error: ',' where a value should start");
  // A real second document is named as such, at its '---'.
  const std::string two = dir.Write("two.yaml", "plumb: 1\n---\nname: x\n");
  r = Load(two);
  REQUIRE(r.errors.size() == 1);
  CheckAt(r.errors[0], two, 2, 1);
  CHECK(r.errors[0].message == "the file holds more than one YAML document");
}

TEST_CASE("an alias inside the node its anchor names is refused at the alias") {
  TempDir dir;
  const std::string suite =
      dir.Write("suite.yaml", "plumb: 1\nname: x\ncases: &c [{id: a, question: q, answers: *c}]\n");
  Loaded r = Load(suite);
  REQUIRE(r.errors.size() == 1);
  CheckAt(r.errors[0], suite, 3, 42);
  CHECK(r.errors[0].message == "an alias used inside the node its anchor names");
}

TEST_CASE("a bad JSONL line: column in characters from the parser's byte position") {
  TempDir dir;
  std::string suite = WriteSuite(dir, "include: [gen.jsonl]\n");
  // Line 2: the '}' after '[' is the error. Counting characters, é counts one:
  //   {"id": "x", "question": "café?", "answers": [}
  //   '{' is 1, '"café?"' spans 25..31, '[' is 45, '}' is 46 (47 counting bytes).
  std::string gen = dir.Write("gen.jsonl",
                              "{\"id\": \"ok\", \"question\": \"Q\", \"answers\": []}\n"
                              "{\"id\": \"x\", \"question\": \"caf\xC3\xA9?\", \"answers\": [}\n"
                              "\n"
                              "[1, 2]\n");
  Loaded r = Load(suite);
  const Diagnostic& d = Find(r.errors, "not valid JSON");
  CheckAt(d, gen, 2, 46);
  CHECK(d.message.find("not valid JSON: syntax error while parsing value - unexpected '}'") == 0);
  // Line 4 is JSON but not a case object.
  CheckAt(Find(r.errors, "expected a case (a mapping), got a list"), gen, 4, 1);
  REQUIRE(r.suite.cases.size() == 1);
  CHECK(r.suite.cases[0].id == "ok");
}

TEST_CASE("a JSONL case reports its own problems at their columns") {
  TempDir dir;
  std::string suite = WriteSuite(dir, "include: [gen.jsonl]\n");
  //  {"id": "a", "question": "Q", "answers": "x"}   "x" is at column 41
  std::string gen =
      dir.Write("gen.jsonl", "{\"id\": \"a\", \"question\": \"Q\", \"answers\": \"x\"}\n");
  Loaded r = Load(suite);
  const Diagnostic& d = Find(r.errors, "wrong type for 'answers'");
  CheckAt(d, gen, 1, 41);
  CHECK(d.hint == "expected a list of strings, got a string (write [x] for a single one)");
}

TEST_CASE("files over 64 MiB are refused before parsing") {
  TempDir dir;
  std::string suite = WriteSuite(dir, "include: [big.yaml]\n");  // item at 4:11
  std::string big = dir.Write("big.yaml", "");
  // 64 MiB = 64 * 1024 * 1024 = 67108864 bytes; one more, as a sparse file.
  REQUIRE(truncate(big.c_str(), 67108864 + 1) == 0);
  Loaded r = Load(suite);
  const Diagnostic& d = Find(r.errors, "bytes; the limit is");
  CheckAt(d, suite, 4, 11);
  CHECK(d.message ==
        "include file '" + big + "' is 67108865 bytes; the limit is 67108864 bytes (64 MiB)");

  std::string big_suite = dir.Write("big-suite.yaml", "plumb: 1\n");
  REQUIRE(truncate(big_suite.c_str(), 67108864 + 1) == 0);
  Loaded s = Load(big_suite);
  REQUIRE(s.errors.size() == 1);
  CHECK(s.errors[0].message ==
        "suite file '" + big_suite + "' is 67108865 bytes; the limit is 67108864 bytes (64 MiB)");

  // Exactly at the limit is read (and then fails as YAML, which is not the size check).
  REQUIRE(truncate(big_suite.c_str(), 67108864) == 0);
  Loaded t = Load(big_suite);
  for (const Diagnostic& e : t.errors) CHECK(e.message.find("the limit is") == std::string::npos);
}

TEST_CASE("a billion-laughs alias bomb is refused") {
  TempDir dir;
  // Nine levels of nine aliases: 9^9 = 387,420,489 strings once expanded, in a few hundred bytes.
  std::string bomb =
      "plumb: 1\nname: t\ncases:\n  - id: a\n    question: Q\n    answers: []\n"
      "    input:\n      a: &a [lol, lol, lol, lol, lol, lol, lol, lol, lol]\n";
  std::string previous = "a";
  for (char level = 'b'; level <= 'i'; ++level) {
    bomb += "      " + std::string(1, level) + ": &" + std::string(1, level) + " [";
    for (int i = 0; i < 9; ++i) bomb += (i ? ", *" : "*") + previous;
    bomb += "]\n";
    previous = std::string(1, level);
  }
  std::string suite = dir.Write("suite.yaml", bomb);
  Loaded r = Load(suite);
  REQUIRE(r.errors.size() == 1);
  CHECK(r.errors[0].message ==
        "the document expands to more than 1000000 nodes (aliases are counted each time they "
        "are used)");
  CHECK(r.errors[0].pos.file == suite);
}

TEST_CASE("metric ids: did you mean, recall@K needs K, run-level ids not per case") {
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "retrieval_k: [1, 5]\n"                      // 4
                                 "case_pass: {token_f: 0.5, pass_rate: 1}\n"  // 5
                                 "floors:\n"                                  // 6
                                 "  recall@3: 0.5\n"                          // 7
                                 "  citation_recal: 0.7\n"                    // 8
                                 "  recall@5: 0.4\n"                          // 9: fine
                                 "  tags: {safety: {mrr: 2}}\n"               // 10
                                 "ceilings:\n"                                // 11
                                 "  latency_p95_ms: 2500\n"                   // 12: in ms
                                 "  error_rate: 1.5\n"                        // 13
                                 "cases: []\n");
  Loaded r = Load(suite);
  const Diagnostic& token = Find(r.errors, "'token_f'");
  CheckAt(token, suite, 5, 13);
  CHECK(token.message == "unknown metric id 'token_f' in 'case_pass'");
  CHECK(token.hint == "did you mean 'token_f1'?");
  const Diagnostic& pass_rate = Find(r.errors, "'pass_rate' is a run-level metric");
  CheckAt(pass_rate, suite, 5, 27);
  const Diagnostic& recall = Find(r.errors, "'recall@3'");
  CheckAt(recall, suite, 7, 3);
  CHECK(recall.message == "'recall@3' needs 3 in retrieval_k");
  CHECK(recall.hint == "retrieval_k is [1, 5]; add 3 to it");
  const Diagnostic& citation = Find(r.errors, "'citation_recal'");
  CheckAt(citation, suite, 8, 3);
  CHECK(citation.hint == "did you mean 'citation_recall'?");
  const Diagnostic& error_rate = Find(r.errors, "'ceilings.error_rate' is 1.5");
  CheckAt(error_rate, suite, 13, 15);
  CHECK(error_rate.hint == "expected a number between 0 and 1");
  // "  tags: {safety: {mrr: " is 23 characters: the 2 is at column 24.
  CheckAt(Find(r.errors, "'floors.tags.safety.mrr' is 2"), suite, 10, 24);
  CHECK(r.errors.size() == 6);
  CHECK(r.suite.thresholds.metrics.at("latency_p95_ms") == 2500);
  CHECK(r.suite.thresholds.metrics.at("recall@5") == 0.4);
}

TEST_CASE("required top-level keys and their values") {
  TempDir dir;
  std::string empty = dir.Write("empty.yaml", "cases: []\n");
  Loaded r = Load(empty);
  CheckAt(Find(r.errors, "missing required key 'plumb'"), empty, 1, 1);
  CheckAt(Find(r.errors, "missing required key 'name'"), empty, 1, 1);

  std::string bad = dir.Write("bad.yaml", "plumb: 2\nname: Ferry Handbook\n");
  Loaded b = Load(bad);
  const Diagnostic& version = Find(b.errors, "unsupported suite format version 2");
  CheckAt(version, bad, 1, 8);
  CHECK(version.hint == "this plumb reads 'plumb: 1'");
  const Diagnostic& name = Find(b.errors, "invalid suite name 'Ferry Handbook'");
  CheckAt(name, bad, 2, 7);
  CHECK(name.hint == "use lowercase letters, digits, '.', '_' and '-'");

  std::string nothing = dir.Write("nothing.yaml", "");
  Loaded n = Load(nothing);
  REQUIRE(n.errors.size() == 1);
  CHECK(n.errors[0].message == "the suite file is empty");

  Loaded missing = Load(dir.Path("no-such.yaml"));
  REQUIRE(missing.errors.size() == 1);
  CHECK(missing.errors[0].message ==
        "cannot read suite file '" + dir.Path("no-such.yaml") + "': No such file or directory");
}

TEST_CASE("normalize, lang and the fractions are checked") {
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "normalize: squda\n"        // 4:12
                                 "min_overlap: -0.1\n"       // 5:14
                                 "max_error_rate: five\n"    // 6:17
                                 "retrieval_k: [0, 5, 5]\n"  // 7: 0 at 15, second 5 at 21
                                 "cases: []\n");
  Loaded r = Load(suite);
  const Diagnostic& normalize = Find(r.errors, "unknown normalization profile 'squda'");
  CheckAt(normalize, suite, 4, 12);
  CHECK(normalize.hint == "did you mean 'squad'?");
  CheckAt(Find(r.errors, "'min_overlap' is -0.1, out of range"), suite, 5, 14);
  const Diagnostic& rate = Find(r.errors, "wrong type for 'max_error_rate'");
  CheckAt(rate, suite, 6, 17);
  CHECK(rate.hint == "expected a number between 0 and 1, got a string");
  CheckAt(Find(r.errors, "wrong value in 'retrieval_k'"), suite, 7, 15);
  CheckAt(Find(r.errors, "k = 5 is listed twice"), suite, 7, 21);
}

TEST_CASE("sources without a corpus are one error") {
  TempDir dir;
  std::string suite = dir.Write("suite.yaml",
                                "plumb: 1\nname: t\ncases:\n"
                                "  - id: a\n    question: Q\n    answers: [x]\n"
                                "    sources:\n"
                                "      - {doc: a.md, quote: x}\n"  // 8:9
                                "      - {doc: b.md, quote: y}\n");
  Loaded r = Load(suite);
  REQUIRE(r.errors.size() == 1);
  CheckAt(r.errors[0], suite, 8, 9);
  CHECK(r.errors[0].message == "this suite has gold sources but no corpus");
}

TEST_CASE("a source takes a quote or offsets, not both, not half") {
  TempDir dir;
  std::string suite =
      WriteSuite(dir,
                 "cases:\n"
                 "  - id: a\n    question: Q\n    answers: [x]\n"
                 "    sources:\n"
                 "      - {doc: boarding.md, quote: ferry, start: 1, end: 2}\n"  // 9
                 "      - {doc: boarding.md, start: 1}\n"                        // 10
                 "      - {doc: boarding.md}\n"                                  // 11
                 "      - {quote: ferry}\n"                                      // 12
                 "      - {doc: boarding.md, qoute: ferry}\n");                  // 13
  Loaded r = Load(suite);
  CheckAt(Find(r.errors, "either 'quote' or 'start' and 'end', not both"), suite, 9, 9);
  CheckAt(Find(r.errors, "a source with 'start' needs 'end' too"), suite, 10, 9);
  CHECK(Find(r.errors, "needs a 'quote', or 'start' and 'end'").pos.line == 11);
  CheckAt(Find(r.errors, "source has no 'doc'"), suite, 12, 9);
  const Diagnostic& typo = Find(r.errors, "unknown key 'qoute' in a source");
  CheckAt(typo, suite, 13, 28);
  CHECK(typo.hint == "did you mean 'quote'?");
}

TEST_CASE("an included YAML file holds only cases (and include)") {
  TempDir dir;
  std::string suite = WriteSuite(dir, "include: [more.yml]\n");
  std::string more = dir.Write("more.yml", "name: other\ncase: []\ncases: []\n");
  Loaded r = Load(suite);
  const Diagnostic& name = Find(r.errors, "'name' is not allowed in an included file");
  CheckAt(name, more, 1, 1);
  CHECK(name.hint ==
        "an included file holds only 'cases' (and 'include' for further files); set 'name' in "
        "the suite file");
  const Diagnostic& typo = Find(r.errors, "unknown key 'case' in an included file");
  CheckAt(typo, more, 2, 1);
  CHECK(typo.hint == "did you mean 'cases'?");

  std::string bad_ext = WriteSuite(dir, "include: [cases.txt]\n");
  CheckAt(Find(Load(bad_ext).errors, "is not a .yaml, .yml or .jsonl file"), bad_ext, 4, 11);
}

TEST_CASE("a referenced document that is not UTF-8 is named with the byte offset") {
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "cases:\n  - id: a\n    question: Q\n    answers: [x]\n"
                                 "    sources: [{doc: latin1.md, start: 0, end: 1}]\n");  // 8:21
  // "caf" then 0xE9, é in Latin-1: a lead byte with no continuation, at byte offset 3.
  dir.Write("docs/latin1.md", "caf\xE9 au lait");
  Loaded r = Load(suite);
  const Diagnostic& d = Find(r.errors, "latin1.md");
  CheckAt(d, suite, 8, 21);
  CHECK(d.message ==
        "doc 'latin1.md' is not valid UTF-8: ill-formed byte sequence at byte offset 3");
}

TEST_CASE("columns count characters, not bytes") {
  TempDir dir;
  // "  - {id: "é", question: Q, answers: [], tgs: [x]}": é is column 11, tgs column 41.
  std::string suite =
      WriteSuite(dir, "cases:\n  - {id: \"\xC3\xA9\", question: Q, answers: [], tgs: [x]}\n");
  Loaded r = Load(suite);
  const Diagnostic& tgs = Find(r.errors, "unknown key 'tgs'");
  CheckAt(tgs, suite, 5, 41);
  CHECK(tgs.hint == "did you mean 'tags'?");
  CheckAt(Find(r.errors, "invalid case id"), suite, 5, 10);
}

TEST_CASE("a quote found twice is a warning and the first occurrence is used") {
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "cases:\n  - id: a\n    question: Q\n    answers: [x]\n"
                                 "    sources: [{doc: boarding.md, quote: re}]\n");  // 8:41
  Loaded r = Load(suite);
  CHECK(r.ok);
  REQUIRE(r.warnings.size() == 1);
  CheckAt(r.warnings[0], suite, 8, 41);
  // "re" is in "before" (49..50) and "departure" (58..59), counted in corpus_test.cc.
  CHECK(r.warnings[0].message ==
        "quote occurs 2 times in 'boarding.md'; the first, at code points [49, 51), is used");
  CHECK(r.suite.cases.at(0).sources.at(0).start == 49);
}

TEST_CASE("every error is collected, not only the first") {
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "cases:\n"
                                 "  - {id: a, question: Q, answers: [x], tags: [\"no space\"]}\n"
                                 "  - {id: b, question: \"\", answers: [\"\"]}\n"
                                 "  - {id: c, question: Q, answers: [x], number: {value: ten}}\n"
                                 "  - {id: d, question: Q, answers: [x], input: [1]}\n"
                                 "  - {id: e, question: Q, answers: [x], number: {tolerance: -1, "
                                 "value: 1}}\n"
                                 "  - nope\n");
  Loaded r = Load(suite);
  CHECK(Find(r.errors, "invalid tag 'no space'").pos.line == 5);
  CHECK(Find(r.errors, "'question' is empty").pos.line == 6);
  CHECK(Find(r.errors, "an answer is empty").pos.line == 6);
  CHECK(Find(r.errors, "wrong type for 'number.value'").pos.line == 7);
  CHECK(Find(r.errors, "wrong type for 'input'").pos.line == 8);
  CHECK(Find(r.errors, "'number.tolerance' is negative").pos.line == 9);
  CheckAt(Find(r.errors, "expected a case (a mapping), got a string"), suite, 10, 5);
  CHECK(r.errors.size() == 7);
}

TEST_CASE("a valid suite with .yaml and .jsonl includes") {
  TempDir dir;
  dir.Write("docs/boarding.md", kDoc);
  std::string suite_text =
      "plumb: 1\n"
      "name: ferry-test\n"
      "corpus: ./docs/\n"
      "normalize: unicode\n"
      "lang: fr\n"
      "include: [more/first.yaml, gen.jsonl]\n"
      "retrieval_k: [1, 3]\n"
      "case_pass: {correct: 1, citation_recall: 0.5}\n"
      "min_overlap: 0.25\n"
      "max_error_rate: 0.1\n"
      "floors:\n"
      "  token_f1: 0.8\n"
      "  recall@3: 0.5\n"
      "  tags: {boarding: {correct: 0.9}}\n"
      "ceilings: {latency_p95_ms: 2500}\n"
      "cases:\n"
      "  - id: cafe\n"
      "    question: What is the caf\xC3\xA9 next to?\n"
      "    answers: [\"the ferry\"]\n"
      "    patterns: ['\\bferry\\b']\n"
      "    number: {value: 10, unit: minutes}\n"
      "    sources:\n"
      "      - {doc: boarding.md, quote: \"caf\xC3\xA9 \xE2\x80\x94 ferry\"}\n"
      "      - {doc: boarding.md, start: 16, end: 24}\n"
      "      - {doc: boarding.md, quote: \"Boarding closes ten minutes\"}\n"
      "    tags: [boarding]\n"
      "    input: {channel: kiosk, k: 3, ratio: 0.5, flag: true, none: null, quoted: \"42\", "
      "list: [1, \"a\"]}\n";
  std::string first_text =
      "cases:\n  - id: first\n    question: Q1\n    answers: []\ninclude: [nested.yaml]\n";
  std::string nested_text = "cases: [{id: nested, question: Q2, answers: [a]}]\n";
  std::string gen_text =
      "{\"id\": \"gen:1\", \"question\": \"Q3\", \"answers\": [\"x\"], \"input\": {\"n\": 1, "
      "\"s\": \"1\", \"f\": 2.5e0}}\n"
      "\n"
      "{\"id\": \"gen:2\", \"question\": \"Q4 \\u00e9\", \"answers\": [\"y\"], \"tags\": "
      "[\"gen\"]}\n";
  std::string suite = dir.Write("suite.yaml", suite_text);
  std::string first = dir.Write("more/first.yaml", first_text);
  std::string nested = dir.Write("more/nested.yaml", nested_text);
  std::string gen = dir.Write("gen.jsonl", gen_text);

  Loaded r = Load(suite);
  INFO(FormatDiagnostics(r.errors));
  REQUIRE(r.ok);
  CHECK(r.warnings.empty());
  const Suite& s = r.suite;
  CHECK(s.path == suite);
  CHECK(s.name == "ferry-test");
  CHECK(s.corpus_dir == dir.Path("docs"));
  CHECK(s.normalize == metrics::NormalizationProfile::kUnicode);
  CHECK(s.lang == "fr");
  CHECK(s.retrieval_k == std::vector<int>{1, 3});
  CHECK(s.case_pass == std::map<std::string, double>{{"correct", 1}, {"citation_recall", 0.5}});
  CHECK(s.min_overlap == 0.25);
  CHECK(s.max_error_rate == 0.1);
  CHECK(s.thresholds.metrics == std::map<std::string, double>{{"token_f1", 0.8},
                                                              {"recall@3", 0.5},
                                                              {"latency_p95_ms", 2500}});
  CHECK(s.thresholds.tags.at("boarding") == std::map<std::string, double>{{"correct", 0.9}});
  CHECK(s.pipelines.empty());

  // `include` is written above `cases`, so included cases come first, nested ones in place.
  REQUIRE(s.cases.size() == 5);
  CHECK(s.cases[0].id == "first");
  CHECK(s.cases[0].answers.empty());
  // A case without `input` holds none; its request carries an empty object.
  CHECK(s.cases[0].input.is_null());
  CHECK(CaseInput(s.cases[0]) == nlohmann::json::object());
  CHECK(PipelineRequest::RequestLine(s.cases[0].id, "q", s.cases[0].input, 0) ==
        R"({"id":"first","input":{},"question":"q","repeat":0})");
  CHECK(CaseInput(s.cases[2]) == s.cases[2].input);
  CHECK(s.cases[1].id == "nested");
  CHECK(s.cases[2].id == "gen:1");
  CHECK(s.cases[2].input == nlohmann::json::parse(R"({"n": 1, "s": "1", "f": 2.5})"));
  CHECK(s.cases[2].input["n"].is_number_integer());
  CHECK(s.cases[3].id == "gen:2");
  CHECK(s.cases[3].question == "Q4 \xC3\xA9");
  CHECK(s.cases[3].pos.file == gen);
  CHECK(s.cases[3].pos.line == 3);
  CHECK(s.cases[1].pos.file == nested);

  const Case& cafe = s.cases[4];
  CHECK(cafe.id == "cafe");
  CHECK(cafe.pos.line == 17);
  CHECK(cafe.pos.column == 5);
  CHECK(cafe.question == "What is the caf\xC3\xA9 next to?");
  CHECK(cafe.patterns == std::vector<std::string>{"\\bferry\\b"});
  REQUIRE(cafe.number.has_value());
  CHECK(cafe.number->value == 10);
  CHECK(cafe.number->tolerance == 0);
  CHECK(cafe.number->unit == "minutes");
  CHECK(cafe.tags == std::vector<std::string>{"boarding"});
  // Quoted "42" stays a string; plain scalars take their YAML core-schema types.
  CHECK(cafe.input == nlohmann::json::parse(R"({"channel": "kiosk", "k": 3, "ratio": 0.5,
      "flag": true, "none": null, "quoted": "42", "list": [1, "a"]})"));
  REQUIRE(cafe.sources.size() == 3);
  CHECK(cafe.sources[0].start == 3);  // offsets counted by hand above kDoc
  CHECK(cafe.sources[0].end == 15);
  CHECK(cafe.sources[0].quote == "caf\xC3\xA9 \xE2\x80\x94 ferry");
  CHECK(cafe.sources[0].text == "caf\xC3\xA9 \xE2\x80\x94 ferry");
  CHECK(cafe.sources[1].start == 16);
  CHECK(cafe.sources[1].end == 24);
  CHECK_FALSE(cafe.sources[1].quote.has_value());
  CHECK(cafe.sources[1].text == "Boarding");
  CHECK(cafe.sources[2].start == 16);  // whitespace-collapsed match
  CHECK(cafe.sources[2].end == 44);
  CHECK(cafe.sources[2].text == "Boarding  closes\tten minutes");
  CHECK(cafe.sources[2].pos.line == 25);
  CHECK(cafe.sources[2].pos.column == 9);

  // Hashes, from the definitions in runner/suite/suite_loader.h written out by hand.
  CHECK(s.files == std::vector<std::string>{suite, first, nested, gen});
  auto framed = [](const std::string& text) { return std::to_string(text.size()) + "\n" + text; };
  CHECK(s.suite_hash == Sha256Hex(framed(suite_text) + framed(first_text) + framed(nested_text) +
                                  framed(gen_text)));
  std::string nested_gold =
      R"({"answers":["a"],"number":null,"patterns":[],"question":"Q2","sources":[],"tags":[]})";
  CHECK(s.cases[1].gold_hash == Sha256Hex("plumb-gold-v1\n" + nested_gold));
  std::string cafe_gold =
      "{\"answers\":[\"the ferry\"],\"number\":{\"tolerance\":0.0,\"unit\":\"minutes\","
      "\"value\":10.0},\"patterns\":[\"\\\\bferry\\\\b\"],\"question\":\"What is the "
      "caf\xC3\xA9 next to?\",\"sources\":[{\"doc\":\"boarding.md\",\"end\":15,\"start\":3,"
      "\"text\":\"caf\xC3\xA9 \xE2\x80\x94 ferry\"},{\"doc\":\"boarding.md\",\"end\":24,"
      "\"start\":16,\"text\":\"Boarding\"},{\"doc\":\"boarding.md\",\"end\":44,\"start\":16,"
      "\"text\":\"Boarding  closes\\tten minutes\"}],\"tags\":[\"boarding\"]}";
  CHECK(cafe.gold_hash == Sha256Hex("plumb-gold-v1\n" + cafe_gold));

  // Reloading gives the same hashes; a corpus edit inside a gold span changes that case's.
  Loaded again = Load(suite);
  CHECK(again.suite.suite_hash == s.suite_hash);
  CHECK(again.suite.cases[4].gold_hash == cafe.gold_hash);
  dir.Write("docs/boarding.md", std::string(kDoc).replace(16, 8, "BOARDING"));
  Loaded edited = Load(suite);
  CHECK(edited.suite.suite_hash == s.suite_hash);
  CHECK(edited.suite.cases[1].gold_hash == s.cases[1].gold_hash);
}

TEST_CASE("a floor's tag no case carries is a warning") {
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "floors: {tags: {saftey: {correct: 1}}}\n"  // 4:17
                                 "cases: [{id: a, question: Q, answers: [], tags: [safety]}]\n");
  Loaded r = Load(suite);
  CHECK(r.ok);
  REQUIRE(r.warnings.size() == 1);
  CheckAt(r.warnings[0], suite, 4, 17);
  CHECK(r.warnings[0].message == "no case has tag 'saftey'; its floors and ceilings never apply");
}

TEST_CASE("floors take quality metrics, ceilings take error_rate and latency") {
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "floors: {correct: 0.9, latency_p50_ms: 800}\n"  // 4:24
                                 "ceilings:\n"                                    // 5
                                 "  error_rate: 0.1\n"                            // 6
                                 "  tags: {safety: {token_f1: 0.5}}\n"            // 7:19
                                 "cases: []\n");
  Loaded r = Load(suite);
  REQUIRE(r.errors.size() == 2);
  CheckAt(r.errors[0], suite, 4, 24);
  CHECK(r.errors[0].message ==
        "'latency_p50_ms' is a ceiling (the run fails above it), not one of the floors");
  CHECK(r.errors[0].hint ==
        "move 'latency_p50_ms: 800' under 'ceilings:'; only error_rate and the latency ids are "
        "ceilings");
  CheckAt(r.errors[1], suite, 7, 19);
  CHECK(r.errors[1].message ==
        "'token_f1' is a floor (the run fails below it), not one of the ceilings");
  CHECK(r.errors[1].hint == "move 'token_f1: 0.5' under 'floors:'");
}

TEST_CASE("the retired 'thresholds' key is refused with its entries as floors and ceilings") {
  TempDir dir;
  std::string suite =
      WriteSuite(dir,
                 "thresholds:\n"  // 4:1
                 "  token_f1: 0.80\n"
                 "  latency_p95_ms: 2500\n"
                 "  tags: {safety: {correct: 0.95, latency_p50_ms: 900}, fares: {mrr: 0.5}}\n"
                 "cases: []\n");
  Loaded r = Load(suite);
  REQUIRE(r.errors.size() == 1);
  CheckAt(r.errors[0], suite, 4, 1);
  CHECK(r.errors[0].message ==
        "'thresholds' is now two keys: 'floors' (the run fails below them) and 'ceilings' "
        "(error_rate and latency ids; the run fails above them)");
  CHECK(r.errors[0].hint ==
        "write 'floors: {token_f1: 0.80, tags: {safety: {correct: 0.95}, fares: {mrr: 0.5}}}' "
        "and 'ceilings: {latency_p95_ms: 2500, tags: {safety: {latency_p50_ms: 900}}}' in its "
        "place");
}

TEST_CASE("pipelines: env expansion, redaction and every key") {
  setenv("PLUMB_TEST_TOKEN", "s3cret", 1);
  setenv("PLUMB_TEST_PORT", "8088", 1);
  setenv("PLUMB_TEST_EMPTY", "", 1);
  TempDir dir;
  std::string suite = WriteSuite(
      dir,
      "pipelines:\n"
      "  local:\n"
      "    command: [./bin/pipe, --token, \"${PLUMB_TEST_TOKEN}\", \"$$HOME\"]\n"
      "    mode: per-case\n"
      "    env: {TOKEN: \"${PLUMB_TEST_TOKEN}\", EMPTY: \"${PLUMB_TEST_EMPTY}\", PLAIN: x}\n"
      "    cwd: some/dir\n"
      "    timeout: 2m\n"
      "    jobs: 2\n"
      "  svc:\n"
      "    url: \"http://127.0.0.1:${PLUMB_TEST_PORT}/answer\"\n"
      "    method: put\n"
      "    headers: {Authorization: \"Bearer ${PLUMB_TEST_TOKEN}\"}\n"
      "    request: {q: !case question, k: 4, ctx: !text [\"channel: \", !case input.channel],"
      " key: !env PLUMB_TEST_TOKEN}\n"
      "    reply: {answer: /data/text, citations: \"\", retrieved: {at: /hits, doc: /doc/path,"
      " start: from}, abstain_when: \"(?i)no idea\", input_tokens: /usage/prompt_tokens}\n"
      "    timeout: 500ms\n"
      "    retries: 0\n"
      "    rate: 120/m\n"
      "    jobs: 8\n"
      "    insecure: true\n"
      "    max_response_bytes: 1KiB\n"
      "    offsets: utf16\n"
      "  single:\n"
      "    command: build/fixtures/demo pipeline\n"
      "    timeout: 1.5\n"
      "cases: []\n");
  Loaded r = Load(suite);
  INFO(FormatDiagnostics(r.errors));
  REQUIRE(r.ok);
  REQUIRE(r.suite.pipelines.size() == 3);

  const PipelineConfig& local = r.suite.pipelines[0];
  CHECK(local.name == "local");
  CHECK(local.kind == PipelineKind::kSubprocess);
  CHECK(local.pos.line == 5);
  CHECK(local.pos.column == 3);
  REQUIRE(local.command.size() == 4);
  CHECK(local.command[0].value == "./bin/pipe");  // not resolved: the shell rule
  CHECK(local.command[2].value == "s3cret");
  CHECK(local.command[2].redacted == "***");
  CHECK(local.command[3].value == "$HOME");
  CHECK(local.mode == SubprocessMode::kPerCase);
  CHECK(local.env.at("TOKEN").value == "s3cret");
  CHECK(local.env.at("EMPTY").value == "");
  CHECK(local.env.at("PLAIN").value == "x");
  CHECK(local.cwd->value == "some/dir");
  CHECK(local.timeout_ms == 120000);
  CHECK(local.jobs == 2);
  CHECK(local.secrets == std::vector<std::string>{"s3cret"});  // once, and no empty value
  CHECK(local.redacted_config ==
        nlohmann::json::parse(R"({"command": ["./bin/pipe", "--token", "***", "$$HOME"],
            "mode": "per-case", "env": {"TOKEN": "***", "EMPTY": "***", "PLAIN": "x"},
            "cwd": "some/dir", "timeout": "2m", "jobs": 2})"));

  const PipelineConfig& svc = r.suite.pipelines[1];
  CHECK(svc.kind == PipelineKind::kHttp);
  CHECK(svc.url->value == "http://127.0.0.1:8088/answer");
  CHECK(svc.url->redacted == "http://127.0.0.1:***/answer");
  CHECK(svc.method == "PUT");
  CHECK(svc.headers.at("Authorization").value == "Bearer s3cret");
  REQUIRE(svc.request.has_value());
  const RequestPart& request = *svc.request;
  CHECK(request.kind == RequestPart::Kind::kObject);
  CHECK(request.keys == std::vector<std::string>{"q", "k", "ctx", "key"});
  REQUIRE(request.items.size() == 4);
  CHECK(request.items[0].kind == RequestPart::Kind::kCaseField);
  CHECK(request.items[0].field == "question");
  CHECK(request.items[1].kind == RequestPart::Kind::kValue);
  CHECK(request.items[1].value == 4);
  CHECK(request.items[2].kind == RequestPart::Kind::kText);
  REQUIRE(request.items[2].items.size() == 2);
  CHECK(request.items[2].items[0].value == "channel: ");
  CHECK(request.items[2].items[1].field == "input.channel");
  CHECK(request.items[3].value == "s3cret");  // !env: expanded at load, redacted in run.json
  CHECK(svc.redacted_config["request"] ==
        nlohmann::json::parse(R"({"q": {"!case": "question"}, "k": 4,
            "ctx": {"!text": ["channel: ", {"!case": "input.channel"}]}, "key": "***"})"));
  CHECK(svc.reply.given);
  CHECK(svc.reply.answer == "/data/text");
  REQUIRE(svc.reply.citations.has_value());
  CHECK(svc.reply.citations->at == "");  // "" is the whole reply (RFC 6901)
  REQUIRE(svc.reply.retrieved.has_value());
  CHECK(svc.reply.retrieved->at == "/hits");
  CHECK(svc.reply.retrieved->doc == "/doc/path");
  CHECK(svc.reply.retrieved->start == "from");
  CHECK(svc.reply.retrieved->end == "");
  CHECK(svc.reply.abstain_when == "(?i)no idea");
  CHECK(svc.reply.input_tokens == "/usage/prompt_tokens");
  CHECK(svc.timeout_ms == 500);
  CHECK(svc.retries == 0);
  CHECK(svc.rate_per_second == 2);
  CHECK(svc.jobs == 8);
  CHECK(svc.insecure);
  CHECK(svc.max_response_bytes == 1024);
  CHECK(svc.offsets == metrics::OffsetUnit::kUtf16Units);
  CHECK(svc.secrets == std::vector<std::string>{"8088", "s3cret"});
  std::string dumped = svc.redacted_config.dump();
  CHECK(dumped.find("s3cret") == std::string::npos);
  CHECK(svc.redacted_config["headers"]["Authorization"] == "Bearer ***");
  CHECK(svc.redacted_config["url"] == "http://127.0.0.1:***/answer");

  const PipelineConfig& single = r.suite.pipelines[2];
  REQUIRE(single.command.size() == 1);  // one string is argv[0], never split on spaces
  CHECK(single.command[0].value == "build/fixtures/demo pipeline");
  CHECK(single.timeout_ms == 1500);
  CHECK(single.jobs == 0);
  CHECK(single.max_response_bytes == 16 * 1024 * 1024);
}

TEST_CASE("pipeline errors") {
  unsetenv("PLUMB_TEST_UNSET");
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "pipelines:\n"                                   // 4
                                 "  both: {command: [x], url: \"http://h/\"}\n"   // 5:3
                                 "  neither: {timeout: 30s}\n"                    // 6:3
                                 "  env: {command: [\"${PLUMB_TEST_UNSET}\"]}\n"  // 7:19
                                 "  odd:\n"                                       // 8
                                 "    url: ftp://h/\n"                            // 9:10
                                 "    mode: persistent\n"                         // 10:5
                                 "    timeout: 30 s\n"                            // 11:14
                                 "    reply: {answer: data/text, anser: /a}\n"    // 12
                                 "    request: {q: !case questoin}\n"             // 13:18
                                 "    rate: 20\n"                                 // 14:11
                                 "    max_response_bytes: 16MB\n"                 // 15:25
                                 "    offsets: bytes\n"                           // 16:14
                                 "    retries: -1\n"                              // 17:14
                                 "cases: []\n");
  Loaded r = Load(suite);
  const Diagnostic& both = Find(r.errors, "has both 'command' and 'url'");
  CheckAt(both, suite, 5, 3);
  CHECK(both.hint == "give 'command' for a subprocess pipeline or 'url' for an HTTP one");
  CheckAt(Find(r.errors, "has neither 'command' nor 'url'"), suite, 6, 3);
  const Diagnostic& unset = Find(r.errors, "'PLUMB_TEST_UNSET' is not set");
  CheckAt(unset, suite, 7, 19);
  CHECK(unset.message == "environment variable 'PLUMB_TEST_UNSET' is not set (in 'command')");
  CheckAt(Find(r.errors, "'url' must start with http:// or https://"), suite, 9, 10);
  CheckAt(Find(r.errors, "'mode' applies to subprocess pipelines"), suite, 10, 5);
  const Diagnostic& timeout = Find(r.errors, "invalid timeout '30 s'");
  CheckAt(timeout, suite, 11, 14);
  CHECK(timeout.hint == "write a duration such as 30s, 500ms or 2m, or a number of seconds");
  const Diagnostic& pointer = Find(r.errors, "'reply.answer' is not a JSON Pointer");
  CheckAt(pointer, suite, 12, 21);
  CHECK(pointer.hint == "RFC 6901 pointers are \"\" or start with '/', e.g. /data/text");
  const Diagnostic& anser = Find(r.errors, "unknown key 'anser' in 'reply'");
  CheckAt(anser, suite, 12, 32);
  CHECK(anser.hint == "did you mean 'answer'?");
  const Diagnostic& field = Find(r.errors, "unknown case field 'questoin' in '!case'");
  CheckAt(field, suite, 13, 18);
  CHECK(field.hint == "did you mean 'question'?");
  CheckAt(Find(r.errors, "invalid rate '20'"), suite, 14, 11);
  CheckAt(Find(r.errors, "invalid max_response_bytes '16MB'"), suite, 15, 25);
  const Diagnostic& offsets = Find(r.errors, "unknown offset unit 'bytes'");
  CheckAt(offsets, suite, 16, 14);
  CHECK(offsets.hint == "valid units are: codepoints, utf8, utf16");
  CheckAt(Find(r.errors, "'retries' is -1, out of range"), suite, 17, 14);
  CHECK(r.errors.size() == 13);
}

TEST_CASE("the request block's tags: wrong fields, tags and pieces are errors") {
  unsetenv("PLUMB_TEST_UNSET");
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "pipelines:\n"                      // 4
                                 "  svc:\n"                          // 5
                                 "    url: http://127.0.0.1:1/\n"    // 6
                                 "    request:\n"                    // 7
                                 "      a: !cse question\n"          // 8:10
                                 "      b: !case input.\n"           // 9:10
                                 "      c: !text [\"x\", [1]]\n"     // 10:22
                                 "      d: !env PLUMB_TEST_UNSET\n"  // 11:10
                                 "      e: \"Q: {{question}}\"\n"    // 12:10
                                 "      f: !case {x: 1}\n"           // 13:10
                                 "cases: []\n");
  Loaded r = Load(suite);
  INFO(FormatDiagnostics(r.errors));
  REQUIRE(r.errors.size() == 6);
  CheckAt(r.errors[0], suite, 8, 10);
  CHECK(r.errors[0].message == "unknown tag '!cse' in 'request'");
  CHECK(r.errors[0].hint == "did you mean '!case'?");
  CheckAt(r.errors[1], suite, 9, 10);
  CHECK(r.errors[1].message == "unknown case field 'input.' in '!case'");
  CHECK(r.errors[1].hint == "did you mean 'input'?");
  CheckAt(r.errors[2], suite, 10, 22);
  CHECK(r.errors[2].message == "a '!text' piece is a string, !case FIELD or !env NAME, got a list");
  CheckAt(r.errors[3], suite, 11, 10);
  CHECK(r.errors[3].message == "environment variable 'PLUMB_TEST_UNSET' is not set (in 'request')");
  CheckAt(r.errors[4], suite, 12, 10);
  CHECK(r.errors[4].message == "'{{...}}' placeholders are not read in 'request'");
  CHECK(r.errors[4].hint == "write the value as !text [\"Q: \", !case question]");
  CheckAt(r.errors[5], suite, 13, 10);
  CHECK(r.errors[5].message == "'!case' takes a case field name, got a mapping");
}

TEST_CASE("the retired 'body' key and url placeholders are refused with their new form") {
  TempDir dir;
  std::string suite = WriteSuite(
      dir,
      "pipelines:\n"                                              // 4
      "  svc:\n"                                                  // 5
      "    url: \"http://127.0.0.1:8088/{{input.route}}/ask\"\n"  // 6:10
      "    body: {q: \"{{question}}\", k: 4, meta: {case: \"{{id}}\", try: \"{{repeat}}\"},"  // 7:5
      " prompt: \"Q: {{question}} ({{input.lang}})\", key: \"${API_KEY}\"}\n"
      "cases: []\n");
  Loaded r = Load(suite);
  INFO(FormatDiagnostics(r.errors));
  REQUIRE(r.errors.size() == 2);
  CheckAt(r.errors[0], suite, 6, 10);
  CHECK(r.errors[0].message == "'{{...}}' placeholders are not read in 'url'");
  CHECK(r.errors[0].hint ==
        "write 'url: !text [\"http://127.0.0.1:8088/\", !case input.route, \"/ask\"]' (a !text "
        "list: strings, and !case FIELD pieces percent-encoded)");
  CheckAt(r.errors[1], suite, 7, 5);
  CHECK(r.errors[1].message ==
        "'body' with {{...}} placeholders is now 'request', where case fields are inserted as "
        "JSON values");
  CHECK(r.errors[1].hint ==
        "write 'request: {q: !case question, k: 4, meta: {case: !case id, try: !case repeat}, "
        "prompt: !text [\"Q: \", !case question, \" (\", !case input.lang, \")\"], key: !env "
        "API_KEY}' in its place");
}

TEST_CASE("the retired 'map' and 'fields' keys are refused with their reply: form") {
  TempDir dir;
  std::string suite = WriteSuite(
      dir,
      "pipelines:\n"                                                                 // 4
      "  svc:\n"                                                                     // 5
      "    url: http://127.0.0.1:8088/answer\n"                                      // 6
      "    map: {answer: /data/text, citations: /data/refs, retrieved: /data/hits,"  // 7:5
      " usage: /data/usage, fields: {doc: source, start: from, end: to}}\n"
      "  other:\n"                                                                        // 8
      "    url: http://127.0.0.1:8088/answer\n"                                           // 9
      "    reply: {answer: /a, fields: {doc: source}, usage: /u, abstain_when: \"(\"}\n"  // 10
      "cases: []\n");
  Loaded r = Load(suite);
  INFO(FormatDiagnostics(r.errors));
  REQUIRE(r.errors.size() == 4);
  CheckAt(r.errors[0], suite, 7, 5);
  CHECK(r.errors[0].message ==
        "'map' is now 'reply', where citations and retrieved each name their own members");
  CHECK(r.errors[0].hint ==
        "write 'reply: {answer: /data/text, input_tokens: /data/usage/input_tokens, "
        "output_tokens: /data/usage/output_tokens, citations: {at: /data/refs, doc: source, "
        "start: from, end: to}, retrieved: {at: /data/hits, doc: source, start: from, end: to}}' "
        "in its place");
  // "    reply: {answer: /a, " is 24 characters: 'fields' at column 25.
  CheckAt(r.errors[1], suite, 10, 25);
  CHECK(r.errors[1].message ==
        "'fields' renamed members in citations and retrieved at once; each list names its own "
        "now");
  CHECK(r.errors[1].hint ==
        "write 'citations: {at: /citations, doc: source}' and 'retrieved: {at: /retrieved, doc: "
        "source}', each with the names its list uses");
  CheckAt(r.errors[2], suite, 10, 48);
  CHECK(r.errors[2].message == "'usage' is now one pointer per count");
  CheckAt(r.errors[3], suite, 10, 73);
  CHECK(r.errors[3].message.rfind("invalid RE2 pattern in 'reply.abstain_when': ", 0) == 0);
}

TEST_CASE("a pipelines file (--pipelines) replaces the suite's pipelines") {
  unsetenv("PLUMB_TEST_UNSET");
  TempDir dir;
  // The suite's own block would fail to expand; with --pipelines it is not read at all.
  std::string suite = WriteSuite(dir,
                                 "pipelines:\n"
                                 "  a: {command: [\"${PLUMB_TEST_UNSET}\"]}\n"
                                 "cases: []\n");
  std::string pipelines = dir.Write("ci/pipelines.yaml",
                                    "pipelines:\n"
                                    "  b: {command: [run-b], mode: per-case}\n"
                                    "  c: {url: \"https://example.invalid/\"}\n");
  LoadOptions options;
  options.pipelines_file = pipelines;
  Loaded r = Load(suite, options);
  INFO(FormatDiagnostics(r.errors));
  REQUIRE(r.ok);
  REQUIRE(r.suite.pipelines.size() == 2);
  CHECK(r.suite.pipelines[0].name == "b");
  CHECK(r.suite.pipelines[0].pos.file == pipelines);
  CHECK(r.suite.pipelines[1].name == "c");
  CHECK(r.suite.files == std::vector<std::string>{suite, pipelines});

  std::string extra = dir.Write("ci/extra.yaml", "pipelines: {}\nname: x\n");  // 2:1
  options.pipelines_file = extra;
  Loaded bad = Load(suite, options);
  const Diagnostic& d = Find(bad.errors, "unknown key 'name'");
  CheckAt(d, extra, 2, 1);
  CHECK(d.message == "unknown key 'name' in a pipelines file (it holds only 'pipelines')");
}

TEST_CASE("expand_env = false reads no variable and reports none unset") {
  unsetenv("PLUMB_TEST_UNSET");
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "pipelines:\n"
                                 "  a: {command: [\"${PLUMB_TEST_UNSET}\"]}\n"
                                 "cases: []\n");
  LoadOptions options;
  options.expand_env = false;
  Loaded r = Load(suite, options);
  REQUIRE(r.ok);
  CHECK(r.suite.pipelines[0].command[0].value == "${PLUMB_TEST_UNSET}");
  CHECK(r.suite.pipelines[0].command[0].redacted == "***");
  CHECK(r.suite.pipelines[0].secrets.empty());
}

TEST_CASE("duplicate keys are errors, not silently the last one") {
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "cases:\n"
                                 "  - id: a\n"
                                 "    question: Q\n"  // 6:5
                                 "    answers: []\n"
                                 "    question: R\n");  // 8:5
  Loaded r = Load(suite);
  const Diagnostic& d = Find(r.errors, "duplicate key 'question'");
  CheckAt(d, suite, 8, 5);
  CHECK(d.hint == "first given at " + suite + ":6:5");
}

TEST_CASE("deep nesting is refused, not a stack overflow") {
  TempDir dir;
  std::string deep(5000, '[');
  deep += std::string(5000, ']');
  std::string suite =
      WriteSuite(dir, "cases:\n  - {id: a, question: Q, answers: [], input: {x: " + deep + "}}\n");
  Loaded r = Load(suite);
  CHECK_FALSE(r.ok);
  REQUIRE(r.errors.size() == 1);
  CHECK(r.errors[0].pos.file == suite);

  std::string jsonl = WriteSuite(dir, "include: [deep.jsonl]\n");
  std::string gen = dir.Write("deep.jsonl",
                              "{\"id\": \"a\", \"question\": \"Q\", \"answers\": [], "
                              "\"input\": {\"x\": " +
                                  deep + "}}\n");
  Loaded j = Load(jsonl);
  REQUIRE(j.errors.size() == 1);
  CHECK(j.errors[0].pos.file == gen);
  CHECK(j.errors[0].pos.line == 1);
}

TEST_CASE("a suite file that is not UTF-8 is refused at the bad byte") {
  TempDir dir;
  // "plumb: 1\n" is 9 bytes and "name: t\n" 8, so line 3 starts at byte 17; "question: caf" is
  // 13 more, so 0xE9 (é in Latin-1, not UTF-8) is at byte offset 30, column 14.
  std::string suite = dir.Write("suite.yaml", "plumb: 1\nname: t\nquestion: caf\xE9\n");
  Loaded r = Load(suite);
  REQUIRE(r.errors.size() == 1);
  CheckAt(r.errors[0], suite, 3, 14);
  CHECK(r.errors[0].message ==
        "suite file is not valid UTF-8: ill-formed byte sequence at byte offset 30");
}

TEST_CASE("the demo suite loads without errors or warnings") {
  std::string path = std::string(PLUMB_SOURCE_DIR) + "/suites/ferry.yaml";
  if (!fs::exists(path)) {
    WARN("suites/ferry.yaml is not there yet; skipped");
    return;
  }
  Loaded r = Load(path, LoadOptions{"", /*expand_env=*/false});
  INFO(FormatDiagnostics(r.errors) << FormatDiagnostics(r.warnings));
  CHECK(r.ok);
  CHECK(r.warnings.empty());
  // SPEC §11: at least 60 cases, abstention among them.
  CHECK(r.suite.cases.size() >= 60);
  size_t abstentions = 0;
  for (const Case& c : r.suite.cases) abstentions += c.answers.empty();
  CHECK(abstentions > 0);
  // Every span's text is what its quote says, up to whitespace.
  for (const Case& c : r.suite.cases) {
    for (const GoldSpan& span : c.sources) {
      INFO(c.id << " " << span.doc);
      CHECK(span.start < span.end);
      CHECK(!span.text.empty());
      if (span.quote && span.text != *span.quote) {
        CHECK(span.text.find_first_of(" \t\n") != std::string::npos);
      }
    }
  }
}
}  // namespace
}  // namespace plumb

namespace plumb {
namespace {

TEST_CASE("a long JSONL include read in chunks reports as if read line by line") {
  // 6,000 lines: with two or more CPUs the loader reads them in chunks on several threads. The
  // problems sit in different chunks; they must come out in file order, a duplicate id must
  // name the line of the first, and a missing corpus is reported once, at the first source.
  TempDir dir;
  std::string suite = dir.Write("suite.yaml", "plumb: 1\nname: t\ninclude: [gen.jsonl]\n");
  std::string text;
  for (int i = 1; i <= 6000; ++i) {
    std::string line = "{\"id\": \"c" + std::to_string(i) +
                       "\", \"question\": \"Q\", \"answers\": [\"a\"], \"tags\": [\"t\"]}";
    if (i == 10) line = "{\"id\": \"c10\", oops}";
    if (i == 2500) {
      line =
          "{\"id\": \"c2500\", \"question\": \"Q\", \"answers\": [\"a\"], "
          "\"sources\": [{\"doc\": \"d.md\", \"quote\": \"x\"}]}";
    }
    if (i == 3100) line = "{\"id\": \"c5\", \"question\": \"Q\", \"answers\": [\"a\"]}";
    if (i == 4500) line = "{\"id\": \"c4500\", \"question\": \"Q\", \"answerz\": [\"a\"]}";
    if (i == 5900) {
      line =
          "{\"id\": \"c5900\", \"question\": \"Q\", \"answers\": [\"a\"], "
          "\"sources\": [{\"doc\": \"d.md\", \"quote\": \"y\"}]}";
    }
    text += line + "\n";
  }
  std::string gen = dir.Write("gen.jsonl", text);
  Loaded r = Load(suite);
  INFO(FormatDiagnostics(r.errors));
  REQUIRE(r.errors.size() == 5);
  // {"id": "c10", oops}: the 'o' at column 15 is where the parser stops.
  CheckAt(r.errors[0], gen, 10, 15);
  CHECK(r.errors[0].message.find("not valid JSON") == 0);
  // The first gold source (its '{' at column 64): only it reports the missing corpus, not the
  // source on line 5900.
  CheckAt(r.errors[1], gen, 2500, 64);
  CHECK(r.errors[1].message == "this suite has gold sources but no corpus");
  // {"id": "c5", ...}: the id value at column 8; c5 was first defined on line 5, same column.
  CheckAt(r.errors[2], gen, 3100, 8);
  CHECK(r.errors[2].message == "duplicate case id 'c5'");
  CHECK(r.errors[2].hint == "first defined at " + gen + ":5:8");
  // On one line, by column: the case (column 1) has no answers; "answerz" is at column 34.
  CheckAt(r.errors[3], gen, 4500, 1);
  CHECK(r.errors[3].message == "case 'c4500' has no 'answers'");
  CheckAt(r.errors[4], gen, 4500, 34);
  CHECK(r.errors[4].message == "unknown key 'answerz' in a case");
  CHECK(r.errors[4].hint == "did you mean 'answers'?");
  // Every line but the one that is not JSON became a case, in file order.
  REQUIRE(r.suite.cases.size() == 5999);
  CHECK(r.suite.cases[8].id == "c9");
  CHECK(r.suite.cases[9].id == "c11");
  CHECK(r.suite.cases[5998].id == "c6000");
  CHECK(r.suite.cases[5998].pos.line == 6000);
  CHECK(r.suite.cases[5998].tags == std::vector<std::string>{"t"});
}

TEST_CASE("a JSONL include over 1 MiB hashed apart keeps the files' order in the suite hash") {
  // The loader hashes a large JSONL include on a second thread while it reads the lines; the
  // suite hash must still be the files framed and hashed in include order (definition in
  // runner/suite/suite_loader.h), with a YAML include after it.
  TempDir dir;
  const std::string suite_text = "plumb: 1\nname: t\ninclude: [big.jsonl, after.yaml]\n";
  std::string suite = dir.Write("suite.yaml", suite_text);
  std::string big_text;
  for (int i = 0; big_text.size() < (3u << 19); ++i) {
    big_text += "{\"id\": \"c" + std::to_string(i) + "\", \"question\": \"Q" + std::to_string(i) +
                "\", \"answers\": [\"a\"]}\n";
  }
  dir.Write("big.jsonl", big_text);
  const std::string after_text = "cases:\n  - {id: last, question: Q, answers: [b]}\n";
  dir.Write("after.yaml", after_text);
  Loaded r = Load(suite);
  INFO(FormatDiagnostics(r.errors));
  REQUIRE(r.errors.empty());
  CHECK(r.suite.cases.back().id == "last");
  auto framed = [](const std::string& text) { return std::to_string(text.size()) + "\n" + text; };
  CHECK(r.suite.suite_hash ==
        Sha256Hex(framed(suite_text) + framed(big_text) + framed(after_text)));
}

// Issue 17 item 11: yaml-cpp 0.7 takes the end of the input as the closing quote of a quoted
// scalar, so the file read as if its rest were one string and the only error was "case 'c1' has
// no 'answers'". YAML 1.2 §7.3.1/§7.3.2: a double-quoted scalar ends at an unescaped '"', a
// single-quoted one at a "'" not doubled; there is no other end.
TEST_CASE("an unterminated quote at the end of the file is a syntax error at the quote") {
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "cases:\n"
                                 "  - id: c1\n"
                                 "    question: \"what \\\" time\n"  // 6:15
                                 "    answers: [x]\n");
  Loaded r = Load(suite);
  REQUIRE(r.errors.size() == 1);
  CheckAt(r.errors[0], suite, 6, 15);
  CHECK(r.errors[0].message ==
        "YAML syntax error: the double-quoted string that starts here is never closed");
  CHECK(r.errors[0].hint == "end it with '\"'; inside it, write \\\" for a quote");

  suite = WriteSuite(dir, "cases:\n  - answers: [x]\n    id: c1\n    question: 'it''s\n");  // 7:15
  r = Load(suite);
  REQUIRE(r.errors.size() == 1);
  CheckAt(r.errors[0], suite, 7, 15);
  CHECK(r.errors[0].message ==
        "YAML syntax error: the single-quoted string that starts here is never closed");

  // Closed strings with escaped and doubled quotes still load.
  suite = WriteSuite(dir, "cases:\n  - {id: c1, answers: ['it''s'], question: \"a \\\" b\"}\n");
  r = Load(suite);
  INFO(FormatDiagnostics(r.errors));
  REQUIRE(r.ok);
  CHECK(r.suite.cases[0].question == "a \" b");
  CHECK(r.suite.cases[0].answers[0] == "it's");
}

// Issue 17 item 11: "wrong type for 'number.value'; expected a number, got a number". 1e400 is
// beyond IEEE 754 binary64 (largest finite 1.7976931348623157e308, from memory; strtod gives
// inf), and .nan and .inf are YAML 1.2 §10.2.1.4 floats that no gold or floor can use.
TEST_CASE("a number beyond range or not finite gets a message that says so") {
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "min_overlap: .nan\n"  // 4:14
                                 "cases:\n"
                                 "  - id: c1\n"
                                 "    question: q\n"
                                 "    answers: [x]\n"
                                 "    number: {value: 1e400, tolerance: -.inf}\n");  // 9:21, 9:39
  Loaded r = Load(suite);
  INFO(FormatDiagnostics(r.errors));
  const Diagnostic& value = Find(r.errors, "'number.value'");
  CheckAt(value, suite, 9, 21);
  CHECK(value.message ==
        "'number.value' is 1e400, beyond the range of a number (about 1.8e308 at most)");
  CHECK(value.hint == "give a finite number such as 0.5 or 10");
  const Diagnostic& tolerance = Find(r.errors, "'number.tolerance'");
  CheckAt(tolerance, suite, 9, 39);
  CHECK(tolerance.message == "'number.tolerance' is -.inf, which is not a finite number");
  const Diagnostic& overlap = Find(r.errors, "'min_overlap'");
  CheckAt(overlap, suite, 4, 14);
  CHECK(overlap.message == "'min_overlap' is .nan, which is not a finite number");
  for (const Diagnostic& d : r.errors) CHECK(d.hint.find("got a number") == std::string::npos);
}

// Issue 17 item 11: YAML 1.2 §5.1 (c-printable) allows no C0 control but tab, LF and CR; a raw
// NUL was read into the question and sent to the pipeline.
TEST_CASE("a raw NUL byte in YAML is refused at its line and column") {
  TempDir dir;
  std::string suite = WriteSuite(
      dir, std::string("cases:\n  - {id: c1, answers: [x], question: \"a\0b\"}\n", 51));  // 5:40
  Loaded r = Load(suite);
  REQUIRE(r.errors.size() == 1);
  CheckAt(r.errors[0], suite, 5, 40);
  CHECK(r.errors[0].message ==
        "a raw control character (byte 0x00, NUL) in the YAML; YAML allows none but tab and "
        "line breaks");
  CHECK(r.errors[0].hint ==
        "remove it, or write it as an escape inside a double-quoted string (\"\\0\")");
  suite = WriteSuite(dir, "cases:\n  - {id: c1, answers: [x], question: \"a\x1B[31mb\"}\n");
  r = Load(suite);
  REQUIRE(r.errors.size() == 1);
  CHECK(r.errors[0].message.find("(byte 0x1B)") != std::string::npos);
  CHECK(r.errors[0].hint.find("(\"\\x1B\")") != std::string::npos);
}

// Issue 17 item 5: variables are read only for the pipelines a command starts.
TEST_CASE("expand_pipelines: only the named pipelines read their variables") {
  unsetenv("PLUMB_TEST_UNSET");
  setenv("PLUMB_TEST_TOKEN", "s3cret", 1);
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "pipelines:\n"
                                 "  a: {command: [\"${PLUMB_TEST_UNSET}\"]}\n"
                                 "  b: {command: [run, \"${PLUMB_TEST_TOKEN}\"]}\n"
                                 "  c: {url: \"${PLUMB_TEST_UNSET}/x\"}\n"
                                 "cases: []\n");
  LoadOptions options;
  options.expand_pipelines = {"b"};
  Loaded r = Load(suite, options);
  INFO(FormatDiagnostics(r.errors));
  REQUIRE(r.ok);
  CHECK(r.suite.pipelines[0].command[0].value == "${PLUMB_TEST_UNSET}");  // not read
  CHECK(r.suite.pipelines[1].command[1].value == "s3cret");
  CHECK(r.suite.pipelines[1].secrets == std::vector<std::string>{"s3cret"});
  CHECK(r.suite.pipelines[2].url->redacted == "***/x");

  options.expand_pipelines = {""};  // the first pipeline, the one `run` takes by default
  r = Load(suite, options);
  CHECK_FALSE(r.ok);
  REQUIRE(r.errors.size() == 1);
  CheckAt(r.errors[0], suite, 5, 17);
  CHECK(r.errors[0].message == "environment variable 'PLUMB_TEST_UNSET' is not set (in 'command')");
}

TEST_CASE("warm-up keys: ready, ready_url and startup_timeout") {
  TempDir dir;
  std::string suite = WriteSuite(dir,
                                 "pipelines:\n"
                                 "  a: {command: [run-a], ready: line, startup_timeout: 90s}\n"
                                 "  b: {url: \"http://127.0.0.1:9/answer\", ready_url: "
                                 "\"http://127.0.0.1:9/ready\"}\n"
                                 "cases: []\n");
  Loaded r = Load(suite);
  INFO(FormatDiagnostics(r.errors));
  REQUIRE(r.ok);
  CHECK(r.suite.pipelines[0].ready_line);
  CHECK(r.suite.pipelines[0].startup_timeout_ms == 90000);
  CHECK_FALSE(r.suite.pipelines[1].ready_line);
  REQUIRE(r.suite.pipelines[1].ready_url.has_value());
  CHECK(r.suite.pipelines[1].ready_url->value == "http://127.0.0.1:9/ready");
  CHECK(r.suite.pipelines[1].startup_timeout_ms == 600000);  // 10m by default

  std::string bad = WriteSuite(dir,
                               "pipelines:\n"                                               // 4
                               "  a: {command: [run-a], ready: yes}\n"                      // 5
                               "  b: {command: [run-b], mode: per-case, ready: line}\n"     // 6
                               "  c: {url: \"http://127.0.0.1:9/\", ready: line}\n"         // 7
                               "  d: {url: \"http://127.0.0.1:9/\", ready_url: ftp://x}\n"  // 8
                               "  e: {command: [run-e], startup_timeout: soon}\n"           // 9
                               "cases: []\n");
  Loaded b = Load(bad);
  CHECK_FALSE(b.ok);
  const Diagnostic& unknown = Find(b.errors, "unknown ready signal 'yes'");
  CheckAt(unknown, bad, 5, 32);
  const Diagnostic& per_case = Find(b.errors, "'ready: line' needs mode: persistent");
  CheckAt(per_case, bad, 6, 48);
  CHECK(per_case.hint ==
        "a per-case process starts for every case, so its start-up is part of each case's "
        "latency; remove 'ready' or use mode: persistent");
  Find(b.errors, "'ready' applies to subprocess pipelines ('command')");
  Find(b.errors, "'ready_url' must start with http:// or https://, got 'ftp://x'");
  Find(b.errors, "invalid startup_timeout 'soon'");
}

}  // namespace
}  // namespace plumb
