// JUnit XML (runner/report/junit_report.h): escaping by the rules of XML 1.0 (Fifth Edition), and
// documents checked for well-formedness by xmllint (libxml2-utils), including runs whose answers,
// errors and ids carry markup, quotes, control characters and non-characters.
#include "runner/report/junit_report.h"

#include <sys/stat.h>

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
  // The pipeline is in the names (plumb score's pipeline is "predictions").
  CHECK(XPath(dir + "/junit.xml", "string(/testsuites/testsuite/@name)") == "hostile.predictions");
  CHECK(XPath(dir + "/junit.xml", "count(//testcase[@classname=\"hostile.predictions\"])") == "4");
  CHECK(XPath(dir + "/junit.xml", "count(//testcase[@name=\"plain\"]/*)") == "0");
  CHECK(XPath(dir + "/junit.xml", "count(//failure)") == "2");
  CHECK(XPath(dir + "/junit.xml", "count(//error)") == "1");
  CHECK(XPath(dir + "/junit.xml", "string(/testsuites/testsuite/@failures)") == "2");
  CHECK(XPath(dir + "/junit.xml", "string(/testsuites/testsuite/@errors)") == "1");
  // The failure message carries the scores; the text carries the answer, back as written.
  CHECK(XPath(dir + "/junit.xml", "string(//testcase[@name=\"markup\"]/failure/@message)")
            .find("correct 0") != std::string::npos);
  // ... after its cause.
  CHECK(XPath(dir + "/junit.xml", "string(//testcase[@name=\"markup\"]/failure/@message)")
            .rfind("reading miss (wrong answer (token_f1 0); no retrieved list reported); scores: ",
                   0) == 0);
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

namespace {

// A run that loses six cases on `correct` against a base that answers all ten, with floors.
// docs/boarding.md: "Boarding closes ten minutes before departure. Loans renew once."
void WriteComparedRuns(const std::string& dir) {
  ::mkdir((dir + "/docs").c_str(), 0755);
  WriteFile(dir + "/docs/boarding.md",
            "Boarding closes ten minutes before departure. Loans renew once.");
  std::string cases = "cases:\n";
  std::string base, cand;
  for (int i = 0; i < 10; ++i) {
    const std::string id = "c" + std::to_string(i);
    cases += "  - {id: " + id + ", question: q" + std::to_string(i) + ", answers: [once], tags: [" +
             (i < 3 ? "hard" : "easy") + "], sources: [{doc: boarding.md, start: 47, end: 63}]}\n";
    base += "{\"id\": \"" + id +
            "\", \"answer\": \"once\", \"citations\": [{\"doc\": \"boarding.md\"}]}\n";
    // c0-c5 answer wrong with the gold span retrieved (reading misses); c6-c9 as the base.
    cand += i < 6 ? "{\"id\": \"" + id +
                        "\", \"answer\": \"twice\", \"retrieved\": [{\"doc\": \"boarding.md\"}]}\n"
                  : "{\"id\": \"" + id +
                        "\", \"answer\": \"once\", \"citations\": [{\"doc\": \"boarding.md\"}]}\n";
  }
  WriteFile(dir + "/s.yaml",
            "plumb: 1\nname: gate\ncorpus: docs\n"
            "floors: {correct: 0.9, citation_recall: 0.1, tags: {hard: {correct: 0.5}}}\n" +
                cases);
  WriteFile(dir + "/base.jsonl", base);
  WriteFile(dir + "/cand.jsonl", cand);
  REQUIRE(
      Plumb({"score", dir + "/s.yaml", dir + "/base.jsonl", "--out", dir + "/base"}, dir).code ==
      0);
  REQUIRE(
      Plumb({"score", dir + "/s.yaml", dir + "/cand.jsonl", "--out", dir + "/cand"}, dir).code ==
      1);
}

}  // namespace

