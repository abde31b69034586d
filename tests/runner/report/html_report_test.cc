// The HTML report as a file: what a reviewer's browser will parse. Runs are made by the real
// `plumb score` on a suite written here; the checks read the HTML text. Expected offsets are
// counted by hand on the document below; base64 vectors are RFC 4648 §10's; the SHA-256 hash
// source of "abc" is base64(sha256(b"abc").digest()) as Python's hashlib and base64 compute it.
// What a browser makes of the page is checked in tests/browser/.

#include "runner/report/html_report.h"

#include <unistd.h>

#include <catch2/catch.hpp>
#include <filesystem>
#include <nlohmann/json.hpp>
#include <string>

#include "runner/report/html_page_assets.h"
#include "runner/report/html_report_parts.h"
#include "runner/run/run_reader.h"
#include "tests/support/plumb_process.h"

namespace {

using plumb_test::ReadFile;
using plumb_test::WriteFile;

// "Foot passengers: " is [0, 17); the sentence after it [17, 62); "ten minutes" [33, 44).
const char kBoarding[] = "Foot passengers: Boarding closes ten minutes before departure.\n";

const char kSuite[] = R"(plumb: 1
name: html-report-test
corpus: docs
max_error_rate: 1
cases:
  - id: right
    question: When does boarding close?
    answers: ["ten minutes before departure"]
    sources:
      - {doc: boarding.md, quote: "Boarding closes ten minutes before departure."}
    tags: [boarding]
  - id: wrong
    question: "How long before <b>departure</b>?"
    answers: ["ten minutes"]
    sources:
      - {doc: boarding.md, quote: "Boarding closes ten minutes before departure."}
    tags: [boarding]
  - id: missing
    question: Is there a bar?
    answers: ["yes"]
)";

const char kPredictions[] =
    R"({"id": "right", "answer": "Ten minutes before departure.", "citations": [{"doc": "boarding.md", "start": 17, "end": 62}]}
{"id": "wrong", "answer": "<script>window.x=1</script> five minutes", "citations": [{"doc": "boarding.md", "start": 33, "end": 44}]}
)";

struct Fixture {
  std::string dir = plumb_test::MakeTempDir();
  std::string run_dir = dir + "/run";
  Fixture() {
    std::filesystem::create_directories(dir + "/docs");
    WriteFile(dir + "/docs/boarding.md", kBoarding);
    WriteFile(dir + "/suite.yaml", kSuite);
    WriteFile(dir + "/predictions.jsonl", kPredictions);
    const plumb_test::Result r = plumb_test::Plumb(
        {"score", dir + "/suite.yaml", dir + "/predictions.jsonl", "--out", run_dir}, dir);
    INFO(r.err);
    REQUIRE((r.code == 0 || r.code == 1 || r.code == 3));
  }
  ~Fixture() { std::filesystem::remove_all(dir); }

  std::string Report() {
    plumb::LoadedRun run;
    std::string error;
    REQUIRE(plumb::LoadRun(run_dir, &run, &error));
    const std::string path = dir + "/report.html";
    REQUIRE(plumb::WriteHtmlRunReport(run, path, &error));
    return ReadFile(path);
  }
};

size_t Count(const std::string& haystack, const std::string& needle) {
  size_t n = 0;
  for (size_t at = haystack.find(needle); at != std::string::npos;
       at = haystack.find(needle, at + 1)) {
    ++n;
  }
  return n;
}

// The card of case `id`, from its <details ...> to its </details>.
std::string Card(const std::string& html, const std::string& id) {
  const size_t start = html.find("id=\"case-" + id + "\"");
  REQUIRE(start != std::string::npos);
  return html.substr(start, html.find("</details>", start) - start);
}

}  // namespace

