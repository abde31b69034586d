// Failure triage end to end through `plumb score`: one recorded reply per failure kind, the
// cause journaled per case, run.json's "failures" (counts, shares of the cases, Wilson 95%
// intervals, per tag), the terminal rows that lead the summary, and `plumb report` on a run
// recorded before causes were. Intervals are statsmodels 0.13.5
// proportion_confint(count, n, alpha=0.05, method='wilson'), run with /usr/bin/python3.
#include <sys/stat.h>

#include <catch2/catch.hpp>
#include <fstream>
#include <map>
#include <nlohmann/json.hpp>
#include <string>

#include "tests/support/plumb_process.h"

using namespace plumb_test;

namespace {

// docs/boarding.md: "Boarding closes ten minutes before departure. Loans renew once."
// [0, 46) is the first sentence, [47, 63) the second. docs/pets.md holds no gold span.
const char kSuite[] =
    "plumb: 1\nname: triage\ncorpus: docs\n"
    "case_pass: {correct: 1, citation_recall: 1}\n"
    "cases:\n"
    "  - {id: err, question: q1, answers: [ten minutes],"
    " sources: [{doc: boarding.md, start: 0, end: 46}]}\n"
    "  - {id: retr, question: q2, answers: [ten minutes], tags: [hard],"
    " sources: [{doc: boarding.md, start: 0, end: 46}]}\n"
    "  - {id: cite, question: q3, answers: [once], sources: [{doc: boarding.md, start: 47, end: "
    "63}]}\n"
    "  - {id: partial, question: q4, answers: [once], sources: [{doc: boarding.md, start: 0, end: "
    "46}, {doc: boarding.md, start: 47, end: 63}]}\n"
    "  - {id: read, question: q5, answers: [once], tags: [hard],"
    " sources: [{doc: boarding.md, start: 47, end: 63}]}\n"
    "  - {id: read-unretrieved, question: q6, answers: [ten minutes], tags: [hard],"
    " sources: [{doc: boarding.md, start: 0, end: 46}]}\n"
    "  - {id: abst, question: q7, answers: [once], sources: [{doc: boarding.md, start: 47, end: "
    "63}]}\n"
    "  - {id: unans, question: q8, answers: []}\n"
    "  - {id: ok, question: q9, answers: [once], sources: [{doc: boarding.md, start: 47, end: "
    "63}]}\n"
    "  - {id: unans-ok, question: q10, answers: []}\n";

const char kReplies[] =
    // err: no reply at all (recorded as an errored item).
    // retr: retrieved only pets.md, so no gold span was retrieved (and the answer is wrong).
    "{\"id\": \"retr\", \"answer\": \"twenty minutes\", \"retrieved\": [{\"doc\": \"pets.md\"}]}\n"
    // cite: right answer, cites the wrong document.
    "{\"id\": \"cite\", \"answer\": \"once\", \"citations\": [{\"doc\": \"pets.md\"}]}\n"
    // partial: right answer, cites one of two gold spans (citation_recall 0.5 < 1).
    "{\"id\": \"partial\", \"answer\": \"once\","
    " \"citations\": [{\"doc\": \"boarding.md\", \"start\": 47, \"end\": 63}]}\n"
    // read: the gold span was retrieved first, and the answer is wrong.
    "{\"id\": \"read\", \"answer\": \"twice\","
    " \"retrieved\": [{\"doc\": \"boarding.md\", \"start\": 47, \"end\": 63}]}\n"
    // read-unretrieved: no retrieved list (a preloaded context), wrong answer.
    "{\"id\": \"read-unretrieved\", \"answer\": \"five minutes\"}\n"
    // abst: the gold span was retrieved, and the pipeline abstained.
    "{\"id\": \"abst\", \"answer\": null, \"abstained\": true,"
    " \"retrieved\": [{\"doc\": \"boarding.md\", \"start\": 47, \"end\": 63}]}\n"
    // unans: the gold is to abstain; the pipeline answered.
    "{\"id\": \"unans\", \"answer\": \"The captain decides.\"}\n"
    "{\"id\": \"ok\", \"answer\": \"once\","
    " \"citations\": [{\"doc\": \"boarding.md\", \"start\": 47, \"end\": 63}]}\n"
    "{\"id\": \"unans-ok\", \"answer\": null}\n";

std::string Setup(const std::string& dir) {
  ::mkdir((dir + "/docs").c_str(), 0755);
  WriteFile(dir + "/docs/boarding.md",
            "Boarding closes ten minutes before departure. Loans renew once.");
  WriteFile(dir + "/docs/pets.md", "Dogs travel on the car deck.");
  WriteFile(dir + "/s.yaml", kSuite);
  WriteFile(dir + "/pred.jsonl", kReplies);
  return dir + "/out";
}

std::map<std::string, nlohmann::json> CausesByName(const nlohmann::json& breakdown) {
  std::map<std::string, nlohmann::json> out;
  for (const nlohmann::json& c : breakdown["causes"]) out[c["cause"].get<std::string>()] = c;
  return out;
}

}  // namespace

