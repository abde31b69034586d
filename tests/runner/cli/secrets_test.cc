// Expanded `${ENV}` values never reach a file a run writes (SPEC §5, issue 4 item 6). The real
// plumb runs an HTTP pipeline whose url, headers and body carry a secret from the environment,
// against fixtures/fault-server echoing every request header and the body back into answers and
// error bodies, and a subprocess pipeline (crash-pipeline --print-env) that prints the secret it
// was given into its reply and its stderr. Then every file under the run directory, and plumb's
// own stdout and stderr, is searched for the secret: zero hits, and run.json shows "***".

#include <signal.h>
#include <stdlib.h>
#include <sys/wait.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <filesystem>
#include <nlohmann/json.hpp>
#include <string>
#include <thread>
#include <vector>

#include "tests/support/loopback_service.h"
#include "tests/support/plumb_process.h"

using nlohmann::json;
namespace fs = std::filesystem;

namespace {

// An invented value that occurs nowhere else, so any hit is a leak.
constexpr const char* kSecret = "zq7-Tidewrack-s3cret-91f";

// Every path under `dir` whose content contains `needle`.
std::vector<std::string> FilesContaining(const std::string& dir, const std::string& needle) {
  std::vector<std::string> hits;
  for (const fs::directory_entry& entry : fs::recursive_directory_iterator(dir)) {
    if (!entry.is_regular_file()) continue;
    if (plumb_test::ReadFile(entry.path().string()).find(needle) != std::string::npos) {
      hits.push_back(entry.path().string());
    }
  }
  return hits;
}

size_t CountFiles(const std::string& dir) {
  size_t count = 0;
  for (const fs::directory_entry& entry : fs::recursive_directory_iterator(dir)) {
    count += entry.is_regular_file() ? 1 : 0;
  }
  return count;
}

}  // namespace

TEST_CASE("no file a run writes contains an expanded secret") {
  REQUIRE(setenv("PLUMB_SECRETS_TEST_TOKEN", kSecret, 1) == 0);
  plumb_test::LoopbackService server("fault-server");
  const std::string dir = plumb_test::MakeTempDir();
  const std::string port = server.port();
  plumb_test::WriteFile(
      dir + "/secrets.yaml",
      "plumb: 1\nname: secrets\nmax_error_rate: 1.0\npipelines:\n"
      "  http:\n"
      "    url: !text [\"http://127.0.0.1:" +
          port +
          "/\", !case input.fault, \"?key=${PLUMB_SECRETS_TEST_TOKEN}\"]\n"
          "    headers: {Authorization: \"Bearer ${PLUMB_SECRETS_TEST_TOKEN}\","
          " X-Api-Key: \"${PLUMB_SECRETS_TEST_TOKEN}\"}\n"
          "    request: {q: !case question, input: !case input, token: "
          "!env PLUMB_SECRETS_TEST_TOKEN}\n"
          "    retries: 1\n    timeout: 5s\n"
          "  subprocess:\n"
          "    command: [" +
          plumb_test::kFixtures +
          "crash-pipeline, --print-env, PIPELINE_TOKEN]\n"
          "    env: {PIPELINE_TOKEN: \"${PLUMB_SECRETS_TEST_TOKEN}\"}\n"
          "    timeout: 5s\n"
          "cases:\n"
          // Answered with every request header and the body in the answer text.
          "  - {id: echoed, question: echo please, answers: [x], input: {fault: echo-headers}}\n"
          // Error replies whose bodies echo the request: excerpts of a final and a retried status.
          "  - {id: denied, question: denied, answers: [x], input: {fault: status, code: 401}}\n"
          "  - {id: flaky, question: flaky, answers: [x], input: {fault: status, code: 503}}\n"
          // crash-pipeline prints half a reply with PIPELINE_TOKEN=<secret> and dies.
          "  - {id: crashing, question: please crash, answers: [x], input: {fault: "
          "echo-headers}}\n");

  const plumb_test::Result run =
      plumb_test::Plumb({"run", dir + "/secrets.yaml", "--pipeline", "http", "--pipeline",
                         "subprocess", "--out", dir + "/out", "--json"},
                        dir);
  INFO(run.err);
  REQUIRE(run.code == 0);

  // Make sure the secret was really sent and echoed, or the search below proves nothing: the
  // echoed answer shows both headers and the body token masked where the value was.
  const std::vector<json> http = plumb_test::ReadJournal(dir + "/out/http/cases.jsonl");
  REQUIRE(http.size() == 4);
  for (const json& record : http) {
    INFO(record.dump());
    if (record["id"] == "echoed") {
      const std::string answer = record["answer"];
      CHECK(answer.find("Authorization: Bearer ***") != std::string::npos);
      CHECK(answer.find("X-Api-Key: ***") != std::string::npos);
      CHECK(answer.find("key=***") != std::string::npos);
      CHECK(answer.find(R"("token":"***")") != std::string::npos);
    }
    if (record["id"] == "denied") {
      CHECK(record["error"]["reason"] == "HTTP 401 Unauthorized");
      CHECK(record["error"]["stdout"].get<std::string>().find("Bearer ***") != std::string::npos);
    }
  }
  const std::vector<json> sub = plumb_test::ReadJournal(dir + "/out/subprocess/cases.jsonl");
  bool saw_masked_env = false;
  for (const json& record : sub) {
    if (record["id"] != "crashing") continue;
    const std::string excerpts =
        record["error"]["stdout"].get<std::string>() + record["error"]["stderr"].get<std::string>();
    saw_masked_env = excerpts.find("PIPELINE_TOKEN=***") != std::string::npos;
  }
  CHECK(saw_masked_env);
  const std::string run_json = plumb_test::ReadFile(dir + "/out/http/run.json");
  CHECK(run_json.find("Bearer ***") != std::string::npos);
  CHECK(
      plumb_test::ReadFile(dir + "/out/subprocess/run.json").find("\"PIPELINE_TOKEN\": \"***\"") !=
      std::string::npos);

  // The reports (HTML, JUnit, Markdown) are files a run writes too, when this build has them.
  for (const std::string pipeline : {"http", "subprocess"}) {
    const std::string run_dir = dir + "/out/" + pipeline;
    const plumb_test::Result report =
        plumb_test::Plumb({"report", run_dir, "--html", run_dir + "/report.html", "--junit",
                           run_dir + "/junit.xml", "--markdown", run_dir + "/summary.md"},
                          dir);
    INFO(report.err);
    if (report.code == 2) {  // report exits 0, 1 or 3: the recorded verdict
      WARN("plumb report did not run (exit " << report.code << "); only run files are searched");
      continue;
    }
    CHECK(fs::exists(run_dir + "/report.html"));
    CHECK(report.out.find(kSecret) == std::string::npos);
  }

  CHECK(CountFiles(dir + "/out") >= 4);  // two journals, two run.json
  CHECK(FilesContaining(dir + "/out", kSecret).empty());
  CHECK(run.out.find(kSecret) == std::string::npos);
  CHECK(run.err.find(kSecret) == std::string::npos);
}
