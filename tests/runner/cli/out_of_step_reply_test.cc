// A late or extra reply line never becomes another case's answer (issue 17 item 2). The real
// plumb runs out-of-step-pipeline, which adds a stray line after a reply, sends a second reply
// 300 ms late (after plumb has sent the next request), or names another case's id. Each reply
// must go to the case it answers or be a case error naming both ids; a worker that printed
// more than its reply is replaced before its next request, which is then retried on a fresh
// worker (attempts 2).

#include <catch2/catch.hpp>
#include <map>
#include <nlohmann/json.hpp>
#include <string>

#include "tests/support/plumb_process.h"

using nlohmann::json;

namespace {

std::map<std::string, json> Run(const std::string& mode) {
  const std::string dir = plumb_test::MakeTempDir();
  plumb_test::WriteFile(dir + "/suite.yaml",
                        "plumb: 1\nname: out-of-step\nmax_error_rate: 1.0\npipelines:\n"
                        "  p:\n    command: [" +
                            plumb_test::kFixtures + "out-of-step-pipeline]\n    mode: " + mode +
                            "\n    timeout: 5s\ncases:\n"
                            "  - {id: c1, question: extra please, answers: [x]}\n"
                            "  - {id: c2, question: two, answers: [two]}\n"
                            "  - {id: c3, question: wrong-id please, answers: [x]}\n"
                            "  - {id: c4, question: four, answers: [four]}\n"
                            "  - {id: c5, question: late please, answers: [late please]}\n"
                            "  - {id: c6, question: six, answers: [six]}\n"
                            "  - {id: c7, question: seven, answers: [seven]}\n");
  const plumb_test::Result run =
      plumb_test::Plumb({"run", dir + "/suite.yaml", "--out", dir + "/out", "--jobs", "1"}, dir);
  INFO(run.err);
  REQUIRE(run.code == 0);
  std::map<std::string, json> records;
  for (const json& r : plumb_test::ReadJournal(dir + "/out/cases.jsonl")) records[r["id"]] = r;
  REQUIRE(records.size() == 7);
  return records;
}

std::string Reason(const json& record) {
  return record["error"].is_object() ? record["error"]["reason"].get<std::string>() : "";
}

}  // namespace

TEST_CASE("persistent: stray, late and foreign reply lines never answer another case") {
  std::map<std::string, json> r = Run("persistent");
  for (auto& [id, record] : r) INFO(id << ": " << record.dump());
  // c1's own reply is fine; the stray line after it is not c2's answer: the worker is replaced
  // and c2 goes to a fresh one.
  CHECK(r["c1"]["answer"] == "extra please");
  CHECK(r["c2"]["answer"] == "two");
  CHECK(r["c2"]["attempts"] == 2);
  // A reply naming another case is a case error naming both ids.
  CHECK(r["c3"]["answer"].is_null());
  CHECK(Reason(r["c3"]).find("'someone-else' is not the request's id 'c3'") != std::string::npos);
  CHECK(r["c4"]["answer"] == "four");
  // c5's late second reply arrives while c6 is outstanding: an error naming c5 and c6, never
  // c6's answer; c7 is answered by a fresh worker.
  CHECK(r["c5"]["answer"] == "late please");
  CHECK(r["c6"]["answer"].is_null());
  CHECK(Reason(r["c6"]).find("'c5' is not the request's id 'c6'") != std::string::npos);
  CHECK(Reason(r["c6"]).find("the worker was restarted") != std::string::npos);
  CHECK(r["c7"]["answer"] == "seven");
  for (auto& [id, record] : r) {
    if (record["answer"].is_string()) CHECK(record["answer"] != "stray");
    if (record["answer"].is_string()) CHECK(record["answer"] != "late");
  }
}

TEST_CASE("per-case: a second reply line or a foreign id is the case's own error") {
  std::map<std::string, json> r = Run("per-case");
  for (auto& [id, record] : r) INFO(id << ": " << record.dump());
  // Everything a per-case process prints is its reply: two lines are not one JSON value.
  CHECK(r["c1"]["answer"].is_null());
  CHECK(Reason(r["c1"]) == "response is not valid JSON");
  CHECK(r["c3"]["answer"].is_null());
  CHECK(Reason(r["c3"]).find("'someone-else' is not the request's id 'c3'") != std::string::npos);
  CHECK(Reason(r["c5"]) == "response is not valid JSON");
  for (const std::string id : {"c2", "c4", "c6", "c7"}) {
    CHECK(r[id]["error"].is_null());
    CHECK(r[id]["attempts"] == 1);
  }
  CHECK(r["c6"]["answer"] == "six");
}
