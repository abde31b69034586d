// Corpus updates (issue 23): `updates:` in a suite, `after:` cases located in the corpus as it
// stands after their update, refusals at file:line:column, and `plumb run` with and without a
// pipeline's `refresh:` (the demo pipeline, a real BM25 program, in per-case mode here, so it
// reads its --docs afresh for every case and never hears of the update).
#include <signal.h>
#include <unistd.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <filesystem>
#include <map>
#include <nlohmann/json.hpp>
#include <string>

#include "tests/support/plumb_process.h"

using namespace plumb_test;

namespace {

// Every file under `dir` (relative path -> bytes), to show a directory is byte-identical.
std::map<std::string, std::string> Snapshot(const std::string& dir) {
  std::map<std::string, std::string> files;
  for (const auto& entry : std::filesystem::recursive_directory_iterator(dir)) {
    if (!entry.is_regular_file()) continue;
    files[entry.path().lexically_relative(dir).generic_string()] = ReadFile(entry.path().string());
  }
  return files;
}

// A corpus of three documents and an update that changes one, adds one and removes one.
void WriteCorpusAndUpdate(const std::string& dir) {
  REQUIRE(system(("mkdir -p " + dir + "/docs " + dir + "/updates/winter").c_str()) == 0);
  WriteFile(dir + "/docs/fares.md",
            "# Fares\n\nA foot passenger ticket to Gullholm costs 12 crowns.\n");
  WriteFile(dir + "/docs/boarding.md",
            "# Boarding\n\nBoarding closes ten minutes before departure.\n");
  WriteFile(dir + "/docs/routes.md",
            "# Routes\n\nThe night boat to Skerry Point sails at 23:40.\n");
  WriteFile(dir + "/updates/winter/fares.md",
            "# Fares\n\nA foot passenger ticket to Gullholm costs 15 crowns.\n");
  WriteFile(dir + "/updates/winter/notices.md",
            "# Notices\n\nThe night boat to Skerry Point no longer runs.\n");
}

const char kSuiteHead[] =
    "plumb: 1\n"
    "name: updates\n"
    "corpus: docs\n"
    "correct_from: [exact_match, covers_gold]\n"
    "updates:\n"
    "  - id: winter\n"
    "    docs: updates/winter\n"
    "    remove: [routes.md]\n";

const char kCases[] =
    "cases:\n"
    "  - id: boarding\n"
    "    question: How long before departure does boarding close?\n"
    "    answers: [ten minutes]\n"
    "    sources: [{doc: boarding.md, quote: Boarding closes ten minutes}]\n"
    "  - id: fare-after\n"
    "    after: winter\n"
    "    question: What does a foot passenger ticket to Gullholm cost?\n"
    "    answers: [15 crowns]\n"
    "    stale_answers: [12 crowns]\n"
    "    sources: [{doc: fares.md, quote: costs 15 crowns}]\n"
    "  - id: night-boat-after\n"
    "    after: winter\n"
    "    question: When does the night boat to Skerry Point sail?\n"
    "    answers: [no longer runs]\n"
    "    stale_answers: [23:40]\n"
    "    sources: [{doc: notices.md, quote: no longer runs}]\n";

}  // namespace

