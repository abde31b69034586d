// Multi-turn sessions (issue 22): the real plumb runs session-pipeline, a persistent pipeline
// that logs which process served which turn and remembers each session it served. The tests
// read that log: a session's turns reach one process, in order, with the pipeline's own earlier
// answers in `history`, under --jobs 8 with 200 sessions; a worker crash mid-session runs that
// session (and no other) again from turn 1; --resume, --shard and --case keep sessions whole.

#include <algorithm>
#include <catch2/catch.hpp>
#include <map>
#include <nlohmann/json.hpp>
#include <set>
#include <string>
#include <vector>

#include "tests/support/plumb_process.h"

using nlohmann::json;

namespace {

// `sessions` sessions s0 ... of `turns` turns each; turn t of session s asks "s<s> turn <t>"
// and expects that text back (session-pipeline answers the question).
std::string Suite(const std::string& dir, int sessions, int turns, const std::string& extra = "") {
  std::string suite = "plumb: 1\nname: sessions\npipelines:\n  p: {command: [" +
                      plumb_test::kFixtures + "session-pipeline, --log, " + dir + "/served.log" +
                      extra + "]}\ncases:\n";
  for (int s = 0; s < sessions; ++s) {
    suite += "  - id: s" + std::to_string(s) + "\n    turns:\n";
    for (int t = 1; t <= turns; ++t) {
      const std::string q = "s" + std::to_string(s) + " turn " + std::to_string(t);
      suite += "      - {question: \"" + q + "\", answers: [\"" + q + "\"]}\n";
    }
  }
  return suite;
}

std::vector<json> ReadLog(const std::string& path) {
  std::vector<json> out;
  const std::string text = plumb_test::ReadFile(path);
  size_t pos = 0;
  while (pos < text.size()) {
    const size_t end = text.find('\n', pos);
    out.push_back(json::parse(text.substr(pos, end - pos)));
    pos = end + 1;
  }
  return out;
}

// Every served turn, by session, in the order the pipeline logged them.
std::map<std::string, std::vector<json>> BySession(const std::vector<json>& log) {
  std::map<std::string, std::vector<json>> out;
  for (const json& entry : log) out[entry.at("session").get<std::string>()].push_back(entry);
  return out;
}

}  // namespace

TEST_CASE("200 sessions under --jobs 8: each session's turns reach one process, in order") {
  const std::string dir = plumb_test::MakeTempDir();
  plumb_test::WriteFile(dir + "/suite.yaml", Suite(dir, 200, 4));
  const plumb_test::Result run = plumb_test::Plumb(
      {"run", dir + "/suite.yaml", "--out", dir + "/out", "--jobs", "8", "--json"}, dir);
  INFO(run.err);
  REQUIRE(run.code == 0);

  const std::vector<json> log = ReadLog(dir + "/served.log");
  REQUIRE(log.size() == 800);  // 200 sessions x 4 turns, none sent twice
  std::set<int> pids;
  for (const auto& [session, turns] : BySession(log)) {
    INFO(session);
    REQUIRE(turns.size() == 4);
    for (size_t t = 0; t < turns.size(); ++t) {
      CHECK(turns[t].at("turn") == int(t) + 1);         // in order
      CHECK(turns[t].at("pid") == turns[0].at("pid"));  // never another process
      CHECK(turns[t].at("known") == (t > 0));           // the process kept its state
      CHECK(turns[t].at("id") == session + "#" + std::to_string(t + 1));
      // The history holds the earlier questions and this pipeline's own answers to them.
      const json& history = turns[t].at("history");
      REQUIRE(history.size() == t);
      for (size_t h = 0; h < t; ++h) {
        const std::string q = session + " turn " + std::to_string(h + 1);
        CHECK(history[h] == json({{"question", q}, {"answer", q}}));
      }
    }
    pids.insert(turns[0].at("pid").get<int>());
  }
  CHECK(pids.size() == 8);  // sessions did run concurrently, on all eight workers

  const std::vector<json> journal = plumb_test::ReadJournal(dir + "/out/cases.jsonl");
  REQUIRE(journal.size() == 800);
  const json record = json::parse(run.out);
  CHECK(record.at("aggregates").at("metrics").at("correct").at("mean") == 1.0);
  const json& sessions = record.at("sessions");
  CHECK(sessions.at("count") == 200);
  CHECK(sessions.at("turns") == 800);
  CHECK(sessions.at("session_pass").at("mean") == 1.0);
  CHECK(sessions.at("restarts") == 0);
  // Each of the 8 workers' first call carries its start-up (a first_call, kept out of the
  // latency), and a worker's first call is always a first turn.
  CHECK(sessions.at("latency_first_turn").at("n") == 192);
  CHECK(sessions.at("latency_follow_up").at("n") == 600);
}

