// `plumb run` and `plumb score` end to end, as a user runs them: the real executable, real
// pipeline processes (fixtures/test-pipelines) and the exit codes of SPEC §8. A pipeline that
// crashes, hangs, prints garbage or floods its output costs one case each, never the run.
#include <sched.h>
#include <signal.h>
#include <sys/stat.h>

#include <catch2/catch.hpp>
#include <chrono>
#include <nlohmann/json.hpp>
#include <set>
#include <string>
#include <thread>
#include <vector>

#include "tests/support/plumb_process.h"

using namespace plumb_test;

namespace {

/// 20 cases whose gold answer is the question itself (the fixtures echo it back), four of which
/// carry the word that makes one fault pipeline misbehave.
std::string EchoCases(int n, const std::vector<std::string>& special) {
  std::string yaml = "cases:\n";
  for (int i = 0; i < n; ++i) {
    const std::string q = i < static_cast<int>(special.size()) ? special[static_cast<size_t>(i)]
                                                               : "question " + std::to_string(i);
    yaml +=
        "  - {id: c" + std::to_string(i) + ", question: \"" + q + "\", answers: [\"" + q + "\"]}\n";
  }
  return yaml;
}

}  // namespace

TEST_CASE("each misbehaving pipeline costs exactly one case and the run goes on") {
  const std::string dir = MakeTempDir();
  const std::vector<std::string> special = {"please crash", "please hang", "garbage please",
                                            "flood-stdout now"};
  WriteFile(dir + "/faults.yaml",
            "plumb: 1\nname: faults\nmax_error_rate: 0.1\npipelines:\n"
            "  crash: {command: [" +
                kFixtures +
                "crash-pipeline], timeout: 5s}\n"
                "  hang: {command: [" +
                kFixtures +
                "hang-pipeline], timeout: 500ms}\n"
                "  garbage: {command: [" +
                kFixtures +
                "garbage-pipeline], timeout: 5s}\n"
                "  flood: {command: [" +
                kFixtures +
                "flood-pipeline], timeout: 20s,"
                " max_response_bytes: 1MiB}\n" +
                EchoCases(20, special));
  const Result r =
      Plumb({"run", dir + "/faults.yaml", "--pipeline", "crash", "--pipeline", "hang", "--pipeline",
             "garbage", "--pipeline", "flood", "--out", dir + "/out", "--json"},
            dir);
  INFO(r.err);
  // 1 error in 20 is 5%, within max_error_rate 0.1, and no floors: exit 0 (SPEC §8).
  CHECK(r.code == 0);
  const nlohmann::json summary = nlohmann::json::parse(r.out);
  REQUIRE(summary["runs"].size() == 4);

  const std::vector<std::pair<std::string, std::string>> expected = {
      {"crash", "exited with status 3"},
      {"hang", "timed out after"},
      {"garbage", "response is not valid JSON"},
      {"flood", "exceeded"}};
  for (size_t i = 0; i < expected.size(); ++i) {
    const auto& [name, reason] = expected[i];
    INFO(name);
    const std::vector<nlohmann::json> records = ReadJournal(dir + "/out/" + name + "/cases.jsonl");
    REQUIRE(records.size() == 20);
    int errors = 0;
    for (const nlohmann::json& rec : records) {
      if (rec["error"].is_null()) {
        CHECK(rec["scores"]["exact_match"] == 1.0);
        continue;
      }
      ++errors;
      CHECK(rec["id"] == "c" + std::to_string(i));
      CHECK(rec["error"]["reason"].get<std::string>().find(reason) != std::string::npos);
      CHECK(rec["scores"]["correct"] == 0.0);
    }
    CHECK(errors == 1);
    const nlohmann::json run = nlohmann::json::parse(ReadFile(dir + "/out/" + name + "/run.json"));
    CHECK(run["aggregates"]["errored"] == 1);
    CHECK(run["aggregates"]["metrics"]["correct"]["mean"] == Approx(19.0 / 20));
  }
}