TEST_CASE("check locates after-cases in the updated corpus and refuses escaping updates") {
  const std::string dir = MakeTempDir();
  WriteCorpusAndUpdate(dir);
  WriteFile(dir + "/s.yaml", std::string(kSuiteHead) + kCases);
  Result r = Plumb({"check", dir + "/s.yaml"}, dir);
  INFO(r.out + r.err);
  CHECK(r.code == 0);

  // The old fare is not in the corpus after the update: the quote is refused there.
  std::string cases = kCases;
  cases.replace(cases.find("costs 15 crowns"), 15, "costs 12 crowns");
  WriteFile(dir + "/old.yaml", std::string(kSuiteHead) + cases);
  r = Plumb({"check", dir + "/old.yaml"}, dir);
  INFO(r.out + r.err);
  CHECK(r.code == 2);
  CHECK(r.err.find("old.yaml:19:") != std::string::npos);
  CHECK(r.err.find("quote not found in 'fares.md' after update 'winter'") != std::string::npos);

  // A removed document is gone for cases after the update.
  cases = kCases;
  cases.replace(cases.find("{doc: notices.md, quote: no longer runs}"), 40,
                "{doc: routes.md, quote: Skerry Point}");
  WriteFile(dir + "/removed.yaml", std::string(kSuiteHead) + cases);
  r = Plumb({"check", dir + "/removed.yaml"}, dir);
  CHECK(r.code == 2);
  CHECK(r.err.find("removed.yaml:25:") != std::string::npos);
  CHECK(r.err.find("doc 'routes.md' was removed by a corpus update") != std::string::npos);

  // docs that climb out of the suite's directory: refused at the value's line and column.
  REQUIRE(system(("mkdir -p " + dir + "/inner").c_str()) == 0);
  WriteFile(dir + "/inner/escape.yaml",
            "plumb: 1\nname: escape\ncorpus: ../docs\nupdates:\n"
            "  - id: winter\n    docs: ../updates/winter\ncases: []\n");
  r = Plumb({"check", dir + "/inner/escape.yaml"}, dir);
  INFO(r.err);
  CHECK(r.code == 2);
  CHECK(r.err.find("escape.yaml:6:11: error: update docs '../updates/winter' lie outside the "
                   "suite file's directory") != std::string::npos);

  // The same through a symlink that points out of it.
  REQUIRE(symlink((dir + "/updates/winter").c_str(), (dir + "/inner/link").c_str()) == 0);
  WriteFile(dir + "/inner/link.yaml",
            "plumb: 1\nname: link\ncorpus: ../docs\nupdates:\n"
            "  - id: winter\n    docs: link\ncases: []\n");
  r = Plumb({"check", dir + "/inner/link.yaml"}, dir);
  CHECK(r.code == 2);
  CHECK(r.err.find("link.yaml:6:11: error: update docs 'link' lie outside the suite file's "
                   "directory") != std::string::npos);

  // A removed doc that escapes the corpus, and an after: naming no update.
  WriteFile(dir + "/bad.yaml",
            "plumb: 1\nname: bad\ncorpus: docs\nupdates:\n"
            "  - id: winter\n    remove: [../s.yaml]\n"
            "cases:\n  - id: q\n    after: wintre\n    question: q?\n    answers: [a]\n");
  r = Plumb({"check", dir + "/bad.yaml"}, dir);
  INFO(r.err);
  CHECK(r.code == 2);
  CHECK(r.err.find("bad.yaml:6:14: error: removed doc '../s.yaml' contains a '..' component") !=
        std::string::npos);
  CHECK(r.err.find("bad.yaml:9:12: error: 'after' names update 'wintre', which 'updates:' does "
                   "not define") != std::string::npos);
}

TEST_CASE("a pipeline that ignores the update gives every after case its stale answer") {
  const std::string dir = MakeTempDir();
  WriteCorpusAndUpdate(dir);
  const std::string pipeline = kFixtures + "demo-pipeline";
  WriteFile(dir + "/s.yaml", std::string(kSuiteHead) + "pipelines:\n  ignores:\n    command: [" +
                                 pipeline + ", --docs, " + dir +
                                 "/docs, --top-k, '3']\n"
                                 "    mode: per-case\n" +
                                 kCases);
  const std::map<std::string, std::string> before = Snapshot(dir + "/docs");
  Result r = Plumb({"run", dir + "/s.yaml", "--out", dir + "/run", "--json"}, dir);
  INFO(r.out + r.err);
  REQUIRE((r.code == 0 || r.code == 1));
  // The user's corpus is byte-identical after the run.
  CHECK(Snapshot(dir + "/docs") == before);
  // The updated corpus was assembled in the run directory: fares changed, notices added,
  // routes removed.
  CHECK(ReadFile(dir + "/run/corpus/winter/fares.md").find("15 crowns") != std::string::npos);
  CHECK(std::filesystem::exists(dir + "/run/corpus/winter/notices.md"));
  CHECK(!std::filesystem::exists(dir + "/run/corpus/winter/routes.md"));

  const nlohmann::json run = nlohmann::json::parse(ReadFile(dir + "/run/run.json"));
  const nlohmann::json& metrics = run["aggregates"]["metrics"];
  CHECK(metrics["stale"]["mean"] == 1.0);
  CHECK(metrics["stale"]["n"] == 2);
  CHECK(metrics["fresh"]["mean"] == 0.0);
  const nlohmann::json& update = run["aggregates"]["freshness"]["updates"][0];
  CHECK(update["update"] == "winter");
  CHECK(update["cases"] == 2);
  CHECK(update["stale"]["mean"] == 1.0);
  CHECK(update["refresh_ms"].is_null());
  CHECK(update["refreshes"][0]["called"] == false);
  CHECK(run["cases"]["fare-after"]["after"] == "winter");
  CHECK(run["cases"]["boarding"].count("after") == 0);
  // The case asked of the corpus as the suite names it has neither metric.
  for (const nlohmann::json& record : ReadJournal(dir + "/run/cases.jsonl")) {
    if (record["id"] == "boarding") CHECK(record["scores"].count("stale") == 0);
  }
}

