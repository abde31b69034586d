// Markdown summaries (runner/report/markdown_report.h): untrusted text rendered literally, by the
// rules of CommonMark 0.30 (§2.4: any ASCII punctuation character may be backslash-escaped) and the
// GitHub Flavored Markdown spec 0.29-gfm (§4.10 tables: a pipe inside a cell is escaped as
// "\|"); identifiers as code spans (CommonMark §6.1); the verdict first; tables whose rows keep
// their columns whatever the answers hold.
#include "runner/report/markdown_report.h"

#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "tests/support/plumb_process.h"

using namespace plumb_test;
using plumb::MarkdownText;

namespace {

std::vector<std::string> Lines(const std::string& text) {
  std::vector<std::string> lines;
  size_t start = 0;
  while (start < text.size()) {
    const size_t nl = text.find('\n', start);
    lines.push_back(text.substr(start, nl - start));
    if (nl == std::string::npos) break;
    start = nl + 1;
  }
  return lines;
}

/// Cell separators of a table row: pipes not escaped by a backslash.
int Separators(const std::string& row) {
  int count = 0;
  for (size_t i = 0; i < row.size(); ++i) {
    if (row[i] == '\\') {
      ++i;
    } else if (row[i] == '|') {
      ++count;
    }
  }
  return count;
}

/// Every table of `markdown` (runs of lines starting with "|") has rows with its header's number
/// of cells.
void CheckTablesKeepTheirColumns(const std::string& markdown) {
  int header = -1;
  for (const std::string& line : Lines(markdown)) {
    if (line.empty() || line[0] != '|') {
      header = -1;
      continue;
    }
    INFO(line);
    if (header < 0) {
      header = Separators(line);
    } else {
      CHECK(Separators(line) == header);
    }
  }
}

}  // namespace

TEST_CASE("MarkdownText renders untrusted text literally, on one line") {
  CHECK(MarkdownText("a | b") == "a \\| b");
  CHECK(MarkdownText("**bold** _it_ `code`") == "\\*\\*bold\\*\\* \\_it\\_ \\`code\\`");
  CHECK(MarkdownText("<script>alert(1)</script>") == "\\<script\\>alert\\(1\\)\\</script\\>");
  CHECK(MarkdownText("[link](http://x)") == "\\[link\\]\\(http://x\\)");
  CHECK(MarkdownText("&lt;") == "\\&lt;");  // an entity stays text
  CHECK(MarkdownText("# heading") == "\\# heading");
  // A mention needs an alphanumeric right after "@"; the word joiner U+2060 (E2 81 A0) breaks it.
  CHECK(MarkdownText("@alice") ==
        "@\xE2\x81\xA0"
        "alice");
  CHECK(MarkdownText("line one\nline two\r\tend") == "line one line two  end");
  CHECK(MarkdownText("\xFF") == "\xEF\xBF\xBD");  // invalid UTF-8 -> U+FFFD
  // Cut after max code points: "é" is one code point of two bytes.
  CHECK(MarkdownText("\xC3\xA9\xC3\xA9\xC3\xA9", 2) == "\xC3\xA9\xC3\xA9…");
  CHECK(MarkdownText("abc", 3) == "abc");
}

TEST_CASE("the run summary starts with the verdict and keeps its tables intact") {
  const std::string dir = MakeTempDir();
  const std::string runs = PLUMB_SOURCE_DIR "/fixtures/runs/";
  const Result r = Plumb({"score", runs + "suite.yaml", runs + "base.jsonl", "--out", dir + "/run",
                          "--markdown", dir + "/run.md"},
                         dir);
  INFO(r.err);
  REQUIRE(r.code == 0);
  const std::string md = ReadFile(dir + "/run.md");
  const std::vector<std::string> lines = Lines(md);
  REQUIRE(lines.size() > 4);
  CHECK(lines[0] == "### plumb: `drift-fixture` / `predictions` — exit 0");
  CHECK(lines[2] == "**PASS** (exit 0): all 2 floors held");
  // make_runs.py: 350 of 400 right; Wilson 95% interval for 350/400 from statsmodels
  // proportion_confint(350, 400, method="wilson") = (0.83898, 0.90388).
  CHECK(md.find("| `correct` | 0.875 | [0.839, 0.904] | 400 | floor 0.8 held |") !=
        std::string::npos);
  // 50 failed cases, ten shown.
  CHECK(md.find("<summary>Failed cases: 50 (10 shown, across causes)</summary>") !=
        std::string::npos);
  CHECK(md.find("**Why 50 of 400 cases failed:** ") != std::string::npos);
  CHECK(md.find("| case | cause | gold | answer | reason |") != std::string::npos);
  // The hidden marker a CI step finds its comment by, last.
  CHECK(lines.back() == "<!-- plumb:report suite=drift-fixture pipeline=predictions -->");
  CheckTablesKeepTheirColumns(md);
}

