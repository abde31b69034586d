// `plumb check --since RUN_DIR` finds stale gold after a corpus edit (SPEC §4): spans whose
// text moved or changed since the run recorded their fingerprints, with file:line of the span.
#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>
#include <string>

#include "tests/support/plumb_process.h"

using namespace plumb_test;

TEST_CASE("check --since reports moved and changed gold spans and exits 1") {
  const std::string dir = MakeTempDir();
  REQUIRE(system(("mkdir -p " + dir + "/docs").c_str()) == 0);
  // Code points, worked by hand: "Boarding closes" is [0, 15); "Fares are listed" starts at 46
  // (the first sentence plus its space is 46 characters) and ends at 62.
  WriteFile(dir + "/docs/a.md",
            "Boarding closes ten minutes before departure. Fares are listed below.\n");
  WriteFile(dir + "/s.yaml",
            "plumb: 1\nname: stale\ncorpus: docs\ncases:\n"
            "  - id: q1\n    question: 'When does boarding close?'\n    answers: [ten minutes]\n"
            "    sources:\n      - {doc: a.md, start: 0, end: 15}\n"
            "  - id: q2\n    question: 'Where are fares?'\n    answers: [below]\n"
            "    sources:\n      - {doc: a.md, quote: 'Fares are listed'}\n");
  WriteFile(dir + "/pred.jsonl",
            "{\"id\": \"q1\", \"answer\": \"ten minutes\"}\n"
            "{\"id\": \"q2\", \"answer\": \"below\"}\n");
  Result r = Plumb({"score", dir + "/s.yaml", dir + "/pred.jsonl", "--out", dir + "/run"}, dir);
  REQUIRE(r.code == 0);
  const nlohmann::json run = nlohmann::json::parse(ReadFile(dir + "/run/run.json"));
  CHECK(run["cases"]["q2"]["sources"][0]["start"] == 46);
  CHECK(run["cases"]["q2"]["sources"][0]["end"] == 62);

  r = Plumb({"check", dir + "/s.yaml", "--since", dir + "/run"}, dir);
  CHECK(r.code == 0);
  CHECK(r.out.find(": ok: 2 cases") != std::string::npos);

  // The corpus edit: six code points ("Note: ") put in front of everything.
  WriteFile(dir + "/docs/a.md",
            "Note: Boarding closes ten minutes before departure. Fares are listed below.\n");
  r = Plumb({"check", dir + "/s.yaml", "--since", dir + "/run"}, dir);
  INFO(r.out + r.err);
  CHECK(r.code == 1);
  // The offsets [0, 15) now hold "Note: Boarding "; the recorded "Boarding closes" is at [6, 21).
  CHECK(r.out.find("s.yaml:9:9: stale: case 'q1' span 1 (a.md [0, 15)): the document's text there "
                   "changed; the recorded text is now at [6, 21): update start/end") !=
        std::string::npos);
  // The quote is found again, 6 code points later: [52, 68). It moved; it is not stale.
  CHECK(r.out.find("s.yaml:14:9: moved: case 'q2' span 1 (a.md [46, 62)): the quote is now at "
                   "[52, 68); nothing to do, the next run records the new offsets") !=
        std::string::npos);
  CHECK(r.out.find("1 gold span is stale since") != std::string::npos);
  CHECK(r.out.find("1 quote moved since") != std::string::npos);

  // Text that is gone altogether.
  WriteFile(dir + "/docs/a.md", "Gates shut early. Fares are listed below.\n");
  r = Plumb({"check", dir + "/s.yaml", "--since", dir + "/run"}, dir);
  CHECK(r.code == 1);
  CHECK(r.out.find("the recorded text is no longer in the document") != std::string::npos);
}