TEST_CASE("refresh is called with the updated corpus before the after cases and timed") {
  const std::string dir = MakeTempDir();
  WriteCorpusAndUpdate(dir);
  const std::string pipeline = kFixtures + "demo-pipeline";
  // The refresh writes the corpus it was given where the per-case pipeline reads its docs
  // (a symlink swapped), so the after cases are answered from the updated corpus.
  REQUIRE(symlink((dir + "/docs").c_str(), (dir + "/live").c_str()) == 0);
  WriteFile(dir + "/s.yaml", std::string(kSuiteHead) + "pipelines:\n  refreshed:\n    command: [" +
                                 pipeline + ", --docs, " + dir +
                                 "/live, --top-k, '3']\n    mode: per-case\n"
                                 "    refresh: [/bin/sh, -c, 'echo \"$1 $2\" > " +
                                 dir + "/refreshed.txt && ln -sfn \"$1\" " + dir +
                                 "/live', sh, '{corpus}', '{update}']\n" + kCases);
  const std::map<std::string, std::string> before = Snapshot(dir + "/docs");
  Result r = Plumb({"run", dir + "/s.yaml", "--out", dir + "/run"}, dir);
  INFO(r.out + r.err);
  REQUIRE((r.code == 0 || r.code == 1));
  CHECK(Snapshot(dir + "/docs") == before);
  CHECK(ReadFile(dir + "/refreshed.txt") == dir + "/run/corpus/winter winter\n");
  const nlohmann::json run = nlohmann::json::parse(ReadFile(dir + "/run/run.json"));
  const nlohmann::json& update = run["aggregates"]["freshness"]["updates"][0];
  CHECK(update["refreshes"][0]["called"] == true);
  CHECK(update["refreshes"][0]["ok"] == true);
  CHECK(update["refresh_ms"].get<double>() > 0);
  CHECK(update["stale"]["mean"] == 0.0);
  CHECK(update["fresh"]["mean"] == 1.0);
  CHECK(r.err.find("refreshed for update 'winter' in") != std::string::npos);
}

TEST_CASE("the winter demo reports refresh time and fresh and stale rates for both pipelines") {
  const std::string dir = MakeTempDir();
  const std::string pipeline = kFixtures + "demo-pipeline";
  const std::string docs = std::string(PLUMB_SOURCE_DIR) + "/fixtures/ferry/docs";
  // The suite's pipelines name build/fixtures/demo-pipeline from the repository root; the same
  // three with absolute paths.
  WriteFile(dir + "/pipelines.yaml",
            "pipelines:\n"
            "  retrieve:\n    command: [" +
                pipeline + ", --docs, " + docs +
                ", --top-k, '3', --refresh-key, retrieve]\n"
                "    refresh: [" +
                pipeline +
                ", --refresh, '{corpus}', --refresh-key, retrieve]\n"
                "  preload:\n    command: [" +
                pipeline + ", --docs, " + docs +
                ", --preload, --refresh-key, preload]\n"
                "    refresh: [" +
                pipeline +
                ", --refresh, '{corpus}', --refresh-key, preload]\n"
                "  retrieve-unrefreshed:\n    command: [" +
                pipeline + ", --docs, " + docs + ", --top-k, '3']\n");
  const std::map<std::string, std::string> before = Snapshot(docs);
  Result r = Plumb({"run", std::string(PLUMB_SOURCE_DIR) + "/suites/ferry-winter.yaml",
                    "--pipelines", dir + "/pipelines.yaml", "--pipeline", "retrieve", "--pipeline",
                    "preload", "--pipeline", "retrieve-unrefreshed", "--out", dir + "/runs"},
                   dir);
  INFO(r.out + r.err);
  REQUIRE(r.code == 0);
  CHECK(Snapshot(docs) == before);
  CHECK(r.out.find("freshness            update winter-2027: refresh ") != std::string::npos);
  for (const char* name : {"retrieve", "preload", "retrieve-unrefreshed"}) {
    const nlohmann::json run = nlohmann::json::parse(ReadFile(dir + "/runs/" + name + "/run.json"));
    const nlohmann::json& update = run["aggregates"]["freshness"]["updates"][0];
    INFO(name << ": " << update.dump());
    CHECK(update["cases"] == 14);
    if (std::string(name) == "retrieve-unrefreshed") {
      CHECK(update["refreshes"][0]["called"] == false);
      CHECK(update["fresh"]["mean"] == 0.0);
      CHECK(update["stale"]["mean"].get<double>() >= 0.5);
    } else {
      CHECK(update["refreshes"][0]["ok"] == true);
      CHECK(update["refresh_ms"].get<double>() > 0);
      CHECK(update["fresh"]["mean"].get<double>() > 0.4);
      CHECK(update["stale"]["mean"] == 0.0);
    }
  }
}