TEST_CASE("plumb score gives every failed case one cause and journals it") {
  const std::string dir = MakeTempDir();
  const std::string out = Setup(dir);
  const Result r = Plumb({"score", dir + "/s.yaml", dir + "/pred.jsonl", "--out", out}, dir);
  INFO(r.out << r.err);
  CHECK(r.code == 3);  // one errored case of ten is above max_error_rate 0.05
  std::map<std::string, std::string> cause;
  for (const nlohmann::json& line : ReadJournal(out + "/cases.jsonl")) {
    cause[line["id"].get<std::string>()] = line.value("cause", std::string("(none)"));
  }
  CHECK(cause["err"] == "errored");
  CHECK(cause["retr"] == "retrieval_miss");
  CHECK(cause["cite"] == "citation_miss");
  CHECK(cause["partial"] == "below_case_pass");
  CHECK(cause["read"] == "reading_miss");
  CHECK(cause["read-unretrieved"] == "reading_miss");
  CHECK(cause["abst"] == "false_abstention");
  CHECK(cause["unans"] == "answered_unanswerable");
  CHECK(cause["ok"] == "(none)");
  CHECK(cause["unans-ok"] == "(none)");

  // The cause rows come first, before the metric table, most common first and ties in
  // classification order.
  const size_t failed = r.out.find(
      "failed 8 of 10 cases: 2 reading miss, 1 errored, 1 retrieval miss, 1 citation miss, 1 "
      "false abstention, 1 answered unanswerable, 1 below a case_pass minimum\n");
  CHECK(failed != std::string::npos);
  CHECK(failed < r.out.find("metric "));
  CHECK(r.out.find("  reading miss                    2   0.200   [0.057, 0.510]\n") !=
        std::string::npos);
  // The error reason sits under the causes, also before the metric table.
  const size_t reason = r.out.find("no prediction for this case");
  CHECK(reason != std::string::npos);
  CHECK(reason < r.out.find("metric "));
}

