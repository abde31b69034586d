// MetricValues keeps the std::map contract the scorer and reports rely on (ISO C++ [map]:
// ordered by key, operator[] inserts a zero, at() throws for a missing key).

#include "runner/run/metric_values.h"

#include <catch2/catch.hpp>
#include <map>
#include <random>
#include <string>

namespace plumb {
namespace {

TEST_CASE("metric values behave as a std map of metric ids") {
  std::mt19937 rng(20261202);
  const std::vector<std::string> ids = {"token_f1", "exact_match", "recall@5", "recall@10",
                                        "mrr",      "citation_f1", "correct",  "pattern_match"};
  for (int round = 0; round < 500; ++round) {
    MetricValues values;
    std::map<std::string, double> reference;
    for (int op = 0; op < 12; ++op) {
      const std::string& id = ids[rng() % ids.size()];
      const double v = static_cast<double>(rng() % 100) / 100;
      switch (rng() % 3) {
        case 0:
          values[id] = v;
          reference[id] = v;
          break;
        case 1:
          values[id] += v;
          reference[id] += v;
          break;
        default:
          REQUIRE(values.erase(id) == reference.erase(id));
      }
    }
    REQUIRE(values == MetricValues(reference));
    REQUIRE(values.size() == reference.size());
    auto expected = reference.begin();
    for (const auto& [metric, value] : values) {
      REQUIRE(metric == expected->first);
      REQUIRE(value == expected->second);
      ++expected;
    }
    for (const std::string& id : ids) {
      REQUIRE(values.count(id) == reference.count(id));
      if (reference.count(id)) REQUIRE(values.at(id) == reference.at(id));
    }
  }
  const MetricValues empty;
  CHECK_THROWS_AS(empty.at("token_f1"), std::out_of_range);
  CHECK(empty.find("token_f1") == empty.end());
}

}  // namespace
}  // namespace plumb
