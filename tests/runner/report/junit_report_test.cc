// JUnit XML (runner/report/junit_report.h): escaping by the rules of XML 1.0 (Fifth Edition), and
// documents checked for well-formedness by xmllint (libxml2-utils), including runs whose answers,
// errors and ids carry markup, quotes, control characters and non-characters.
#include "runner/report/junit_report.h"

#include <catch2/catch.hpp>
#include <cstdio>
#include <string>

#include "tests/support/plumb_process.h"

using namespace plumb_test;

namespace {

/// Runs a shell command and returns its stdout; *code gets the exit status.
std::string Shell(const std::string& command, int* code) {
  std::FILE* pipe = popen(command.c_str(), "r");
  REQUIRE(pipe != nullptr);
  std::string out;
  char buffer[4096];
  size_t got;
  while ((got = std::fread(buffer, 1, sizeof buffer, pipe)) > 0) out.append(buffer, got);
  const int status = pclose(pipe);
  *code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  return out;
}

std::string XPath(const std::string& file, const std::string& expression) {
  int code = -1;
  const std::string out = Shell("xmllint --xpath '" + expression + "' " + file + " 2>&1", &code);
  INFO(out);
  REQUIRE(code == 0);
  return out.substr(0, out.find_last_not_of('\n') + 1);  // xmllint ends the value with a newline
}

void CheckWellFormed(const std::string& file) {
  int code = -1;
  const std::string out = Shell("xmllint --noout " + file + " 2>&1", &code);
  INFO(out);
  CHECK(code == 0);
}

}  // namespace

TEST_CASE("XmlEscape follows XML 1.0") {
  using plumb::XmlEscape;
  // §2.4: '<' and '&' never appear literally in character data; '>' escaped too (for "]]>");
  // quotes escaped so the same text is safe in attribute values (§3.1).
  CHECK(XmlEscape("a<b&c>d\"e'f") == "a&lt;b&amp;c&gt;d&quot;e&apos;f");
  CHECK(XmlEscape("]]>") == "]]&gt;");
  // §3.3.3: literal tabs and line breaks in attribute values are normalized to spaces; character
  // references survive.
  CHECK(XmlEscape("a\tb\nc\rd") == "a&#9;b&#10;c&#13;d");
  // §2.2 Char: #x9 | #xA | #xD | [#x20-#xD7FF] | [#xE000-#xFFFD] | [#x10000-#x10FFFF]; other C0
  // controls, U+FFFE and U+FFFF are not characters and become U+FFFD (EF BF BD), as does invalid
  // UTF-8 (Unicode §3.9 maximal subparts, one U+FFFD each).
  CHECK(XmlEscape(std::string("x\0y", 3)) == "x\xEF\xBF\xBDy");
  CHECK(XmlEscape("\x1b[31m") == "\xEF\xBF\xBD[31m");
  CHECK(XmlEscape("\xEF\xBF\xBF") == "\xEF\xBF\xBD");                          // U+FFFF
  CHECK(XmlEscape("\xFF\xC3") == "\xEF\xBF\xBD\xEF\xBF\xBD");                  // two invalid bytes
  CHECK(XmlEscape("\xED\xA0\x80") == "\xEF\xBF\xBD\xEF\xBF\xBD\xEF\xBF\xBD");  // encoded surrogate
  // Characters XML allows pass unchanged: é (U+00E9), 港 (U+6E2F), U+1F6A2.
  CHECK(XmlEscape("\xC3\xA9 \xE6\xB8\xAF \xF0\x9F\x9A\xA2") ==
        "\xC3\xA9 \xE6\xB8\xAF \xF0\x9F\x9A\xA2");
}