TEST_CASE("exit codes follow SPEC §8") {
  const std::string dir = MakeTempDir();
  const std::string header = "plumb: 1\nname: codes\n";
  const std::string crash = "  crash: {command: [" + kFixtures + "crash-pipeline], timeout: 5s}\n";

  SECTION("3 when case errors exceed max_error_rate") {
    WriteFile(dir + "/s.yaml", header + "max_error_rate: 0.01\npipelines:\n" + crash +
                                   EchoCases(20, {"please crash"}));
    const Result r = Plumb({"run", dir + "/s.yaml", "--out", dir + "/out"}, dir);
    CHECK(r.code == 3);
    CHECK(r.out.find("exit 3: 1 of 20 items errored (5.0%), above max_error_rate 1.0%") !=
          std::string::npos);
  }
  SECTION("3 when every case errored") {
    WriteFile(dir + "/s.yaml",
              header + "pipelines:\n  f: {command: [false], mode: per-case}\n" + EchoCases(5, {}));
    const Result r = Plumb({"run", dir + "/s.yaml", "--out", dir + "/out"}, dir);
    CHECK(r.code == 3);
    const std::vector<nlohmann::json> records = ReadJournal(dir + "/out/cases.jsonl");
    REQUIRE(records.size() == 5);
    CHECK(records[0]["error"]["reason"] == "process exited with status 1");
  }
  SECTION("1 when a floor breaks and 0 when it holds") {
    // 19 of 20 cases are answered right: correct = 0.95.
    WriteFile(dir + "/hi.yaml", header + "max_error_rate: 0.1\nfloors: {correct: 0.96}\n" +
                                    "pipelines:\n" + crash + EchoCases(20, {"please crash"}));
    Result r = Plumb({"run", dir + "/hi.yaml", "--out", dir + "/hi"}, dir);
    CHECK(r.code == 1);
    CHECK(r.out.find("exit 1: 1 floor broken: correct 0.95 < 0.96") != std::string::npos);
    WriteFile(dir + "/lo.yaml", header + "max_error_rate: 0.1\nfloors: {correct: 0.95}\n" +
                                    "pipelines:\n" + crash + EchoCases(20, {"please crash"}));
    r = Plumb({"run", dir + "/lo.yaml", "--out", dir + "/lo"}, dir);
    CHECK(r.code == 0);
  }
  SECTION("2 for a suite error or an unknown pipeline, with nothing run") {
    WriteFile(dir + "/bad.yaml", header + "anwsers: 1\n" + EchoCases(1, {}));
    Result r = Plumb({"run", dir + "/bad.yaml", "--out", dir + "/bad"}, dir);
    CHECK(r.code == 2);
    CHECK(r.err.find("bad.yaml:3:1: error: unknown key 'anwsers'") != std::string::npos);
    WriteFile(dir + "/ok.yaml", header + "pipelines:\n" + crash + EchoCases(1, {}));
    r = Plumb({"run", dir + "/ok.yaml", "--pipeline", "nope", "--out", dir + "/ok"}, dir);
    CHECK(r.code == 2);
    CHECK(r.err.find("no such pipeline") != std::string::npos);
    struct stat st {};
    CHECK(stat((dir + "/ok").c_str(), &st) != 0);  // nothing was run, nothing was written
  }
}

TEST_CASE("SIGINT exits 130 with the journal intact and --resume finishes the run") {
  const std::string dir = MakeTempDir();
  // Case c5 hangs for a minute: the run is stuck there when the interrupt comes.
  std::vector<std::string> special = {"q0", "q1", "q2", "q3", "q4", "please hang"};
  // The program comes from a variable, so the resumed run (the same config as written, which
  // --resume requires) can answer c5 instead of hanging again.
  setenv("PLUMB_TEST_RESUME_PROGRAM", (kFixtures + "hang-pipeline").c_str(), 1);
  WriteFile(
      dir + "/s.yaml",
      "plumb: 1\nname: resume\npipelines:\n  p: {command: [\"${PLUMB_TEST_RESUME_PROGRAM}\"], "
      "timeout: 60s}\n" +
          EchoCases(30, special));
  Process p = Start({"run", dir + "/s.yaml", "--out", dir + "/out", "--jobs", "1"}, dir);
  const std::string journal = dir + "/out/cases.jsonl";
  for (int i = 0; i < 200 && ReadJournal(journal).size() < 5; ++i) {
    std::this_thread::sleep_for(std::chrono::milliseconds(50));
  }
  std::this_thread::sleep_for(std::chrono::milliseconds(200));
  REQUIRE(kill(p.pid, SIGINT) == 0);
  CHECK(Wait(p) == 130);
  CHECK(ReadJournal(journal).size() == 5);  // c0..c4; the interrupted c5 is not journaled
  struct stat st {};
  CHECK(stat((dir + "/out/run.json").c_str(), &st) != 0);

  // Resume with a program that answers everything: only c5..c29 are sent.
  setenv("PLUMB_TEST_RESUME_PROGRAM", (kFixtures + "echo-pipeline").c_str(), 1);
  const Result r = Plumb({"run", dir + "/s.yaml", "--out", dir + "/out", "--resume"}, dir);
  INFO(r.err);
  CHECK(r.code == 0);
  const std::vector<nlohmann::json> records = ReadJournal(journal);
  REQUIRE(records.size() == 30);
  std::set<std::string> ids;
  for (const nlohmann::json& rec : records) ids.insert(rec["id"].get<std::string>());
  CHECK(ids.size() == 30);
  const nlohmann::json run = nlohmann::json::parse(ReadFile(dir + "/out/run.json"));
  CHECK(run["aggregates"]["cases"] == 30);
  CHECK(run["resumed"] == true);
}

