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
