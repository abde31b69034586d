// `plumb check --since RUN_DIR` finds stale gold after a corpus edit (SPEC §4): spans whose
// text moved or changed since the run recorded their fingerprints, with file:line of the span.
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
  // The quote is found again, 6 code points later: [52, 68).
  CHECK(r.out.find("s.yaml:14:9: stale: case 'q2' span 1 (a.md [46, 62)): the quote moved to "
                   "[52, 68)") != std::string::npos);
  CHECK(r.out.find("2 gold spans are stale since") != std::string::npos);

  // Text that is gone altogether.
  WriteFile(dir + "/docs/a.md", "Gates shut early. Fares are listed below.\n");
  r = Plumb({"check", dir + "/s.yaml", "--since", dir + "/run"}, dir);
  CHECK(r.code == 1);
  CHECK(r.out.find("the recorded text is no longer in the document") != std::string::npos);
}