TEST_CASE("html report: base64 and CSP hash sources", "[html_report]") {
  // RFC 4648 §10 test vectors.
  CHECK(plumb::Base64("") == "");
  CHECK(plumb::Base64("f") == "Zg==");
  CHECK(plumb::Base64("fo") == "Zm8=");
  CHECK(plumb::Base64("foo") == "Zm9v");
  CHECK(plumb::Base64("foob") == "Zm9vYg==");
  CHECK(plumb::Base64("fooba") == "Zm9vYmE=");
  CHECK(plumb::Base64("foobar") == "Zm9vYmFy");
  // python3 -c "import hashlib,base64; print(base64.b64encode(hashlib.sha256(b'abc').digest()))"
  CHECK(plumb::CspHashSource("abc") == "sha256-ungWv48Bz+pBQUDeXa4iI7ADYaOWF3qctBD/YfIAFa0=");
  CHECK(plumb::CspHashSource("") == "sha256-47DEQpj8HBSa+/TImW+5JCeuQeRkm5NMpJWZG3hSuFU=");
}

TEST_CASE("html report: the policy comes first and admits exactly the page's script and style",
          "[html_report]") {
  Fixture f;
  const std::string html = f.Report();
  const size_t csp = html.find("<meta http-equiv=\"Content-Security-Policy\"");
  REQUIRE(csp != std::string::npos);
  CHECK(csp < html.find("<title>"));
  CHECK(html.find("default-src 'none'; script-src '" + plumb::CspHashSource(plumb::kReportScript) +
                  "'; style-src '" + plumb::CspHashSource(plumb::kReportStyle) + "'") !=
        std::string::npos);
  // The hashed texts are the page's texts, byte for byte, and there is no other script.
  CHECK(Count(html, "<script") == 1);
  CHECK(html.find("<script>" + std::string(plumb::kReportScript) + "</script>") !=
        std::string::npos);
  CHECK(Count(html, "<style") == 1);
  CHECK(html.find("<style>" + std::string(plumb::kReportStyle) + "</style>") != std::string::npos);
  CHECK(html.find(" style=") == std::string::npos);  // a style attribute would be blocked
}

TEST_CASE("html report: failed, then errored, then passed, with counts", "[html_report]") {
  Fixture f;
  const std::string html = f.Report();
  const size_t wrong = html.find("id=\"case-wrong\"");
  const size_t missing = html.find("id=\"case-missing\"");
  const size_t right = html.find("id=\"case-right\"");
  CHECK(wrong < missing);
  CHECK(missing < right);
  CHECK(Card(html, "wrong").find("data-status=\"failed\"") != std::string::npos);
  CHECK(Card(html, "missing").find("data-status=\"errored\"") != std::string::npos);
  CHECK(Card(html, "right").find("data-status=\"passed\"") != std::string::npos);
  CHECK(html.find("3: 1 failed, 1 errored, 1 passed") != std::string::npos);
  CHECK(html.find("data-status=\"failed\">failed<span class=\"c\">1</span>") != std::string::npos);
  // Failed and errored cards are open; the passed one is folded.
  CHECK(Card(html, "wrong").find(" open>") != std::string::npos);
  CHECK(Card(html, "right").find(" open>") == std::string::npos);
  CHECK(Card(html, "missing").find("no prediction for this case") != std::string::npos);
  // SPEC §12's caution.
  CHECK(html.find("It does not certify the pipeline for legal, medical or safety-critical use") !=
        std::string::npos);
}

TEST_CASE("html report: untrusted text is escaped", "[html_report]") {
  Fixture f;
  const std::string card = Card(f.Report(), "wrong");
  CHECK(card.find("&lt;script&gt;window.x=1&lt;/script&gt; five minutes") != std::string::npos);
  CHECK(card.find("How long before &lt;b&gt;departure&lt;/b&gt;?") != std::string::npos);
  CHECK(card.find("<b>") == std::string::npos);
}