TEST_CASE("plumb score scores recorded replies with SQuAD EM and F1") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/s.yaml",
            "plumb: 1\nname: recorded\ncases:\n"
            "  - {id: a, question: 'How long?', answers: [ten minutes]}\n"
            "  - {id: b, question: 'Which car?', answers: [the blue car]}\n"
            "  - {id: c, question: 'Who is the captain?', answers: []}\n");
  WriteFile(dir + "/pred.jsonl",
            "{\"id\": \"a\", \"answer\": \"Ten minutes.\"}\n"
            "{\"id\": \"b\", \"answer\": \"blue car park\"}\n"
            "{\"id\": \"c\", \"answer\": null}\n");
  const Result r = Plumb({"score", dir + "/s.yaml", dir + "/pred.jsonl", "--json"}, dir);
  INFO(r.err);
  REQUIRE(r.code == 0);
  const nlohmann::json m = nlohmann::json::parse(r.out)["aggregates"]["metrics"];
  // The record's layout: indented, but each case entry on one line (README, Run directory).
  CHECK(r.out.find("\n  \"aggregates\": {\n    \"cases\": 3,\n") != std::string::npos);
  CHECK(r.out.find("\n    \"latency_ms\": {\n      \"at_least\": [],\n      \"lower_bounds\": 0,\n"
                   "      \"max\": ") != std::string::npos);
  CHECK(r.out.find("\n    \"a\": {\"gold_hash\":\"") != std::string::npos);
  CHECK(r.out.find("\"answers\":[\"ten minutes\"],\"patterns\":[],\"tags\":[],"
                   "\"sources\":[],\"line\":4,\"index\":0},\n    \"b\": {") != std::string::npos);
  // Worked by hand with SQuAD's normalize_answer and f1_score (Rajpurkar et al. 2016):
  //   a: "ten minutes" == "ten minutes": EM 1, F1 1.
  //   b: [blue car park] vs [blue car] ("the" removed): EM 0; P = 2/3, R = 1, F1 = 0.8.
  //   c: abstention case, the reply abstained: EM 1, F1 1 (SPEC §6.2).
  CHECK(m["exact_match"]["mean"] == Approx(2.0 / 3));
  CHECK(m["token_f1"]["mean"] == Approx((1 + 0.8 + 1) / 3));
  CHECK(m["abstain_recall"]["mean"] == 1.0);
}

TEST_CASE("plumb score names the file line and column of a bad prediction") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/s.yaml",
            "plumb: 1\nname: recorded\ncases:\n"
            "  - {id: a, question: 'How long?', answers: [ten minutes]}\n");
  WriteFile(dir + "/pred.jsonl", "{\"id\": \"a\", \"answer\": \"x\"}\n{\"id\": \"b\", oops}\n");
  const Result r = Plumb({"score", dir + "/s.yaml", dir + "/pred.jsonl"}, dir);
  CHECK(r.code == 2);
  CHECK(r.err.find("pred.jsonl:2:13: error: not valid JSON") != std::string::npos);
  CHECK(r.err.find("nothing was scored") != std::string::npos);
}

