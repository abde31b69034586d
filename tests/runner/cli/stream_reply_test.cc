// Streamed replies (issue 21 item 3): an HTTP pipeline with `stream: sse` or `stream: lines` is
// read as its events arrive; the answer is joined from the text deltas, usage and citations come
// from the event that carries them, and each case records its time to first token (ttft_ms)
// beside its latency. The real plumb runs against fixtures/stream-service on loopback, which
// sends the first word 200 ms after the request and the last 1000 ms after it. Hostile streams
// (an event that is not JSON, a stream that never ends, a 2 MiB event) cost their case only.

#include <catch2/catch.hpp>
#include <map>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "tests/support/loopback_service.h"
#include "tests/support/plumb_process.h"

using nlohmann::json;
using plumb_test::LoopbackService;

namespace {

std::string Suite(const std::string& port, const std::string& format, const std::string& extra,
                  const std::vector<std::string>& questions) {
  std::string suite =
      "plumb: 1\nname: streams\nmax_error_rate: 1\npipelines:\n  s:\n    url: "
      "http://127.0.0.1:" +
      port + "/v1/chat/completions\n    stream: " + format + "\n    jobs: 4\n" + extra + "cases:\n";
  for (size_t i = 0; i < questions.size(); ++i) {
    suite += "  - {id: c" + std::to_string(i) + ", question: \"" + questions[i] +
             "\", answers: [\"" + questions[i] + "\"]}\n";
  }
  return suite;
}

}  // namespace

TEST_CASE("a streamed reply records its first token at about 200 ms and its last at about 1 s") {
  for (const std::string format : {"sse", "lines"}) {
    INFO("stream: " << format);
    LoopbackService service("stream-service",
                            {"--format", format, "--first-ms", "200", "--last-ms", "1000"});
    const std::string dir = plumb_test::MakeTempDir();
    const std::vector<std::string> questions = {"Boarding closes ten minutes before departure",
                                                "Bicycles travel free on every sailing",
                                                "The harbour office opens at seven"};
    plumb_test::WriteFile(
        dir + "/suite.yaml",
        Suite(service.port(), format,
              "    price: {input: 0.50, output: 1.50, per: 1M, currency: EUR}\n", questions));
    const plumb_test::Result run =
        plumb_test::Plumb({"run", dir + "/suite.yaml", "--out", dir + "/out"}, dir);
    INFO(run.out << run.err);
    CHECK(run.code == 0);
    const std::vector<json> records = plumb_test::ReadJournal(dir + "/out/cases.jsonl");
    REQUIRE(records.size() == 3);
    for (const json& r : records) {
      INFO(r.dump());
      REQUIRE(r["error"].is_null());
      // The answer joined from the deltas is the question, word for word.
      const size_t i = std::stoul(r["id"].get<std::string>().substr(1));
      CHECK(r["answer"] == questions[i]);
      CHECK(r["scores"]["exact_match"] == 1.0);
      // Usage and citations come from the last event, after the deltas.
      CHECK(r["usage"]["input_tokens"] == 6);
      CHECK(r["usage"]["output_tokens"] == 6);
      CHECK(r["citations"] == json::array({{{"doc", "boarding.md"}}}));
      // Tolerance: the service sleeps until 200 ms and 1000 ms after the request arrived; the
      // loopback connection, plumb's event loop and a loaded two-core machine add delay, never
      // subtract it. 400 ms of slack above (the machine is shared: 150 ms was exceeded once
      // with the browser tests running beside it), 5 ms below (clock granularity). The two
      // ranges stay apart: a first token is never mistaken for the last.
      const double ttft = r["ttft_ms"].get<double>(), latency = r["latency_ms"].get<double>();
      CHECK(ttft >= 195);
      CHECK(ttft <= 600);
      CHECK(latency >= 995);
      CHECK(latency <= 1400);
      // 6 words in and out at 0.50 and 1.50 EUR per million: (6 * 0.5 + 6 * 1.5) / 1e6.
      CHECK(r["cost"].get<double>() == Approx(12e-6));
    }
    const json aggregates = json::parse(plumb_test::ReadFile(dir + "/out/run.json"))["aggregates"];
    const json ttft = aggregates["ttft_ms"];
    CHECK(ttft["n"] == 3);
    CHECK(ttft["p50"].get<double>() >= 195);
    CHECK(ttft["p50"].get<double>() <= 600);
    CHECK(ttft["p50_interval"].size() == 2);
    CHECK(ttft["p95_interval"][0].get<double>() <= ttft["p95"].get<double>());
    CHECK(aggregates["latency_ms"]["p50"].get<double>() >= 995);
    CHECK(aggregates["cost"]["total"].get<double>() == Approx(36e-6));
    CHECK(aggregates["cost"]["currency"] == "EUR");
    CHECK(run.out.find("first token ms") != std::string::npos);
  }
}

TEST_CASE("hostile streams cost one case each and the run goes on") {
  LoopbackService service("stream-service", {"--first-ms", "10", "--last-ms", "40"});
  const std::string dir = plumb_test::MakeTempDir();
  plumb_test::WriteFile(
      dir + "/suite.yaml",
      Suite(service.port(), "sse",
            "    timeout: 2s\n    max_response_bytes: 1MiB\n    retries: 0\n",
            {"sends garbage first", "streams forever", "one huge event", "an honest stream"}));
  const plumb_test::Result run =
      plumb_test::Plumb({"run", dir + "/suite.yaml", "--out", dir + "/out"}, dir);
  INFO(run.out << run.err);
  CHECK(run.code == 0);  // max_error_rate 1: three errors are allowed, the run finishes
  std::map<std::string, json> by_id;
  for (const json& r : plumb_test::ReadJournal(dir + "/out/cases.jsonl")) by_id[r["id"]] = r;
  REQUIRE(by_id.size() == 4);
  CHECK(by_id["c0"]["error"]["reason"].get<std::string>().rfind(
            "stream event 1 is not a JSON object: {this is not json", 0) == 0);
  CHECK(by_id["c1"]["error"]["reason"] == "timed out after 2s");
  CHECK(by_id["c1"]["latency_lower_bound"] == true);
  CHECK(by_id["c2"]["error"]["reason"] == "stream exceeded 1 MiB");
  CHECK(by_id["c3"]["error"].is_null());
  CHECK(by_id["c3"]["answer"] == "an honest stream");
  for (const char* id : {"c0", "c1", "c2"}) CHECK_FALSE(by_id[id].contains("ttft_ms"));
  CHECK(by_id["c3"].contains("ttft_ms"));
}
