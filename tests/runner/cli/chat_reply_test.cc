// A service in the common chat-completion reply shape (fixtures/chat-service: the answer nested
// at /choices/0/message/content, refusals as text or a `refusal` string, citations and the
// retrieved list under key names of their own, prompt_tokens/completion_tokens) scored by
// `plumb run` with no change to the service: a `request:` block speaks its request shape and a
// `reply:` block reads its replies. Every expected figure is counted by hand from the answers
// file and the document below (offsets are code points, checked by the loader's quotes).

#include <catch2/catch.hpp>
#include <filesystem>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "tests/support/loopback_service.h"
#include "tests/support/plumb_process.h"

using nlohmann::json;
using plumb_test::LoopbackService;

namespace {

// Line starts in harbour.md: [0, 34) the office, [35, 67) the gate, [68, 106) bicycles.
const char kDoc[] =
    "The harbour office opens at 07:00.\n"
    "Foot passengers board at gate B.\n"
    "Bicycles travel free on every sailing.\n";

const char kAnswers[] = R"({
  "When does the harbour office open?": {
    "content": "07:00",
    "citations": [{"source": "harbour.md", "from": 0, "to": 34}],
    "chunks": [{"document": {"path": "harbour.md"}, "offset": 0, "end": 34},
               {"document": {"path": "harbour.md"}, "offset": 35, "end": 67}]},
  "Which gate do foot passengers use?": {
    "content": "gate B",
    "citations": [{"source": "harbour.md", "from": 35, "to": 67}],
    "chunks": [{"document": {"path": "harbour.md"}, "offset": 68, "end": 106},
               {"document": {"path": "harbour.md"}, "offset": 35, "end": 67}]},
  "Can I take my car?": {
    "content": "Please call the vehicle desk.",
    "refusal": "I can't answer questions about vehicles."}
})";

std::string Suite(const std::string& port, const std::string& reply) {
  return "plumb: 1\nname: chat-shape\ncorpus: docs\nretrieval_k: [1, 3]\n"
         "pipelines:\n"
         "  chat:\n"
         "    url: http://127.0.0.1:" +
         port +
         "/v1/chat/completions\n"
         "    request:\n"
         "      model: ferry-notes\n"
         "      messages:\n"
         "        - {role: system, content: Answer from the harbour notes.}\n"
         "        - {role: user, content: !case question}\n" +
         reply +
         "    timeout: 10s\n"
         "cases:\n"
         "  - id: office-hours\n"
         "    question: When does the harbour office open?\n"
         "    answers: [\"07:00\"]\n"
         "    sources: [{doc: harbour.md, quote: The harbour office opens at 07:00.}]\n"
         "  - id: boarding-gate\n"
         "    question: Which gate do foot passengers use?\n"
         "    answers: [gate B]\n"
         "    sources: [{doc: harbour.md, quote: Foot passengers board at gate B.}]\n"
         "  - {id: parrot, question: \"May I bring a parrot?\", answers: []}\n"
         "  - {id: car, question: \"Can I take my car?\", answers: []}\n";
}

const char kReply[] =
    "    reply:\n"
    "      answer: /choices/0/message/content\n"
    "      refusal: /choices/0/message/refusal\n"
    "      abstain_when: '(?i)\\bI (do not|don''t) know\\b'\n"
    "      input_tokens: /usage/prompt_tokens\n"
    "      output_tokens: /usage/completion_tokens\n"
    "      latency_ms: /timing/total_ms\n"
    "      citations: {at: /choices/0/message/context/citations, doc: source, start: from,"
    " end: to}\n"
    "      retrieved: {at: /retrieval/chunks, doc: /document/path, start: offset, end: end}\n";

double Mean(const json& run, const char* metric) {
  return run["aggregates"]["metrics"][metric]["mean"].get<double>();
}

}  // namespace

TEST_CASE("a chat-completion service is scored unchanged through request: and reply: blocks") {
  const std::string dir = plumb_test::MakeTempDir();
  std::filesystem::create_directories(dir + "/docs");
  plumb_test::WriteFile(dir + "/docs/harbour.md", kDoc);
  plumb_test::WriteFile(dir + "/answers.json", kAnswers);
  LoopbackService service("chat-service", {"--answers", dir + "/answers.json"});
  plumb_test::WriteFile(dir + "/suite.yaml", Suite(service.port(), kReply));

  const plumb_test::Result r =
      plumb_test::Plumb({"run", dir + "/suite.yaml", "--out", dir + "/out"}, dir);
  INFO(r.out << r.err);
  REQUIRE(r.code == 0);
  const json run = json::parse(plumb_test::ReadFile(dir + "/out/run.json"));
  CHECK(run["aggregates"]["errored"] == 0);
  // Both answers match exactly; the parrot's "I don't know." matches abstain_when and the car's
  // `refusal` string is non-empty, so both abstention cases abstained.
  CHECK(Mean(run, "correct") == 1.0);
  CHECK(Mean(run, "abstain_recall") == 1.0);
  CHECK(Mean(run, "abstain_precision") == 1.0);
  // The office's gold line is retrieved first, the gate's second: recall@1 = (1 + 0) / 2.
  CHECK(Mean(run, "recall@1") == 0.5);
  CHECK(Mean(run, "recall@3") == 1.0);
  CHECK(Mean(run, "mrr") == 0.75);  // (1/1 + 1/2) / 2
  CHECK(Mean(run, "citation_recall") == 1.0);
  // prompt_tokens: the 5 words of the system message plus the question's 6, 6, 5 and 5 words;
  // completion_tokens: "07:00" 1, "gate B" 2, "I don't know." 3, "Please call the vehicle
  // desk." 5.
  CHECK(run["aggregates"]["usage"]["input_tokens"] == 42);
  CHECK(run["aggregates"]["usage"]["output_tokens"] == 11);

  const std::vector<json> journal = plumb_test::ReadJournal(dir + "/out/cases.jsonl");
  REQUIRE(journal.size() == 4);
  for (const json& record : journal) {
    INFO(record.dump());
    const bool abstains = record["id"] == "parrot" || record["id"] == "car";
    CHECK(record["abstained"] == abstains);
    CHECK(record["answer"].is_null() == abstains);
  }
  // /timing/total_ms is in no reply of this service: one warning for the run, not one a case.
  const std::string warning =
      "warning: pipeline 'chat': reply.latency_ms '/timing/total_ms' resolved in none of the 4 "
      "replies";
  const size_t at = r.err.find(warning);
  CHECK(at != std::string::npos);
  CHECK(r.err.find(warning, at + 1) == std::string::npos);
}

TEST_CASE("without a reply: block the same service cannot be scored") {
  // What the protocol's own shape reads from these replies: no /answer, so every case errors.
  const std::string dir = plumb_test::MakeTempDir();
  std::filesystem::create_directories(dir + "/docs");
  plumb_test::WriteFile(dir + "/docs/harbour.md", kDoc);
  plumb_test::WriteFile(dir + "/answers.json", kAnswers);
  LoopbackService service("chat-service", {"--answers", dir + "/answers.json"});
  plumb_test::WriteFile(dir + "/suite.yaml", Suite(service.port(), ""));
  const plumb_test::Result r =
      plumb_test::Plumb({"run", dir + "/suite.yaml", "--out", dir + "/out"}, dir);
  CHECK(r.code == 3);
  const std::vector<json> journal = plumb_test::ReadJournal(dir + "/out/cases.jsonl");
  REQUIRE(journal.size() == 4);
  CHECK(journal[0]["error"]["reason"] == "response has no answer at '/answer'");
}