TEST_CASE("plumb score with a bad predictions file leaves the earlier run as it was") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/s.yaml",
            "plumb: 1\nname: recorded\ncases:\n"
            "  - {id: a, question: 'How long?', answers: [ten minutes]}\n"
            "  - {id: b, question: 'Which car?', answers: [the blue car]}\n"
            "  - {id: c, question: 'Which deck?', answers: [deck two]}\n");
  // A good file first: b has two repeats, c none (one errored item), z is not in the suite.
  WriteFile(dir + "/good.jsonl",
            "{\"id\": \"b\", \"answer\": \"blue car\", \"repeat\": 1}\n"
            "{\"id\": \"a\", \"answer\": \"ten minutes\", \"latency_ms\": 12.5}\n"
            "{\"id\": \"z\", \"answer\": \"?\"}\n"
            "{\"id\": \"b\", \"answer\": \"the car\"}\n");
  const Result good =
      Plumb({"score", dir + "/s.yaml", dir + "/good.jsonl", "--out", dir + "/out"}, dir);
  INFO(good.err);
  CHECK(good.code == 3);  // one errored item of four is over the default max_error_rate
  CHECK(good.err.find("good.jsonl:3: warning: prediction for 'z'") != std::string::npos);
  const std::string journal = ReadFile(dir + "/out/cases.jsonl");
  const std::string record = ReadFile(dir + "/out/run.json");
  std::vector<std::string> items;
  double latency_a = -1;
  for (const nlohmann::json& rec : ReadJournal(dir + "/out/cases.jsonl")) {
    items.push_back(rec["id"].get<std::string>() + std::to_string(rec["repeat"].get<int>()));
    if (rec["id"] == "a") latency_a = rec["latency_ms"].get<double>();
    if (rec["id"] == "c")
      CHECK(rec["error"]["reason"].get<std::string>().find("no prediction") == 0);
  }
  // File order, then the cases that had no reply.
  CHECK(items == std::vector<std::string>{"b1", "a0", "b0", "c0"});
  CHECK(latency_a == 12.5);
  const nlohmann::json run = nlohmann::json::parse(record);
  CHECK(run["repeat"] == 2);
  CHECK(run["aggregates"]["items"] == 4);
  CHECK(run["aggregates"]["errored"] == 1);
  // Per case, each metric is first averaged over the repeats (SPEC 6.6), by hand with SQuAD's
  // normalize_answer and f1_score: a "ten minutes" F1 1; b repeat 1 "blue car" vs "blue car"
  // F1 1, repeat 0 "car" vs "blue car" P 1 R 1/2 F1 2/3, mean 5/6; c errored, F1 0.
  CHECK(run["aggregates"]["metrics"]["token_f1"]["mean"] == Approx((1 + 5.0 / 6 + 0) / 3));
  CHECK(run["aggregates"]["metrics"]["exact_match"]["mean"] == Approx((1 + 0.5 + 0) / 3));
  CHECK(run["aggregates"]["unstable_cases"] == nlohmann::json::array({"b"}));

  // Then a file with a duplicate and a bad repeat: nothing is scored, the run above stays.
  WriteFile(dir + "/bad.jsonl",
            "{\"id\": \"a\", \"answer\": \"x\"}\n"
            "{\"id\": \"a\", \"answer\": \"y\"}\n"
            "{\"id\": \"b\", \"answer\": \"y\", \"repeat\": -1}\n");
  const Result bad =
      Plumb({"score", dir + "/s.yaml", dir + "/bad.jsonl", "--out", dir + "/out"}, dir);
  CHECK(bad.code == 2);
  CHECK(bad.err.find("bad.jsonl:2:1: error: a second prediction for case 'a' repeat 0") !=
        std::string::npos);
  CHECK(bad.err.find("bad.jsonl:3:1: error: \"repeat\" must be an integer") != std::string::npos);
  CHECK(bad.err.find("2 problems in") != std::string::npos);
  CHECK(ReadFile(dir + "/out/cases.jsonl") == journal);
  CHECK(ReadFile(dir + "/out/run.json") == record);
  std::string files;
  FILE* ls = popen(("ls -A " + dir + "/out").c_str(), "r");
  REQUIRE(ls != nullptr);
  char buffer[256];
  while (std::fgets(buffer, sizeof buffer, ls) != nullptr) files += buffer;
  pclose(ls);
  CHECK(files == "cases.jsonl\nrun.json\n");  // no pending journal left behind
}