TEST_CASE("html report: the citation is drawn on the corpus text", "[html_report]") {
  Fixture f;
  const std::string card = Card(f.Report(), "wrong");
  // Gold [17, 62), cited [33, 44): gold-only "Boarding closes ", overlap "ten minutes", gold-only
  // " before departure."; the document's first 17 code points are shown as plain text.
  CHECK(card.find("<div class=\"src\">Foot passengers: <span class=\"lbl\">G1</span><mark "
                  "class=\"m-gold\">Boarding closes </mark><span class=\"lbl\">C1</span><mark "
                  "class=\"m-both\">ten minutes</mark><mark class=\"m-gold\"> before "
                  "departure.</mark>") != std::string::npos);
  // Token diff against "ten minutes": [five minutes] after SQuAD normalization, with the
  // markup's words as tokens too: script windowx1script five minutes.
  CHECK(card.find("<del class=\"tk miss\">ten</del>") != std::string::npos);
  CHECK(card.find("<span class=\"tk ok\">minutes</span>") != std::string::npos);
  CHECK(card.find("<ins class=\"tk extra\">five</ins>") != std::string::npos);
}

TEST_CASE("html report: without the corpus, the recorded gold text stands in", "[html_report]") {
  Fixture f;
  std::filesystem::remove_all(f.dir + "/docs");
  const std::string html = f.Report();
  CHECK(html.find("The corpus was not available here") != std::string::npos);
  const std::string card = Card(html, "wrong");
  // The gold span's recorded text, [17, 62), with the citation [33, 44) inside it at [16, 27).
  CHECK(
      card.find("<span class=\"lbl\">G1</span><mark class=\"m-gold\">Boarding closes "
                "</mark><span class=\"lbl\">C1</span><mark class=\"m-both\">ten minutes</mark>") !=
      std::string::npos);
  CHECK(card.find("Foot passengers") == std::string::npos);
}

TEST_CASE("html report: a changed corpus is said", "[html_report]") {
  Fixture f;
  WriteFile(f.dir + "/docs/other.md", "A new document.\n");
  CHECK(f.Report().find("has changed since the run") != std::string::npos);
}

TEST_CASE("html report: errors come back as values", "[html_report]") {
  Fixture f;
  plumb::LoadedRun run;
  std::string error;
  REQUIRE(plumb::LoadRun(f.run_dir, &run, &error));
  // Missing folders are created now (run_record.cc), so the folder here is a file.
  CHECK_FALSE(plumb::WriteHtmlRunReport(run, f.dir + "/suite.yaml/report.html", &error));
  CHECK(error.find(f.dir + "/suite.yaml/report.html") != std::string::npos);

  // A drift value of the wrong shape is refused with a sentence, not an exception.
  error.clear();
  CHECK_FALSE(plumb::WriteHtmlDriftReport(nlohmann::json::array({1, 2}), run, run,
                                          f.dir + "/drift.html", &error));
  CHECK(error.find("cannot build the HTML drift report") != std::string::npos);

  // Nulls where numbers were expected (an interval over no resamples) are shown as dashes.
  const nlohmann::json drift = {{"metrics",
                                 {{{"metric", "token_f1"},
                                   {"base_mean", nullptr},
                                   {"cand_mean", 0.5},
                                   {"delta", nullptr},
                                   {"interval", nullptr},
                                   {"p_value", nullptr},
                                   {"test", "wilcoxon"},
                                   {"verdict", "steady"},
                                   {"n", 1},
                                   {"gated", false}}}},
                                {"gate", {{"exit_code", 0}, {"reason", ""}}}};
  REQUIRE(plumb::WriteHtmlDriftReport(drift, run, run, f.dir + "/drift.html", &error));
  const std::string html = ReadFile(f.dir + "/drift.html");
  CHECK(html.find("<td class=\"num\">\xE2\x80\x94</td><td class=\"num\">0.500</td>") !=
        std::string::npos);
  CHECK(html.find("Steady") != std::string::npos);
}