TEST_CASE("drift JUnit has a testcase per floor and gated metric and marks the lost cases") {
  const std::string dir = MakeTempDir();
  WriteComparedRuns(dir);
  const Result drift = Plumb(
      {"drift", dir + "/base", dir + "/cand", "--gate", "correct", "--junit", dir + "/gate.xml"},
      dir);
  INFO(drift.out << drift.err);
  CHECK(drift.code == 1);
  const std::string f = dir + "/gate.xml";
  CheckWellFormed(f);
  // 10 cases, 3 floors, 1 gated metric.
  CHECK(XPath(f, "count(//testcase)") == "14");
  CHECK(XPath(f, "count(//testcase[@classname=\"gate.predictions\"])") == "10");
  CHECK(XPath(f, "count(//testcase[@classname=\"gate.predictions.floors\"])") == "3");
  CHECK(XPath(f, "count(//testcase[@classname=\"gate.predictions.gate\"])") == "1");
  // Six lost cases, marked; c6-c9 pass.
  CHECK(XPath(f, "count(//failure[@type=\"plumb.lost\"])") == "6");
  CHECK(XPath(f, "string(//testcase[@name=\"c0\"]/failure/@message)")
            .rfind("lost (passed in the base run): reading miss (wrong answer (token_f1 0); a "
                   "gold span was retrieved at rank 1); scores: ",
                   0) == 0);
  CHECK(XPath(f, "count(//testcase[@name=\"c7\"]/*)") == "0");
  // The floors: correct is 4/10. statsmodels proportion_confint(4, 10, method='wilson') =
  // (0.16818, 0.68733).
  CHECK(XPath(f, "string(//testcase[@name=\"floor correct >= 0.9\"]/failure/@message)") ==
        "floor broken: correct 0.4 < 0.9; 95% Wilson interval [0.1682, 0.6873], n 10");
  CHECK(XPath(f, "string(//testcase[@name=\"tag hard: floor correct >= 0.5\"]/failure/@type)") ==
        "plumb.floor_broken");
  CHECK(XPath(f, "count(//testcase[@name=\"floor citation_recall >= 0.1\"]/*)") == "0");
  // The gated metric: 6 of 10 lost, none gained; exact McNemar p = 2 * 0.5^6 = 0.03125, and a
  // family of one needs no correction.
  const std::string gate =
      XPath(f, "string(//testcase[@name=\"no regression in correct\"]/failure/@message)");
  CHECK(gate.rfind("regressed: correct base 1.0000, candidate 0.4000, delta -0.6000, 95% "
                   "paired-bootstrap interval [",
                   0) == 0);
  CHECK(gate.find("p 0.03125 (adjusted 0.03125), n 10") != std::string::npos);
  CHECK(XPath(f, "string(//testcase[@name=\"no regression in correct\"]/failure)")
            .find("regressed means: the 95% paired-bootstrap interval of the delta lies below 0") !=
        std::string::npos);
  CHECK(XPath(f, "string(//property[@name=\"exit_code\"]/@value)") == "1");
  CHECK(XPath(f, "string(/testsuites/testsuite/@failures)") == "9");  // 6 lost, 2 floors, 1 gate

  // The XML parses with Python's parser too, and `--junit -` writes the same to stdout.
  int code = -1;
  Shell("/usr/bin/python3 -c 'import sys, xml.etree.ElementTree as E; E.parse(sys.argv[1])' " + f,
        &code);
  CHECK(code == 0);
  const Result out =
      Plumb({"drift", dir + "/base", dir + "/cand", "--gate", "correct", "--junit", "-"}, dir);
  CHECK(out.out == ReadFile(f));
}

TEST_CASE("a gated metric with too few cases is skipped, naming how many more it needs") {
  const std::string dir = MakeTempDir();
  WriteComparedRuns(dir);
  // citation_precision is defined on the cases that cite: c6-c9 in both runs, 4 pairs (the
  // fewest with a verdict at 0.05 is 6, drift.h).
  Plumb({"drift", dir + "/base", dir + "/cand", "--gate", "citation_precision", "--junit",
         dir + "/gate.xml"},
        dir);
  CheckWellFormed(dir + "/gate.xml");
  CHECK(
      XPath(dir + "/gate.xml",
            "string(//testcase[@name=\"no regression in citation_precision\"]/skipped/@message)") ==
      "too few cases: 4 paired, 2 more needed for a verdict");
  CHECK(XPath(dir + "/gate.xml", "string(/testsuites/testsuite/@skipped)") == "1");
}