TEST_CASE("plumb score keeps file order when the replies are scored in blocks on several threads") {
  // 6,000 cases and replies of about 1 KiB: many blocks of the reader (256 KiB each) and, with two
  // or more CPUs, several chunks per block. Replies come in reverse suite order; even cases are
  // answered with their gold answer, odd ones with a wrong word.
  const int n = 6000;
  const std::string dir = MakeTempDir();
  std::string cases;
  for (int i = 0; i < n; ++i) {
    cases += "{\"id\": \"c" + std::to_string(i) + "\", \"question\": \"q\", \"answers\": [\"w" +
             std::to_string(i) + "\"]}\n";
  }
  WriteFile(dir + "/cases.jsonl", cases);
  WriteFile(dir + "/s.yaml", "plumb: 1\nname: blocks\ninclude: [cases.jsonl]\ncases: []\n");
  const std::string padding(1000, 'p');
  auto reply = [&](int i) {
    const std::string answer = i % 2 == 0 ? "w" + std::to_string(i) : "wrong";
    return "{\"id\": \"c" + std::to_string(i) + "\", \"answer\": \"" + answer + "\", \"note\": \"" +
           padding + "\"}\n";
  };
  std::string good;
  for (int i = n - 1; i >= 0; --i) good += reply(i);
  REQUIRE(good.size() > (4u << 20));
  WriteFile(dir + "/good.jsonl", good);
  const Result r =
      Plumb({"score", dir + "/s.yaml", dir + "/good.jsonl", "--out", dir + "/out"}, dir);
  INFO(r.err);
  REQUIRE(r.code == 0);  // no floors, so none to break
  std::vector<nlohmann::json> records = ReadJournal(dir + "/out/cases.jsonl");
  REQUIRE(records.size() == static_cast<size_t>(n));
  bool in_file_order = true;
  for (int k = 0; k < n; ++k) {
    in_file_order =
        in_file_order && records[static_cast<size_t>(k)]["id"] == "c" + std::to_string(n - 1 - k);
  }
  CHECK(in_file_order);
  const nlohmann::json run = nlohmann::json::parse(ReadFile(dir + "/out/run.json"));
  // Half the cases answered exactly (SQuAD EM 1), half with a word not in the gold (EM 0, F1 0).
  CHECK(run["aggregates"]["metrics"]["exact_match"]["mean"] == 0.5);
  CHECK(run["aggregates"]["metrics"]["token_f1"]["mean"] == 0.5);
  CHECK(run["aggregates"]["items"] == n);

  // Problems in the first block, at its middle, and in the second block, plus a duplicate whose
  // first line is in the first block: all reported, in line order, and nothing is scored.
  std::vector<std::string> lines;
  for (int i = 0; i < n; ++i) lines.push_back(reply(i));
  lines[10] = "not json\n";
  lines[3000] = "{\"answer\": \"no id\"}\n";
  lines[5990] = reply(20);
  std::string bad;
  for (const std::string& line : lines) bad += line;
  WriteFile(dir + "/bad.jsonl", bad);
  const Result b =
      Plumb({"score", dir + "/s.yaml", dir + "/bad.jsonl", "--out", dir + "/out2"}, dir);
  CHECK(b.code == 2);
  const size_t first = b.err.find("bad.jsonl:11:2: error: not valid JSON");
  const size_t second = b.err.find("bad.jsonl:3001:1: error: a prediction must be a JSON object");
  const size_t third = b.err.find("bad.jsonl:5991:1: error: a second prediction for case 'c20'");
  CHECK(first != std::string::npos);
  CHECK(second != std::string::npos);
  CHECK(third != std::string::npos);
  CHECK(first < second);
  CHECK(second < third);
  CHECK(b.err.find("3 problems in") != std::string::npos);
}