TEST_CASE("A worker that crashes mid-session runs that session again from turn 1, no other") {
  const std::string dir = plumb_test::MakeTempDir();
  plumb_test::WriteFile(
      dir + "/suite.yaml",
      Suite(dir, 20, 3, ", --crash-on, \"s7#2\", --crash-marker, " + dir + "/crashed"));
  const plumb_test::Result run = plumb_test::Plumb(
      {"run", dir + "/suite.yaml", "--out", dir + "/out", "--jobs", "4", "--json"}, dir);
  INFO(run.err);
  REQUIRE(run.code == 0);

  const auto sessions = BySession(ReadLog(dir + "/served.log"));
  for (const auto& [session, turns] : sessions) {
    INFO(session);
    if (session != "s7") {
      REQUIRE(turns.size() == 3);
      continue;
    }
    // s7: turn 1, turn 2 (the crash), turn 2 again (the adapter's one retry of a crashed
    // call, on the new process, which knows nothing of s7), then the whole session from turn 1
    // on that new process.
    REQUIRE(turns.size() == 6);
    CHECK(turns[0].at("pid") == turns[1].at("pid"));
    CHECK(turns[2].at("turn") == 2);
    CHECK(turns[2].at("known") == false);
    CHECK(turns[2].at("pid") != turns[0].at("pid"));
    for (size_t t = 3; t < 6; ++t) {
      CHECK(turns[t].at("turn") == int(t) - 2);
      CHECK(turns[t].at("pid") == turns[2].at("pid"));
      CHECK(turns[t].at("known") == (t > 3));
    }
  }
  const std::vector<json> journal = plumb_test::ReadJournal(dir + "/out/cases.jsonl");
  REQUIRE(journal.size() == 60);
  for (const json& r : journal) {
    const std::string id = r.at("id");
    INFO(id);
    CHECK(r.at("pass") == true);  // the rerun answered every turn with its state
    CHECK(r.value("session_restarts", 0) == (id.rfind("s7#", 0) == 0 ? 1 : 0));
  }
  CHECK(json::parse(run.out).at("sessions").at("restarts") == 1);
}

TEST_CASE("Resume runs a session that is not whole in the journal again from turn 1") {
  const std::string dir = plumb_test::MakeTempDir();
  plumb_test::WriteFile(dir + "/suite.yaml", Suite(dir, 6, 3));
  REQUIRE(plumb_test::Plumb({"run", dir + "/suite.yaml", "--out", dir + "/out"}, dir).code == 0);
  // An interrupted run: no run.json, and the journal's last session cut after its first turn.
  std::vector<json> journal = plumb_test::ReadJournal(dir + "/out/cases.jsonl");
  REQUIRE(journal.size() == 18);
  const std::string cut = journal[15].at("id");  // the first turn of the last session written
  REQUIRE(cut.substr(cut.size() - 2) == "#1");
  const std::string session = cut.substr(0, cut.size() - 2);
  std::string kept;
  for (size_t i = 0; i < 16; ++i) kept += journal[i].dump() + "\n";
  plumb_test::WriteFile(dir + "/out/cases.jsonl", kept);
  std::remove((dir + "/out/run.json").c_str());
  std::remove((dir + "/served.log").c_str());

  const plumb_test::Result resumed =
      plumb_test::Plumb({"run", dir + "/suite.yaml", "--out", dir + "/out", "--resume"}, dir);
  INFO(resumed.err);
  REQUIRE(resumed.code == 0);
  CHECK(resumed.err.find("session '" + session + "' (repeat 0) is not whole") != std::string::npos);
  const auto served = BySession(ReadLog(dir + "/served.log"));
  REQUIRE(served.size() == 1);  // only the cut session ran, all of it
  REQUIRE(served.at(session).size() == 3);
  CHECK(served.at(session)[0].at("turn") == 1);
  journal = plumb_test::ReadJournal(dir + "/out/cases.jsonl");
  CHECK(journal.size() == 18);
  std::set<std::string> ids;
  for (const json& r : journal) ids.insert(r.at("id").get<std::string>());
  CHECK(ids.size() == 18);  // every turn once
}