TEST_CASE("html report parts: attributes the page's script parses", "[html_report]") {
  CHECK(plumb::PercentEncode("a b/\xC3\xA9") == "a%20b%2F%C3%A9");  // RFC 3986 §2.1
  CHECK(plumb::ScoresAttribute({{"recall@5", 0.75}, {"token_f1", 1}}) ==
        "recall%405 0.75 token_f1 1");
  CHECK(plumb::TagsAttribute({"a b", "c"}) == "a%20b c");
}

TEST_CASE("html report: repeats that disagree make a failed, unstable case", "[html_report]") {
  Fixture f;
  WriteFile(f.dir + "/predictions.jsonl",
            std::string(kPredictions) +
                R"({"id": "right", "repeat": 1, "answer": "no idea", "citations": []})" + "\n");
  const plumb_test::Result r = plumb_test::Plumb(
      {"score", f.dir + "/suite.yaml", f.dir + "/predictions.jsonl", "--out", f.dir + "/run2"},
      f.dir);
  INFO(r.err);
  f.run_dir = f.dir + "/run2";
  const std::string card = Card(f.Report(), "right");
  // The first repeat that did not pass is the one shown.
  CHECK(card.find("data-status=\"failed\"") != std::string::npos);
  CHECK(card.find("repeat 1 shown; passed 1 of 2 repeats (unstable)") != std::string::npos);
  CHECK(card.find("<p class=\"answer\">no idea</p>") != std::string::npos);
}

// Issue 17 item 10: a 1 MB answer made a 7.4 MB case card (200,001 diff elements) that took
// 14 s to open. The diff draws its first 300 tokens; the answer shows 2,000 characters and keeps
// the whole text once, escaped, in a <template> that "show all" reads (tests/browser checks the
// button). The answer, 200,000 words "w0" ... "w199999" and "<b>end</b>", is 1,488,900 characters
// and 200,001 SQuAD tokens ("<b>end</b>" loses its punctuation to "bendb"); with the gold's
// missing "nothing", 200,002 diff tokens (counted with Python's str.split on the same text).
TEST_CASE("html report: a 1 MB answer makes a bounded case card", "[html_report]") {
  const std::string dir = plumb_test::MakeTempDir();
  std::string answer;
  for (int i = 0; i < 200000; ++i) answer += (i ? " w" : "w") + std::to_string(i);
  answer += " <b>end</b>";
  WriteFile(dir + "/suite.yaml",
            "plumb: 1\nname: big\nmax_error_rate: 1\ncases:\n"
            "  - {id: big, question: \"What is the word?\", answers: [\"w1 w2 nothing\"]}\n");
  WriteFile(dir + "/predictions.jsonl", "{\"id\": \"big\", \"answer\": \"" + answer + "\"}\n");
  const plumb_test::Result r = plumb_test::Plumb(
      {"score", dir + "/suite.yaml", dir + "/predictions.jsonl", "--out", dir + "/run"}, dir);
  INFO(r.err);
  REQUIRE(r.code == 0);  // no floors: a failed case alone does not fail the run
  plumb::LoadedRun run;
  std::string error;
  REQUIRE(plumb::LoadRun(dir + "/run", &run, &error));
  REQUIRE(plumb::WriteHtmlRunReport(run, dir + "/report.html", &error));
  const std::string card = Card(ReadFile(dir + "/report.html"), "big");
  const std::string escaped_end = " w199999 &lt;b&gt;end&lt;/b&gt;";

  // The whole answer is in the page once, escaped, inside the template; nothing else repeats it.
  CHECK(Count(card, escaped_end) == 1);
  const size_t template_at = card.find("<template>");
  REQUIRE(template_at != std::string::npos);
  CHECK(card.find(escaped_end, template_at) != std::string::npos);
  CHECK(card.find("show all 1,488,900 characters") != std::string::npos);
  // 300 drawn tokens: w1 and w2 match the gold, 298 others are extra; the counts cover all.
  CHECK(Count(card, "<span class=\"tk ok\">") == 2);
  CHECK(Count(card, "<ins class=\"tk extra\">") == 298);
  CHECK(card.find("The diff is drawn for the first 300 of 200002 tokens") != std::string::npos);
  CHECK(card.find("2 matched \xC2\xB7 1 missing \xC2\xB7 199999 extra") != std::string::npos);
  // Bounded: the template's copy plus a few tens of KiB, against 7.4 MB before.
  CHECK(card.size() < answer.size() + 64 * 1024);
  std::filesystem::remove_all(dir);
}