TEST_CASE("shards refresh once each for the updates they have cases after, and merge keeps both") {
  const std::string dir = MakeTempDir();
  WriteCorpusAndUpdate(dir);
  const std::string pipeline = kFixtures + "demo-pipeline";
  REQUIRE(symlink((dir + "/docs").c_str(), (dir + "/live").c_str()) == 0);
  WriteFile(dir + "/s.yaml", std::string(kSuiteHead) + "pipelines:\n  refreshed:\n    command: [" +
                                 pipeline + ", --docs, " + dir +
                                 "/live, --top-k, '3']\n    mode: per-case\n"
                                 "    refresh: [/bin/sh, -c, 'echo \"$1\" >> " +
                                 dir + "/refreshes.txt', sh, '{corpus}']\n" + kCases);
  int with_after = 0;
  for (const char* shard : {"1/2", "2/2"}) {
    const std::string out = dir + "/shard" + std::string(1, shard[0]);
    Result r = Plumb({"run", dir + "/s.yaml", "--shard", shard, "--out", out}, dir);
    INFO(r.out + r.err);
    REQUIRE((r.code == 0 || r.code == 1));
    const nlohmann::json run = nlohmann::json::parse(ReadFile(out + "/run.json"));
    bool after = false;
    for (const auto& [id, entry] : run["cases"].items()) after = after || entry.contains("after");
    with_after += after ? 1 : 0;
    // A shard refreshes exactly when it has a case after the update.
    CHECK(run["aggregates"].contains("freshness") == after);
  }
  // One refresh line per shard that had after cases.
  const std::string log = ReadFile(dir + "/refreshes.txt");
  CHECK(std::count(log.begin(), log.end(), '\n') == with_after);
  Result r = Plumb({"merge", dir + "/shard1", dir + "/shard2", "--out", dir + "/merged"}, dir);
  INFO(r.out + r.err);
  REQUIRE((r.code == 0 || r.code == 1));
  const nlohmann::json merged = nlohmann::json::parse(ReadFile(dir + "/merged/run.json"));
  const nlohmann::json& update = merged["aggregates"]["freshness"]["updates"][0];
  CHECK(update["cases"] == 2);
  CHECK(update["refreshes"].size() == size_t(with_after));
  for (const nlohmann::json& refresh : update["refreshes"]) {
    CHECK(refresh["shard"].get<std::string>().substr(1) == "/2");
  }
}

TEST_CASE("resume after an interrupted refresh runs the refresh again before the after cases") {
  const std::string dir = MakeTempDir();
  WriteCorpusAndUpdate(dir);
  const std::string pipeline = kFixtures + "demo-pipeline";
  REQUIRE(symlink((dir + "/docs").c_str(), (dir + "/live").c_str()) == 0);
  // The first refresh hangs (while the file `slow` exists) and is interrupted; the second
  // moves the pipeline to the updated corpus.
  WriteFile(dir + "/slow", "");
  WriteFile(dir + "/s.yaml",
            std::string(kSuiteHead) + "pipelines:\n  refreshed:\n    command: [" + pipeline +
                ", --docs, " + dir + "/live, --top-k, '3']\n    mode: per-case\n" +
                "    refresh: [/bin/sh, -c, 'if [ -f " + dir + "/slow ]; then rm " + dir +
                "/slow; sleep 60; fi; echo \"$1\" >> " + dir + "/refreshes.txt; ln -sfn \"$1\" " +
                dir + "/live', sh, '{corpus}']\n" + kCases);
  Process p = Start({"run", dir + "/s.yaml", "--out", dir + "/run"}, dir);
  for (int i = 0; i < 600 && ReadFile(p.err_path).find("refreshing") == std::string::npos; ++i) {
    usleep(50 * 1000);
  }
  usleep(200 * 1000);  // the refresh command is under way
  REQUIRE(kill(p.pid, SIGINT) == 0);
  CHECK(Wait(p) == 130);
  // The case before the update is journaled; no after case ran, no refresh completed.
  const std::vector<nlohmann::json> first = ReadJournal(dir + "/run/cases.jsonl");
  REQUIRE(first.size() == 1);
  CHECK(first[0]["id"] == "boarding");
  CHECK(!std::filesystem::exists(dir + "/refreshes.txt"));

  Result r = Plumb({"run", dir + "/s.yaml", "--out", dir + "/run", "--resume"}, dir);
  INFO(r.out + r.err);
  REQUIRE((r.code == 0 || r.code == 1));
  CHECK(ReadFile(dir + "/refreshes.txt") == dir + "/run/corpus/winter\n");
  const nlohmann::json run = nlohmann::json::parse(ReadFile(dir + "/run/run.json"));
  const nlohmann::json& update = run["aggregates"]["freshness"]["updates"][0];
  CHECK(update["refreshes"].size() == 1);
  CHECK(update["refreshes"][0]["ok"] == true);
  CHECK(update["fresh"]["mean"] == 1.0);
  CHECK(update["stale"]["mean"] == 0.0);
}