// Issue 17 item 6: a quote whose text a corpus edit changed made `check --since` exit 2 ("quote
// not found") with no stale listing, and a sentence inserted at the top of a document reported
// every intact quote as stale because its offsets moved. Code points worked by hand (checked
// with Python's str.index): in the run's document "Fares are listed below" is [46, 68) and
// "Boarding closes ten minutes" [0, 27); after "Welcome aboard. " (16 code points) is put in
// front they are at [62, 84) and [16, 43), and in the edited "... Fares are shown below." the
// stretch from "Fares are " to " below" is [62, 83).
TEST_CASE(
    "check --since lists an edited quote as stale with where its text went, and moves alone exit "
    "0") {
  const std::string dir = MakeTempDir();
  REQUIRE(system(("mkdir -p " + dir + "/docs").c_str()) == 0);
  WriteFile(dir + "/docs/a.md",
            "Boarding closes ten minutes before departure. Fares are listed below.\n");
  WriteFile(dir + "/s.yaml",
            "plumb: 1\nname: edited\ncorpus: docs\ncases:\n"
            "  - id: q1\n    question: 'When does boarding close?'\n    answers: [ten minutes]\n"
            "    sources:\n      - {doc: a.md, quote: 'Boarding closes ten minutes'}\n"
            "  - id: q2\n    question: 'Where are fares?'\n    answers: [below]\n"
            "    sources:\n      - {doc: a.md, quote: 'Fares are listed below'}\n");
  WriteFile(dir + "/pred.jsonl", "{\"id\": \"q1\", \"answer\": \"ten minutes\"}\n");
  Result r = Plumb({"score", dir + "/s.yaml", dir + "/pred.jsonl", "--out", dir + "/run"}, dir);
  REQUIRE(r.code == 3);  // q2 has no reply: a case error, and the run is recorded all the same

  // A sentence at the top: both quotes still resolve, 16 code points later. Moves alone: exit 0.
  WriteFile(dir + "/docs/a.md",
            "Welcome aboard. Boarding closes ten minutes before departure. Fares are listed "
            "below.\n");
  r = Plumb({"check", dir + "/s.yaml", "--since", dir + "/run"}, dir);
  INFO(r.out + r.err);
  CHECK(r.code == 0);
  CHECK(r.out.find("s.yaml:9:9: moved: case 'q1' span 1 (a.md [0, 27)): the quote is now at "
                   "[16, 43)") != std::string::npos);
  CHECK(r.out.find("s.yaml:14:9: moved: case 'q2' span 1 (a.md [46, 68)): the quote is now at "
                   "[62, 84)") != std::string::npos);
  CHECK(r.out.find(": ok: 2 cases") != std::string::npos);
  CHECK(r.out.find("stale") == std::string::npos);
  CHECK(r.out.find("2 quotes moved since") != std::string::npos);

  // The quoted sentence edited: q2's quote is stale, with the text now where it was.
  WriteFile(dir + "/docs/a.md",
            "Welcome aboard. Boarding closes ten minutes before departure. Fares are shown "
            "below.\n");
  r = Plumb({"check", dir + "/s.yaml", "--since", dir + "/run"}, dir);
  INFO(r.out + r.err);
  CHECK(r.code == 1);
  CHECK(r.out.find("s.yaml:14:9: stale: case 'q2' span 1 (a.md [46, 68)): the quote \"Fares are "
                   "listed below\" is no longer in the document; the text there now reads "
                   "\"Fares are shown below\" at [62, 83): rewrite the quote") !=
        std::string::npos);
  CHECK(r.out.find("1 gold span is stale since") != std::string::npos);

  // --json carries both lists.
  r = Plumb({"check", dir + "/s.yaml", "--since", dir + "/run", "--json"}, dir);
  const nlohmann::json out = nlohmann::json::parse(r.out);
  CHECK(out["stale_spans"].size() == 1);
  CHECK(out["moved_spans"].size() == 1);

  // Without --since an unfound quote is an error, as always.
  r = Plumb({"check", dir + "/s.yaml"}, dir);
  CHECK(r.code == 2);
  CHECK(r.err.find("quote not found in 'a.md'") != std::string::npos);
}

// Issue 17 item 9: `corpus: /` made plumb check read every file on the machine, and block for
// ever on /proc/kmsg. The walk stays on the root's file system, skips what is not a regular
// file or directory, stops at its bounds and says so. (A guard against a hang, not a speed
// check: it only waits 300 s before calling the run hung.)
TEST_CASE("corpus: / does not hang plumb check, which says what it skipped") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/s.yaml",
            "plumb: 1\nname: root\ncorpus: /\ncases:\n"
            "  - {id: q1, question: q, answers: [a], sources: [{doc: " +
                dir.substr(1) + "/s.yaml, quote: 'name: root'}]}\n");
  Process p = Start({"check", dir + "/s.yaml"}, dir);
  int status = 0;
  pid_t done = 0;
  for (int i = 0; i < 3000 && done == 0; ++i) {
    done = waitpid(p.pid, &status, WNOHANG);
    if (done == 0) usleep(100000);
  }
  if (done == 0) {
    kill(p.pid, SIGKILL);
    waitpid(p.pid, &status, 0);
    FAIL("plumb check with corpus: / did not finish in 300 s");
  }
  REQUIRE(WIFEXITED(status));
  const std::string err = ReadFile(p.err_path);
  INFO(err + ReadFile(p.out_path));
  CHECK(WEXITSTATUS(status) == 0);
  CHECK(err.find("warning: the fingerprint of corpus '/' skipped ") != std::string::npos);
  CHECK(err.find("on other file systems (") != std::string::npos);
  CHECK(err.find("/proc") != std::string::npos);
}