TEST_CASE("plumb score writes the same run on one CPU as on all of them") {
  // Loading, hashing and scoring are split over the CPUs the process may use (its affinity,
  // which a child inherits); the run must not depend on how many. 6,000 cases: several chunks.
  const int n = 6000;
  const std::string dir = MakeTempDir();
  std::string cases, replies;
  for (int i = 0; i < n; ++i) {
    const std::string id = "c" + std::to_string(i);
    cases += "{\"id\": \"" + id + "\", \"question\": \"q\", \"answers\": [\"w" + std::to_string(i) +
             " x\"], \"tags\": [\"t" + std::to_string(i % 3) + "\"]}\n";
    replies += "{\"id\": \"" + id + "\", \"answer\": \"w" + std::to_string(i % 7 == 0 ? i : i + 1) +
               (i % 5 == 0 ? "\", \"citations\": []}\n" : "\"}\n");
  }
  WriteFile(dir + "/cases.jsonl", cases);
  WriteFile(dir + "/pred.jsonl", replies);
  WriteFile(dir + "/s.yaml", "plumb: 1\nname: cpus\ninclude: [cases.jsonl]\ncases: []\n");
  cpu_set_t all;
  REQUIRE(sched_getaffinity(0, sizeof all, &all) == 0);
  cpu_set_t one;
  CPU_ZERO(&one);
  for (int cpu = 0; cpu < CPU_SETSIZE; ++cpu) {
    if (CPU_ISSET(cpu, &all)) {
      CPU_SET(cpu, &one);
      break;
    }
  }
  REQUIRE(sched_setaffinity(0, sizeof one, &one) == 0);
  const Result single =
      Plumb({"score", dir + "/s.yaml", dir + "/pred.jsonl", "--out", dir + "/one"}, dir);
  REQUIRE(sched_setaffinity(0, sizeof all, &all) == 0);
  const Result many =
      Plumb({"score", dir + "/s.yaml", dir + "/pred.jsonl", "--out", dir + "/all"}, dir);
  INFO(single.err << many.err);
  REQUIRE(single.code == many.code);
  CHECK(ReadFile(dir + "/one/cases.jsonl") == ReadFile(dir + "/all/cases.jsonl"));
  nlohmann::json a = nlohmann::json::parse(ReadFile(dir + "/one/run.json"));
  nlohmann::json b = nlohmann::json::parse(ReadFile(dir + "/all/run.json"));
  for (nlohmann::json* run : {&a, &b}) {
    run->erase("started_at");
    run->erase("finished_at");
  }
  CHECK(a == b);
  CHECK(a["aggregates"]["items"] == n);
}

// Issue 17 item 5: `run --pipeline preload` exited 2 on a `${VAR}` that only the unselected
// pipeline used. Variables are read and required only for the pipelines a run starts.
TEST_CASE("an unset variable of a pipeline the run does not start does not block the run") {
  unsetenv("PLUMB_TEST_UNSELECTED_TOKEN");
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/s.yaml",
            "plumb: 1\nname: pick\npipelines:\n"
            "  service:\n"
            "    url: \"http://127.0.0.1:9/answer?key=${PLUMB_TEST_UNSELECTED_TOKEN}\"\n"
            "    headers: {Authorization: \"Bearer ${PLUMB_TEST_UNSELECTED_TOKEN}\"}\n"
            "  remote: {url: \"${PLUMB_TEST_UNSELECTED_TOKEN}\"}\n"
            "  preload: {command: [" +
                kFixtures + "echo-pipeline], env: {K: \"${PLUMB_TEST_UNSELECTED_TOKEN}x\"}}\n" +
                EchoCases(3, {}));
  Result r = Plumb({"run", dir + "/s.yaml", "--pipeline", "preload", "--out", dir + "/p"}, dir);
  // preload uses the variable too: it is required there, at its line and column.
  CHECK(r.code == 2);
  CHECK(r.err.find("s.yaml:8:") != std::string::npos);
  CHECK(r.err.find("error: environment variable 'PLUMB_TEST_UNSELECTED_TOKEN' is not set (in "
                   "'env.K')") != std::string::npos);
  CHECK(r.err.find("s.yaml:5:") == std::string::npos);  // service's use is not reported

  WriteFile(dir + "/s.yaml",
            "plumb: 1\nname: pick\npipelines:\n"
            "  service:\n"
            "    url: \"http://127.0.0.1:9/answer?key=${PLUMB_TEST_UNSELECTED_TOKEN}\"\n"
            "    headers: {Authorization: \"Bearer ${PLUMB_TEST_UNSELECTED_TOKEN}\"}\n"
            "  remote: {url: \"${PLUMB_TEST_UNSELECTED_TOKEN}\"}\n"
            "  preload: {command: [" +
                kFixtures + "echo-pipeline]}\n" + EchoCases(3, {}));
  r = Plumb({"run", dir + "/s.yaml", "--pipeline", "preload", "--out", dir + "/p"}, dir);
  INFO(r.err);
  CHECK(r.code == 0);
  CHECK(ReadJournal(dir + "/p/cases.jsonl").size() == 3);

  // Without --pipeline the first one runs, and its variable is required.
  r = Plumb({"run", dir + "/s.yaml", "--out", dir + "/first"}, dir);
  CHECK(r.code == 2);
  CHECK(r.err.find("s.yaml:5:10: error: environment variable 'PLUMB_TEST_UNSELECTED_TOKEN' is "
                   "not set (in 'url')") != std::string::npos);
  CHECK(r.err.find("s.yaml:7:") == std::string::npos);  // not 'remote', which is not run
}
