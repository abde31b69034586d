// An HTTP grader as a user points one at a model served on their own machine: a real loopback
// service in the common chat-completion reply shape (fixtures/chat-service) answers each grader
// request in free text ("... VERDICT: PASS"); the grader pipeline's `request:` block sends the
// rubric, the question, the gold answers and the answer as chat messages, its `reply:` block
// takes the message content, and the grader's verdict_pattern takes the verdict out of it. The
// pipeline under test is echo-pipeline (it answers each question with the question itself),
// so the answers below are the questions. The service logs every request body it received.

#include <catch2/catch.hpp>
#include <fstream>
#include <map>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "tests/support/loopback_service.h"
#include "tests/support/plumb_process.h"

using nlohmann::json;
using namespace plumb_test;

namespace {

// The service's answers, keyed by the last message's content: the answer under grading.
// "Boarding does not close ten minutes early" is not in it, so the service says "I don't
// know.", in which the pattern finds no verdict: that grade fails, the others stand.
const char kVerdicts[] = R"({
  "Boarding closes ten minutes before departure": {
    "content": "The answer gives the gold time of ten minutes.\nVERDICT: PASS"},
  "Boarding closes at noon": {
    "content": "Noon is not what the handbook says.\nverdict: fail"}
})";

std::string Suite(const std::string& dir, const std::string& port) {
  WriteFile(dir + "/rubric.md", "Pass an answer that states a gold answer.\n");
  return "plumb: 1\nname: http-graded\n"
         "graders:\n"
         "  correctness:\n"
         "    pipeline: local-model\n"
         "    rubric: rubric.md\n"
         "    scale: pass-fail\n"
         "    verdict_pattern: '(?i)verdict:\\s*(pass|fail)'\n"
         "pipelines:\n"
         "  echo: {command: [" +
         kFixtures +
         "echo-pipeline]}\n"
         "  local-model:\n"
         "    url: http://127.0.0.1:" +
         port +
         "/v1/chat/completions\n"
         "    request:\n"
         "      model: local-judge\n"
         "      messages:\n"
         "        - {role: system, content: !case rubric}\n"
         "        - {role: user, content: !text [\"Question: \", !case question, "
         "\"\\nGold answers: \", !case gold]}\n"
         "        - {role: user, content: !case answer}\n"
         "    reply: {answer: /choices/0/message/content}\n"
         "    jobs: 2\n"
         "    timeout: 10s\n"
         "cases:\n"
         "  - {id: hit, question: 'Boarding closes ten minutes before departure', answers: [10 "
         "minutes]}\n"
         "  - {id: miss, question: 'Boarding closes at noon', answers: [10 minutes]}\n"
         "  - {id: unsure, question: 'Boarding does not close ten minutes early', answers: [10 "
         "minutes]}\n";
}

std::vector<json> LogBodies(const std::string& path) {
  std::vector<json> bodies;
  std::ifstream in(path);
  for (std::string line; std::getline(in, line);) bodies.push_back(json::parse(line));
  return bodies;
}

}  // namespace

TEST_CASE("an HTTP grader in the chat-completion shape grades from free text through its reply") {
  const std::string dir = MakeTempDir();
  WriteFile(dir + "/verdicts.json", kVerdicts);
  LoopbackService service("chat-service",
                          {"--answers", dir + "/verdicts.json", "--log", dir + "/requests.log"});
  WriteFile(dir + "/s.yaml", Suite(dir, service.port()));
  const std::vector<std::string> args = {"run",           dir + "/s.yaml",  "--out",
                                         dir + "/out",    "--overwrite",    "--json",
                                         "--grade-cache", dir + "/g.sqlite"};
  Result r = Plumb(args, dir);
  INFO(r.err);
  REQUIRE(r.code == 0);
  json run = json::parse(r.out);
  // hit passes, miss fails, unsure has no verdict: grade.correctness is 1 and 0 over 2 cases.
  CHECK(run["aggregates"]["metrics"]["grade.correctness"]["mean"] == 0.5);
  CHECK(run["aggregates"]["metrics"]["grade.correctness"]["n"] == 2);
  CHECK(run["grading"]["graders"]["correctness"]["graded"] == 2);
  CHECK(run["grading"]["graders"]["correctness"]["failed"] == 1);
  CHECK(run["grading"]["requested"] == 3);

  std::map<std::string, json> by_id;
  for (const json& record : ReadJournal(dir + "/out/cases.jsonl")) by_id[record["id"]] = record;
  CHECK(by_id["hit"]["grades"]["correctness"]["reason"] ==
        "The answer gives the gold time of ten minutes.\nVERDICT: PASS");
  CHECK(by_id["miss"]["scores"]["grade.correctness"] == 0.0);
  CHECK(by_id["unsure"]["scores"].count("grade.correctness") == 0);
  CHECK(by_id["unsure"]["grades"]["correctness"]["error"] ==
        "verdict_pattern found nothing in the reply 'I don't know.'");

  // What the service received: the request block rendered with the grader request's fields.
  std::vector<json> bodies = LogBodies(dir + "/requests.log");
  REQUIRE(bodies.size() == 3);
  json hit;
  for (const json& body : bodies) {
    if (body["messages"][2]["content"] == "Boarding closes ten minutes before departure") {
      hit = body;
    }
  }
  REQUIRE(hit.is_object());
  CHECK(hit["model"] == "local-judge");
  CHECK(hit["messages"][0] ==
        json({{"role", "system"}, {"content", "Pass an answer that states a gold answer.\n"}}));
  CHECK(hit["messages"][1]["content"] ==
        "Question: Boarding closes ten minutes before departure\nGold answers: [\"10 minutes\"]");

  // Again: the two grades given come from the cache; only the failed one is asked again.
  r = Plumb(args, dir);
  REQUIRE(r.code == 0);
  run = json::parse(r.out);
  CHECK(run["grading"]["from_cache"] == 2);
  CHECK(run["grading"]["requested"] == 1);
  CHECK(LogBodies(dir + "/requests.log").size() == 4);
}