TEST_CASE("Shard and case selection take whole sessions") {
  const std::string dir = plumb_test::MakeTempDir();
  plumb_test::WriteFile(dir + "/suite.yaml", Suite(dir, 30, 3));
  std::map<std::string, std::set<int>> turns_by_session;
  size_t total = 0;
  for (int shard = 1; shard <= 3; ++shard) {
    const std::string out = dir + "/shard" + std::to_string(shard);
    const plumb_test::Result run = plumb_test::Plumb(
        {"run", dir + "/suite.yaml", "--out", out, "--shard", std::to_string(shard) + "/3"}, dir);
    INFO(run.err);
    REQUIRE(run.code == 0);
    std::set<std::string> here;
    for (const json& r : plumb_test::ReadJournal(out + "/cases.jsonl")) {
      const std::string id = r.at("id");
      const std::string session = id.substr(0, id.find('#'));
      here.insert(session);
      turns_by_session[session].insert(std::stoi(id.substr(id.find('#') + 1)));
      ++total;
    }
    CHECK(!here.empty());
  }
  CHECK(total == 90);  // every turn in exactly one shard ...
  CHECK(turns_by_session.size() == 30);
  for (const auto& [session, turns] : turns_by_session) CHECK(turns.size() == 3);  // ... whole
  const plumb_test::Result merged = plumb_test::Plumb(
      {"merge", dir + "/shard1", dir + "/shard2", dir + "/shard3", "--out", dir + "/merged"}, dir);
  INFO(merged.err);
  CHECK(merged.code == 0);
  // The merged run knows its sessions from the turn ids alone.
  const json merged_record = json::parse(plumb_test::ReadFile(dir + "/merged/run.json"));
  CHECK(merged_record.at("sessions").at("count") == 30);
  CHECK(merged_record.at("sessions").at("turns") == 90);

  // A glob on a session id, or on one of its turn ids, takes the whole session.
  for (const std::string glob : {"s12", "s12#2"}) {
    const plumb_test::Result run = plumb_test::Plumb(
        {"run", dir + "/suite.yaml", "--out", dir + "/one", "--overwrite", "--case", glob}, dir);
    REQUIRE(run.code == 0);
    std::vector<std::string> ids;
    for (const json& r : plumb_test::ReadJournal(dir + "/one/cases.jsonl")) ids.push_back(r["id"]);
    CHECK(ids == std::vector<std::string>{"s12#1", "s12#2", "s12#3"});
  }
}

TEST_CASE("A session's turns are checked like cases, each problem at its line and column") {
  const std::string dir = plumb_test::MakeTempDir();
  plumb_test::WriteFile(dir + "/suite.yaml",
                        "plumb: 1\n"
                        "name: bad-sessions\n"
                        "cases:\n"
                        "  - id: fares\n"
                        "    answers: [\"x\"]\n"
                        "    turns:\n"
                        "      - {question: \"How much is a ticket?\", answers: [\"4 euros\"]}\n"
                        "      - {question: \"And for a car?\", anwsers: [\"12 euros\"]}\n"
                        "      - {answers: [\"yes\"]}\n"
                        "  - id: fares\n"
                        "    question: \"again?\"\n"
                        "    answers: [\"no\"]\n");
  const plumb_test::Result check = plumb_test::Plumb({"check", dir + "/suite.yaml"}, dir);
  CHECK(check.code == 2);
  const std::string file = dir + "/suite.yaml";
  CHECK(check.err.find(file + ":5:5: error: 'answers' goes in each turn of session 'fares'") !=
        std::string::npos);
  CHECK(check.err.find(file + ":8:38: error: unknown key 'anwsers' in a turn; did you mean "
                              "'answers'?") != std::string::npos);
  CHECK(check.err.find(file + ":8:9: error: turn 2 of session 'fares' has no 'answers'") !=
        std::string::npos);
  CHECK(check.err.find(file + ":9:9: error: turn 3 of session 'fares' has no 'question'") !=
        std::string::npos);
  CHECK(check.err.find("session 'fares' has the id of a case") != std::string::npos);
}