TEST_CASE("run.json and --json carry the cause breakdown with Wilson intervals per run and tag") {
  const std::string dir = MakeTempDir();
  const std::string out = Setup(dir);
  const Result r =
      Plumb({"score", dir + "/s.yaml", dir + "/pred.jsonl", "--out", out, "--json"}, dir);
  INFO(r.err);
  const nlohmann::json printed = nlohmann::json::parse(r.out);
  const nlohmann::json recorded = nlohmann::json::parse(ReadFile(out + "/run.json"));
  CHECK(printed["failures"] == recorded["failures"]);
  const nlohmann::json& f = recorded["failures"];
  CHECK(f["cases"] == 10);
  CHECK(f["failed"] == 8);
  REQUIRE(f["causes"].size() == 7);
  // Classification order.
  CHECK(f["causes"][0]["cause"] == "errored");
  CHECK(f["causes"][6]["cause"] == "below_case_pass");
  std::map<std::string, nlohmann::json> by = CausesByName(f);
  CHECK(by["reading_miss"]["count"] == 2);
  CHECK(by["reading_miss"]["label"] == "reading miss");
  CHECK(by["reading_miss"]["share"] == Approx(0.2));
  // statsmodels: proportion_confint(2, 10, method='wilson') = (0.056682151454, 0.509837528463)
  CHECK(by["reading_miss"]["interval"][0] == Approx(0.056682151454).epsilon(1e-9));
  CHECK(by["reading_miss"]["interval"][1] == Approx(0.509837528463).epsilon(1e-9));
  // proportion_confint(1, 10, method='wilson') = (0.017876213095, 0.404150026795)
  CHECK(by["retrieval_miss"]["count"] == 1);
  CHECK(by["retrieval_miss"]["interval"][0] == Approx(0.017876213095).epsilon(1e-9));
  CHECK(by["retrieval_miss"]["interval"][1] == Approx(0.404150026795).epsilon(1e-9));
  // Tag hard: retr, read, read-unretrieved.
  const nlohmann::json& hard = f["tags"]["hard"];
  CHECK(hard["cases"] == 3);
  CHECK(hard["failed"] == 3);
  std::map<std::string, nlohmann::json> hard_by = CausesByName(hard);
  CHECK(hard_by["reading_miss"]["count"] == 2);
  CHECK(hard_by["reading_miss"]["share"] == Approx(2.0 / 3));
  // proportion_confint(2, 3, method='wilson') = (0.207659600802, 0.938508055280)
  CHECK(hard_by["reading_miss"]["interval"][0] == Approx(0.207659600802).epsilon(1e-9));
  CHECK(hard_by["reading_miss"]["interval"][1] == Approx(0.938508055280).epsilon(1e-9));
  // proportion_confint(1, 3, method='wilson') = (0.061491944720, 0.792340399198)
  CHECK(hard_by["retrieval_miss"]["interval"][0] == Approx(0.061491944720).epsilon(1e-9));
  CHECK(hard_by["retrieval_miss"]["interval"][1] == Approx(0.792340399198).epsilon(1e-9));
}

TEST_CASE("plumb report classifies a run recorded before causes were, or with unknown ones") {
  const std::string dir = MakeTempDir();
  const std::string out = Setup(dir);
  Plumb({"score", dir + "/s.yaml", dir + "/pred.jsonl", "--out", out}, dir);
  // Strip what this version adds: every journal line's cause and run.json's failures; and give
  // one line a cause only a later plumb would know.
  std::string journal;
  for (nlohmann::json line : ReadJournal(out + "/cases.jsonl")) {
    line.erase("cause");
    if (line["id"] == "retr") line["cause"] = "a_cause_of_a_later_plumb";
    journal += line.dump() + "\n";
  }
  WriteFile(out + "/cases.jsonl", journal);
  nlohmann::json record = nlohmann::json::parse(ReadFile(out + "/run.json"));
  const nlohmann::json failures = record["failures"];
  record.erase("failures");
  WriteFile(out + "/run.json", record.dump(2) + "\n");

  const Result json = Plumb({"report", out, "--json"}, dir);
  INFO(json.err);
  CHECK(nlohmann::json::parse(json.out)["failures"] == failures);
  const Result text = Plumb({"report", out}, dir);
  CHECK(text.out.find("failed 8 of 10 cases: 2 reading miss, 1 errored,") != std::string::npos);
}

