// What run.json records of a suite, read back (runner/suite/recorded_suite.h), must be the suite
// the loader gave, field by field: `plumb merge` rebuilds its Suite from it and computes aggregates
// and thresholds as a run of the suite file would. Checked on the demo suite, which has an
// include, sources by quote and by offsets, numbers, patterns, tags and tag thresholds.
#include "runner/suite/recorded_suite.h"

#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>
#include <string>

#include "runner/suite/suite_loader.h"
#include "tests/support/plumb_process.h"

namespace {

using plumb::Case;
using plumb::Suite;

nlohmann::json DemoRunRecord(const std::string& dir) {
  // Every case without a reply errors; run.json records the gold all the same.
  plumb_test::WriteFile(dir + "/none.jsonl", "");
  const plumb_test::Result r =
      plumb_test::Plumb({"score", std::string(PLUMB_SOURCE_DIR) + "/suites/ferry.yaml",
                         dir + "/none.jsonl", "--out", dir + "/run"},
                        dir);
  REQUIRE(r.code == 3);
  return nlohmann::json::parse(plumb_test::ReadFile(dir + "/run/run.json"));
}

}  // namespace

TEST_CASE("run.json gives back the demo suite's settings and every case's gold") {
  const std::string dir = plumb_test::MakeTempDir();
  const nlohmann::json record = DemoRunRecord(dir);
  Suite loaded;
  plumb::Diagnostics errors, warnings;
  plumb::LoadOptions options;
  options.expand_env = false;
  REQUIRE(plumb::LoadSuite(std::string(PLUMB_SOURCE_DIR) + "/suites/ferry.yaml", options, &loaded,
                           &errors, &warnings));

  Suite rebuilt;
  std::string error;
  REQUIRE(plumb::ReadRecordedSuiteSettings(record, &rebuilt, &error));
  CHECK(rebuilt.name == loaded.name);
  CHECK(rebuilt.suite_hash == loaded.suite_hash);
  CHECK(rebuilt.normalize == loaded.normalize);
  CHECK(rebuilt.lang == loaded.lang);
  CHECK(rebuilt.retrieval_k == loaded.retrieval_k);
  CHECK(rebuilt.case_pass == loaded.case_pass);
  CHECK(rebuilt.min_overlap == loaded.min_overlap);
  CHECK(rebuilt.max_error_rate == loaded.max_error_rate);
  CHECK(rebuilt.thresholds.metrics == loaded.thresholds.metrics);
  CHECK(rebuilt.thresholds.tags == loaded.thresholds.tags);
  REQUIRE(rebuilt.corpus_dir.has_value());

  const nlohmann::json& cases = record["cases"];
  REQUIRE(cases.size() == loaded.cases.size());
  int with_sources = 0, with_number = 0, with_patterns = 0;
  for (auto it = cases.begin(); it != cases.end(); ++it) {
    Case c;
    size_t index = 0;
    REQUIRE(plumb::ReadRecordedCase(it.key(), *it, &c, &index, &error));
    REQUIRE(index < loaded.cases.size());
    const Case& want = loaded.cases[index];
    INFO(want.id);
    CHECK(c.id == want.id);
    CHECK(c.gold_hash == want.gold_hash);
    CHECK(c.question == want.question);
    CHECK(c.answers == want.answers);
    CHECK(c.patterns == want.patterns);
    CHECK(c.tags == want.tags);
    CHECK(c.pos.line == want.pos.line);
    REQUIRE(c.sources.size() == want.sources.size());
    for (size_t s = 0; s < c.sources.size(); ++s) {
      CHECK(c.sources[s].doc == want.sources[s].doc);
      CHECK(c.sources[s].start == want.sources[s].start);
      CHECK(c.sources[s].end == want.sources[s].end);
      CHECK(c.sources[s].text == want.sources[s].text);
    }
    REQUIRE(c.number.has_value() == want.number.has_value());
    if (c.number) {
      CHECK(c.number->value == want.number->value);
      CHECK(c.number->tolerance == want.number->tolerance);
      CHECK(c.number->unit == want.number->unit);
    }
    with_sources += c.sources.empty() ? 0 : 1;
    with_number += c.number ? 1 : 0;
    with_patterns += c.patterns.empty() ? 0 : 1;
  }
  // The demo suite exercises each kind of gold (counted on suites/ferry.yaml).
  CHECK(with_sources > 0);
  CHECK(with_number > 0);
  CHECK(with_patterns > 0);
}

TEST_CASE("a malformed record names the member") {
  Suite suite;
  std::string error;
  CHECK_FALSE(plumb::ReadRecordedSuiteSettings(nlohmann::json::object(), &suite, &error));
  CHECK(error == "run.json has no object \"suite\"");
  const nlohmann::json wrong_k = {{"suite",
                                   {{"name", "x"},
                                    {"path", "s.yaml"},
                                    {"hash", "h"},
                                    {"normalize", "squad"},
                                    {"lang", "en"},
                                    {"min_overlap", 0},
                                    {"max_error_rate", 0.05},
                                    {"retrieval_k", {1, "five"}},
                                    {"case_pass", {{"correct", 1}}}}},
                                  {"thresholds", nlohmann::json::array()}};
  CHECK_FALSE(plumb::ReadRecordedSuiteSettings(wrong_k, &suite, &error));
  CHECK(error == "run.json's \"suite\": \"retrieval_k\" must hold whole numbers");

  Case c;
  size_t index = 0;
  CHECK_FALSE(plumb::ReadRecordedCase("c1", {{"gold_hash", "h"}}, &c, &index, &error));
  CHECK(error == "case 'c1' in run.json has no string \"question\"");
  // A place beyond any loadable suite is refused before `plumb merge` sizes a suite by it.
  const nlohmann::json far = {{"gold_hash", "h"},
                              {"question", "q"},
                              {"answers", {"a"}},
                              {"patterns", nlohmann::json::array()},
                              {"tags", nlohmann::json::array()},
                              {"sources", nlohmann::json::array()},
                              {"line", 1},
                              {"index", 2147483647}};
  CHECK_FALSE(plumb::ReadRecordedCase("c1", far, &c, &index, &error));
  CHECK(error ==
        "case 'c1' in run.json: \"index\" must be a case's place in its suite, from 0 to "
        "16777215");
  nlohmann::json near = far;
  near["index"] = 16777215;
  CHECK(plumb::ReadRecordedCase("c1", near, &c, &index, &error));
  CHECK(index == 16777215);
}
