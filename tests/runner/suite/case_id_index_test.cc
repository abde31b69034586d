// CaseIdIndex against std::unordered_map, the table it replaces: the same answers for every
// insert (first index of a repeated id) and every lookup, through many rehashes, with the list
// of cases growing (and moving) between calls.

#include "runner/suite/case_id_index.h"

#include <catch2/catch.hpp>
#include <random>
#include <string>
#include <unordered_map>

#include "runner/suite/suite.h"

namespace plumb {
namespace {

TEST_CASE("case ids index as a hash map would, first index kept for a repeated id") {
  std::mt19937_64 rng(20261204);
  std::vector<Case> cases;
  CaseIdIndex index;
  std::unordered_map<std::string, size_t> expected;
  for (size_t i = 0; i < 50000; ++i) {
    cases.emplace_back();
    // Short ids (inline in std::string) and long ones; about one in six repeats an earlier id.
    cases.back().id =
        (rng() % 4 == 0 ? "a-rather-long-case-id-" : "c") + std::to_string(rng() % 60000);
    auto [it, added] = expected.emplace(cases.back().id, i);
    const size_t first = index.Insert(cases, i);
    INFO("id " << cases.back().id);
    REQUIRE(first == (added ? CaseIdIndex::kAbsent : it->second));
  }
  CHECK(index.size() == expected.size());
  for (const auto& [id, i] : expected) REQUIRE(index.Find(cases, id) == i);
  CHECK(index.Find(cases, "c60001") == CaseIdIndex::kAbsent);
  CHECK(index.Find(cases, "") == CaseIdIndex::kAbsent);
}

TEST_CASE("an empty index finds nothing, a reserved one grows no further") {
  std::vector<Case> cases(3);
  cases[0].id = "x";
  cases[1].id = "y";
  cases[2].id = "x";
  CaseIdIndex index;
  CHECK(index.Find(cases, "x") == CaseIdIndex::kAbsent);
  index.Reserve(3);
  CHECK(index.Insert(cases, 0) == CaseIdIndex::kAbsent);
  CHECK(index.Insert(cases, 1) == CaseIdIndex::kAbsent);
  CHECK(index.Insert(cases, 2) == 0);
  CHECK(index.Find(cases, "y") == 1);
  CHECK(index.size() == 2);
}

}  // namespace
}  // namespace plumb