// Issue 20 item 2: the page leads with the failures. Twelve cases answered wrongly and three
// errored, their journal errors set by hand to two reasons (two texts that differ only in a
// number, and a timeout): the first ten failed cards arrive open and the rest folded, the
// errored cards sit under one heading per reason with the larger group first, the cause
// section at the top counts both, and the scores and the tag grid follow the cards.
TEST_CASE("html report: first ten failed cards open, errored cards grouped by reason",
          "[html_report]") {
  const std::string dir = plumb_test::MakeTempDir();
  std::string suite = "plumb: 1\nname: lead\nmax_error_rate: 1\ncases:\n";
  std::string predictions;
  for (int i = 1; i <= 12; ++i) {
    const std::string id = (i < 10 ? "f0" : "f") + std::to_string(i);
    suite += "  - {id: " + id + ", question: \"Q" + std::to_string(i) +
             "?\", answers: [\"yes\"], tags: [t" + std::to_string(i % 2) + "]}\n";
    predictions += "{\"id\": \"" + id + "\", \"answer\": \"no\"}\n";
  }
  for (const char* id : {"e1", "e2", "e3"}) {
    suite += std::string("  - {id: ") + id + ", question: \"Q?\", answers: [\"yes\"]}\n";
  }
  WriteFile(dir + "/suite.yaml", suite);
  WriteFile(dir + "/predictions.jsonl", predictions);
  const plumb_test::Result r = plumb_test::Plumb(
      {"score", dir + "/suite.yaml", dir + "/predictions.jsonl", "--out", dir + "/run"}, dir);
  INFO(r.err);
  REQUIRE(r.code == 0);
  // Each errored case's journal line says "no prediction for this case in PATH"; give them the
  // reasons a pipeline would.
  std::string journal = ReadFile(dir + "/run/cases.jsonl");
  const std::string missing = "no prediction for this case in " + dir + "/predictions.jsonl";
  const char* reasons[] = {"retrieved[0]: missing string field 'document'", "timed out after 30 s",
                           "retrieved[3]: missing string field 'document'"};
  for (const char* reason : reasons) {
    const size_t at = journal.find(missing);
    REQUIRE(at != std::string::npos);
    journal.replace(at, missing.size(), reason);
  }
  WriteFile(dir + "/run/cases.jsonl", journal);
  plumb::LoadedRun run;
  std::string error;
  REQUIRE(plumb::LoadRun(dir + "/run", &run, &error));
  REQUIRE(plumb::WriteHtmlRunReport(run, dir + "/report.html", &error));
  const std::string html = ReadFile(dir + "/report.html");

  for (const char* id : {"f01", "f05", "f10"}) {
    CHECK(Card(html, id).find(" open>") != std::string::npos);
  }
  for (const char* id : {"f11", "f12", "e1", "e2", "e3"}) {
    CHECK(Card(html, id).find(" open>") == std::string::npos);
  }
  CHECK(html.find("first 10 open, 2 folded") != std::string::npos);
  CHECK(html.find("<span class=\"n\">3 folded</span>") != std::string::npos);
  // Errored: the two "retrieved[N]" errors make one reason, named by its first text.
  const size_t group1 = html.find(
      "<h4 class=\"because\" id=\"errors-1\"><strong>2</strong> retrieved[0]: missing string "
      "field 'document'</h4>");
  const size_t group2 =
      html.find("<h4 class=\"because\" id=\"errors-2\"><strong>1</strong> timed out after 30 s");
  REQUIRE(group1 != std::string::npos);
  REQUIRE(group2 != std::string::npos);
  CHECK(group1 < html.find("id=\"case-e1\""));
  CHECK(html.find("id=\"case-e1\"") < html.find("id=\"case-e3\""));
  CHECK(html.find("id=\"case-e3\"") < group2);
  CHECK(group2 < html.find("id=\"case-e2\""));
  // The cause section, before the cards: errored (with its reasons) and reading miss (a wrong
  // answer, no gold spans), in classification order, with shares of all 15 cases and their
  // Wilson intervals (12 of 15: 54.8%-93.0%; 3 of 15: 7.0%-45.2%, statsmodels
  // proportion_confint(method='wilson')).
  const size_t causes = html.find("<section id=\"causes\">");
  REQUIRE(causes != std::string::npos);
  CHECK(causes < html.find("<section id=\"cases\">"));
  CHECK(html.find("<tr><td><a href=\"#cause=errored\">errored</a></td><td "
                  "class=\"num\"><strong>3</strong></td><td class=\"num\">20.0% "
                  "(7.0%\xE2\x80\x93"
                  "45.2%)</td></tr><tr class=\"sub\"><td colspan=\"3\"><ol "
                  "class=\"reasons\"><li><a href=\"#errors-1\"><strong>2</strong></a> "
                  "retrieved[0]: missing string field 'document' <span class=\"note\">(and 1 "
                  "like it)</span></li><li><a href=\"#errors-2\"><strong>1</strong></a> timed "
                  "out after 30 s</li></ol></td></tr><tr><td><a "
                  "href=\"#cause=reading_miss\">reading miss</a></td><td "
                  "class=\"num\"><strong>12</strong></td><td class=\"num\">80.0% "
                  "(54.8%\xE2\x80\x93"
                  "93.0%)</td></tr>",
                  causes) != std::string::npos);
  // Each failed card names its cause and carries it for the #cause= filter.
  CHECK(Card(html, "f11").find("data-cause=\"reading_miss\"") != std::string::npos);
  CHECK(Card(html, "f11").find("<span class=\"cause\">reading miss</span>") != std::string::npos);
  CHECK(Card(html, "e2").find("data-cause=\"errored\"") != std::string::npos);
  // Scores and the tag grid come after the cards. t0 holds f02, f04, ... f12: correct 0 of 6.
  CHECK(html.find("<section id=\"cases\">") < html.find("<section id=\"scores\">"));
  CHECK(html.find("<section id=\"scores\">") < html.find("<section id=\"tags\">"));
  const size_t t0 = html.find("<tr><th scope=\"row\"><a href=\"#tag=t0\">t0</a></th>");
  REQUIRE(t0 != std::string::npos);
  // Its cause columns (errored 0; reading miss 6 of 6, Wilson 61.0%-100.0%), then correct.
  CHECK(html.find("<td class=\"num\">6</td><td class=\"cc none\">0</td><td tabindex=\"0\" "
                  "class=\"cc\"><strong>6</strong><span class=\"tip\">t0 \xC2\xB7 reading miss: "
                  "6 of 6 cases, 100.0% (95% interval 61.0%\xE2\x80\x93"
                  "100.0%)</span></td><td "
                  "tabindex=\"0\" class=\"v0\">0.00<span class=\"tip\">t0 \xC2\xB7 correct: mean "
                  "0.000, 95% interval 0.000\xE2\x80\x93"
                  "0.390, n 6</span></td>",
                  t0) == html.find("<td class=\"num\">6</td>", t0));
  std::filesystem::remove_all(dir);
}