TEST_CASE("a run with hostile answers and errors gives well-formed JUnit, one testcase per case") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/suite.yaml",
            "plumb: 1\nname: hostile\ncases:\n"
            "  - {id: plain, question: \"q1\", answers: [\"yes\"]}\n"
            "  - {id: markup, question: \"q2 <b>&</b>\", answers: [\"yes\"]}\n"
            "  - {id: controls, question: \"q3\", answers: [\"yes\"]}\n"
            "  - {id: missing, question: \"q4\", answers: [\"yes\"]}\n");
  // JSON escapes carry what a pipeline might print: markup, the CDATA end, quotes, NUL, ESC,
  // U+FFFF. "missing" has no prediction: a case error.
  WriteFile(dir + "/predictions.jsonl",
            "{\"id\": \"plain\", \"answer\": \"yes\", \"latency_ms\": 12}\n"
            "{\"id\": \"markup\", \"answer\": \"</failure></testcase><x a=\\\"1\\\">&amp; ]]>\"}\n"
            "{\"id\": \"controls\", \"answer\": \"a\\u0000b\\u001b[31mc\\uffff'\\\"\"}\n");
  const Result scored = Plumb({"score", dir + "/suite.yaml", dir + "/predictions.jsonl", "--out",
                               dir + "/run", "--junit", dir + "/junit.xml"},
                              dir);
  INFO(scored.err);
  REQUIRE(scored.code == 3);  // 1 of 4 errored: above max_error_rate 0.05 (SPEC §8)
  CheckWellFormed(dir + "/junit.xml");
  CHECK(XPath(dir + "/junit.xml", "count(//testcase)") == "4");
  CHECK(XPath(dir + "/junit.xml", "string(/testsuites/testsuite/@name)") == "hostile");
  CHECK(XPath(dir + "/junit.xml", "count(//testcase[@classname=\"hostile\"])") == "4");
  CHECK(XPath(dir + "/junit.xml", "count(//testcase[@name=\"plain\"]/*)") == "0");
  CHECK(XPath(dir + "/junit.xml", "count(//failure)") == "2");
  CHECK(XPath(dir + "/junit.xml", "count(//error)") == "1");
  CHECK(XPath(dir + "/junit.xml", "string(/testsuites/testsuite/@failures)") == "2");
  CHECK(XPath(dir + "/junit.xml", "string(/testsuites/testsuite/@errors)") == "1");
  // The failure message carries the scores; the text carries the answer, back as written.
  CHECK(XPath(dir + "/junit.xml", "string(//testcase[@name=\"markup\"]/failure/@message)")
            .find("correct 0") != std::string::npos);
  CHECK(XPath(dir + "/junit.xml", "string(//testcase[@name=\"markup\"]/failure)")
            .find("answer: \"</failure></testcase><x a=\"1\">&amp; ]]>\"") != std::string::npos);
  CHECK(XPath(dir + "/junit.xml", "string(//testcase[@name=\"missing\"]/error/@message)")
            .rfind("no prediction for this case", 0) == 0);
  // The same file from the stored run, with no pipeline.
  const Result report = Plumb({"report", dir + "/run", "--junit", dir + "/again.xml"}, dir);
  CHECK(report.code == scored.code);  // the recorded verdict (3: a case has no reply)
  CHECK(ReadFile(dir + "/again.xml") == ReadFile(dir + "/junit.xml"));
}

TEST_CASE("ids and labels that no suite would accept are still escaped") {
  // A run.json edited by hand (or by a tool) is read as it is: its strings are escaped too.
  plumb::LoadedRun run;
  run.record = {{"plumb_run", 1},
                {"suite", {{"name", "s\"<&>"}, {"hash", "h"}}},
                {"pipeline", {{"name", "p'"}}},
                {"labels", {{"git\"", "<rev>"}}},
                {"cases", {{"id<1>&\"", {{"question", "q\x01"}, {"answers", {"a"}}}}}}};
  plumb::CaseRecord r;
  r.id = "id<1>&\"";
  r.error = "crashed: \x07 <stderr>";
  r.stderr_excerpt = "]]> \x0b";
  r.scores.values = {{"correct", 0}};
  run.records.push_back(r);
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/odd.xml", plumb::FormatJUnitReport(run));
  CheckWellFormed(dir + "/odd.xml");
  CHECK(XPath(dir + "/odd.xml", "string(//testcase/@name)") == "id<1>&\"");
  CHECK(XPath(dir + "/odd.xml", "string(//property[starts-with(@name, \"label.git\")]/@value)") ==
        "<rev>");
}