namespace {

// Every case answered right and cited: the base the triage replies lose eight cases against.
const char kPerfectReplies[] =
    "{\"id\": \"err\", \"answer\": \"ten minutes\","
    " \"citations\": [{\"doc\": \"boarding.md\", \"start\": 0, \"end\": 46}]}\n"
    "{\"id\": \"retr\", \"answer\": \"ten minutes\","
    " \"citations\": [{\"doc\": \"boarding.md\", \"start\": 0, \"end\": 46}]}\n"
    "{\"id\": \"cite\", \"answer\": \"once\","
    " \"citations\": [{\"doc\": \"boarding.md\", \"start\": 47, \"end\": 63}]}\n"
    "{\"id\": \"partial\", \"answer\": \"once\","
    " \"citations\": [{\"doc\": \"boarding.md\"}]}\n"
    "{\"id\": \"read\", \"answer\": \"once\","
    " \"citations\": [{\"doc\": \"boarding.md\", \"start\": 47, \"end\": 63}]}\n"
    "{\"id\": \"read-unretrieved\", \"answer\": \"ten minutes\","
    " \"citations\": [{\"doc\": \"boarding.md\", \"start\": 0, \"end\": 46}]}\n"
    "{\"id\": \"abst\", \"answer\": \"once\","
    " \"citations\": [{\"doc\": \"boarding.md\", \"start\": 47, \"end\": 63}]}\n"
    "{\"id\": \"unans\", \"answer\": null}\n"
    "{\"id\": \"ok\", \"answer\": \"once\","
    " \"citations\": [{\"doc\": \"boarding.md\", \"start\": 47, \"end\": 63}]}\n"
    "{\"id\": \"unans-ok\", \"answer\": null}\n";

}  // namespace

TEST_CASE("plumb drift counts the lost cases by the candidate's cause") {
  const std::string dir = MakeTempDir();
  const std::string cand = Setup(dir);
  WriteFile(dir + "/perfect.jsonl", kPerfectReplies);
  const Result b =
      Plumb({"score", dir + "/s.yaml", dir + "/perfect.jsonl", "--out", dir + "/base"}, dir);
  INFO(b.out << b.err);
  REQUIRE(b.code == 0);
  Plumb({"score", dir + "/s.yaml", dir + "/pred.jsonl", "--out", cand}, dir);

  const std::string lost_line =
      "lost 8: 2 reading miss, 1 errored, 1 retrieval miss, 1 citation miss, 1 false abstention, 1 "
      "answered unanswerable, 1 below a case_pass minimum\n";
  const Result table = Plumb({"drift", dir + "/base", cand}, dir);
  INFO(table.out);
  const size_t lost = table.out.find(lost_line);
  CHECK(lost != std::string::npos);
  CHECK(lost < table.out.find("metric "));  // before the metric table
  // Each lost case's row names its cause.
  CHECK(table.out.find("retr                             retrieval miss") != std::string::npos);

  const Result json = Plumb({"drift", dir + "/base", cand, "--json"}, dir);
  const nlohmann::json drift = nlohmann::json::parse(json.out);
  CHECK(drift["lost_by_cause"]["failed"] == 8);
  std::map<std::string, nlohmann::json> by = CausesByName(drift["lost_by_cause"]);
  CHECK(by["reading_miss"]["count"] == 2);
  CHECK(by["errored"]["count"] == 1);
  std::map<std::string, nlohmann::json> lost_case;
  for (const nlohmann::json& c : drift["lost"]) lost_case[c["id"].get<std::string>()] = c;
  REQUIRE(lost_case.size() == 8);
  CHECK(lost_case["retr"]["cand_cause"] == "retrieval_miss");
  CHECK(lost_case["retr"]["base_cause"].is_null());
  CHECK(lost_case["retr"]["cand_reason"] == "none of 1 retrieved item hits a gold span");
  CHECK(lost_case["retr"]["gold"] == nlohmann::json::array({"ten minutes"}));
  CHECK(lost_case["err"]["cand_cause"] == "errored");
  CHECK(lost_case["err"]["cand_reason"].get<std::string>().find("no prediction for this case") ==
        0);
  CHECK(lost_case["partial"]["cand_reason"] == "citation_recall 0.5 < 1");
  CHECK(lost_case["unans"]["gold"] == nlohmann::json::array());
}