// Issue 20 item 4: the drift page says apart whether the candidate got worse than the base and
// whether it holds its floors, which the base may have broken just the same. Two runs of one
// suite with floors correct >= 0.5 and token_f1 >= 0.9: "ab" answers a right and b wrong
// (correct 0.5 holds, token_f1 0.5 breaks), "none" answers both wrong (both break).
TEST_CASE("html report: the drift page separates the comparison from the floors", "[html_report]") {
  const std::string dir = plumb_test::MakeTempDir();
  WriteFile(dir + "/suite.yaml",
            "plumb: 1\nname: floors\nmax_error_rate: 1\nfloors: {correct: 0.5, token_f1: 0.9}\n"
            "cases:\n  - {id: a, question: \"A?\", answers: [\"yes\"]}\n"
            "  - {id: b, question: \"B?\", answers: [\"yes\"]}\n");
  WriteFile(dir + "/ab.jsonl",
            "{\"id\": \"a\", \"answer\": \"yes\"}\n{\"id\": \"b\", "
            "\"answer\": \"no\"}\n");
  WriteFile(dir + "/none.jsonl",
            "{\"id\": \"a\", \"answer\": \"no\"}\n{\"id\": \"b\", "
            "\"answer\": \"no\"}\n");
  for (const char* name : {"ab", "none"}) {
    const plumb_test::Result r = plumb_test::Plumb(
        {"score", dir + "/suite.yaml", dir + "/" + name + ".jsonl", "--out", dir + "/" + name},
        dir);
    INFO(r.err);
    REQUIRE(r.code == 1);
  }
  plumb::LoadedRun ab, none;
  std::string error;
  REQUIRE(plumb::LoadRun(dir + "/ab", &ab, &error));
  REQUIRE(plumb::LoadRun(dir + "/none", &none, &error));
  auto page = [&](const nlohmann::json& drift, const plumb::LoadedRun& base,
                  const plumb::LoadedRun& cand) {
    REQUIRE(plumb::WriteHtmlDriftReport(drift, base, cand, dir + "/drift.html", &error));
    return ReadFile(dir + "/drift.html");
  };
  nlohmann::json drift = {{"metrics",
                           {{{"metric", "token_f1"}, {"delta", 0.25}, {"verdict", "improved"}},
                            {{"metric", "exact_match"}, {"delta", 0.25}, {"verdict", "improved"}},
                            {{"metric", "correct"}, {"delta", 0.0}, {"verdict", "steady"}}}},
                          {"gate", {{"exit_code", 1}, {"regressed", nlohmann::json::array()}}}};

  // Nothing regressed, two metrics improved, and the floor broken is the one the base broke.
  std::string html = page(drift, ab, ab);
  CHECK(html.find("<span class=\"verdict good\">Improved</span><span class=\"verdict limits "
                  "bad\">Same floor broken as base</span>") != std::string::npos);
  CHECK(html.find("<strong>Against the base:</strong> no regression; 2 improved (token_f1, "
                  "exact_match).</li>") != std::string::npos);
  CHECK(html.find("<strong>Floors and ceilings:</strong> the candidate breaks the same 1 floor "
                  "as the base: token_f1 0.500 &lt; 0.900.</li>") != std::string::npos);

  // A floor the base held breaks in the candidate.
  html = page(drift, ab, none);
  CHECK(html.find("<span class=\"verdict limits bad\">New floor broken</span>") !=
        std::string::npos);
  CHECK(html.find("the candidate breaks 1 floor the base held: correct 0.000 &lt; 0.500; and 1 "
                  "floor the base broke too: token_f1 0.000 &lt; 0.900.") != std::string::npos);

  // The other way round: the candidate breaks fewer; and a gated regression is named.
  drift["gate"]["regressed"] = {"correct"};
  drift["metrics"][2]["verdict"] = "regressed";
  html = page(drift, none, ab);
  CHECK(html.find("<span class=\"verdict bad\">Regressed</span><span class=\"verdict limits "
                  "bad\">Fewer broken than base</span>") != std::string::npos);
  CHECK(html.find("gated correct regressed; 2 improved (token_f1, exact_match).") !=
        std::string::npos);
  CHECK(html.find("the candidate breaks 1 floor the base broke too: token_f1 0.500 &lt; 0.900; "
                  "the base also broke 1 floor the candidate holds: correct 0.000 &lt; 0.500.") !=
        std::string::npos);
  std::filesystem::remove_all(dir);
}