TEST_CASE("the drift summary keeps its tables intact whatever the answers hold") {
  plumb::DriftReport report;
  report.base.suite_name = "ferry|handbook";
  report.base.pipeline = "main";
  report.cand.pipeline = "pr --> <script>";
  report.cand.labels = {{"git", "abc|def"}};
  report.paired = {"a", "b"};
  plumb::MetricDrift correct;
  correct.metric = "correct";
  correct.n = 2;
  correct.base_mean = 1;
  correct.cand_mean = 0.5;
  correct.delta = -0.5;
  correct.interval = {-1, 0};
  correct.mcnemar = true;
  correct.p_value = 1;
  correct.gated = true;
  report.metrics.push_back(correct);
  plumb::CaseChange lost;
  lost.id = "a";
  lost.deltas = {{"correct", -1}, {"token_f1", -0.5}};
  lost.base_answer = "ten | minutes\n| forged | row |";
  lost.cand_error = "crashed <b>@oncall</b>";
  lost.cand_cause = plumb::FailureCause::kErrored;
  lost.cand_reason = "crashed <b>@oncall</b> | cell";
  lost.gold = {"ten | minutes"};
  report.lost.push_back(lost);
  report.lost_causes = plumb::BreakDownCauses({plumb::FailureCause::kErrored});
  report.gate.exit_code = 0;
  report.gate.reason = "no gated metric regressed (correct steady)";
  const std::string md = plumb::FormatDriftMarkdown(report);
  const std::vector<std::string> lines = Lines(md);
  CHECK(lines[0] == "### plumb drift: ferry\\|handbook — exit 0");
  CHECK(lines[2] == "**PASS** (exit 0): no gated metric regressed \\(correct steady\\)");
  CHECK(md.find("| `correct` (gated) | 1.000 | 0.500 | -0.5000 | [-1.0000, +0.0000] | 1.0000 | "
                "steady |") != std::string::npos);
  CHECK(md.find("ten \\| minutes \\| forged \\| row \\|") != std::string::npos);
  CHECK(md.find("@\xE2\x81\xA0oncall") != std::string::npos);
  CHECK(md.find("<b>") == std::string::npos);
  // Lost cases first, before the metric table, with their cause, gold and reason.
  CHECK(md.find("**Lost 1:** 1 errored") < md.find("| metric |"));
  CHECK(md.find("| `a` | errored | -1.0000 | ten \\| minutes | ten \\| minutes \\| forged") !=
        std::string::npos);
  CHECK(md.find("crashed \\<b\\>@\xE2\x81\xA0oncall\\</b\\> \\| cell |") != std::string::npos);
  // The marker cannot be closed early by a name: "-->" and "<" do not survive.
  CHECK(lines.back() == "<!-- plumb:report suite=ferry_handbook pipeline=pr_-___script_ -->");
  CheckTablesKeepTheirColumns(md);
}

TEST_CASE("the shown failed cases are chosen across causes") {
  // 12 reading misses, 2 retrieval misses and 1 errored case: ten rows take the first of each
  // cause, then the second, then reading misses: 7, 2 and 1.
  plumb::LoadedRun run;
  run.record = {{"plumb_run", 1},
                {"suite", {{"name", "mix"}, {"case_pass", {{"correct", 1}}}}},
                {"pipeline", {{"name", "p"}}},
                {"verdict", {{"exit_code", 1}, {"reason", "floors"}}},
                {"cases", nlohmann::json::object()}};
  auto add = [&](const std::string& id, plumb::FailureCause cause) {
    run.record["cases"][id] = {{"answers", {"gold " + id}}, {"tags", nlohmann::json::array()}};
    plumb::CaseRecord r;
    r.id = id;
    r.scores.values = {{"correct", 0}, {"token_f1", 0}};
    r.scores.cause = cause;
    if (cause == plumb::FailureCause::kErrored) {
      r.error = "timed out";
      r.scores.errored = true;
    } else {
      r.parsed.answer = "wrong";
    }
    run.records.push_back(r);
  };
  for (int i = 0; i < 12; ++i)
    add("read" + std::to_string(10 + i), plumb::FailureCause::kReadingMiss);
  add("retr1", plumb::FailureCause::kRetrievalMiss);
  add("retr2", plumb::FailureCause::kRetrievalMiss);
  add("err1", plumb::FailureCause::kErrored);
  const std::string md = plumb::FormatRunMarkdown(run);
  int reading = 0, retrieval = 0, errored = 0;
  for (const std::string& line : Lines(md)) {
    if (line.rfind("| `", 0) != 0) continue;  // the case rows
    reading += line.find("| reading miss |") != std::string::npos;
    retrieval += line.find("| retrieval miss |") != std::string::npos;
    errored += line.find("| errored |") != std::string::npos;
  }
  CHECK(reading == 7);
  CHECK(retrieval == 2);
  CHECK(errored == 1);
  CHECK(md.find("<summary>Failed cases: 15 (10 shown, across causes)</summary>") !=
        std::string::npos);
  CHECK(md.find("| `err1` | errored | gold err1 | *error:* timed out | timed out |") !=
        std::string::npos);
  // The breakdown, computed from the records (this run.json has no "failures"): 12/15 and its
  // Wilson interval, statsmodels proportion_confint(12, 15, method='wilson') = (0.54811, 0.92953).
  CHECK(md.find("| reading miss | 12 | 0.800 | [0.548, 0.930] |") != std::string::npos);
  CheckTablesKeepTheirColumns(md);
}
