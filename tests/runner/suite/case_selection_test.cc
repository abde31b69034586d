// Case selection (SPEC §8 --tag/--case/--limit/--shard): shards of one suite never overlap and
// always cover it, whatever N.
#include "runner/suite/case_selection.h"

#include <catch2/catch.hpp>
#include <set>

namespace {

plumb::Suite SuiteWith(int n) {
  plumb::Suite suite;
  for (int i = 0; i < n; ++i) {
    plumb::Case c;
    c.id = "case-" + std::to_string(i);
    c.tags = {i % 3 == 0 ? "safety" : "fares"};
    suite.cases.push_back(c);
  }
  return suite;
}

}  // namespace

TEST_CASE("FNV-1a 64 matches its published test vectors") {
  // Fowler/Noll/Vo reference test vectors (isthe.com/chongo/tech/comp/fnv): "" and "a".
  CHECK(plumb::StableIdHash("") == 0xcbf29ce484222325ull);
  CHECK(plumb::StableIdHash("a") == 0xaf63dc4c8601ec8cull);
  CHECK(plumb::StableIdHash("foobar") == 0x85944171f73967e8ull);
}

TEST_CASE("shards partition the suite") {
  const plumb::Suite suite = SuiteWith(500);
  for (int n : {2, 3, 7}) {
    std::set<size_t> seen;
    size_t total = 0;
    for (int i = 1; i <= n; ++i) {
      plumb::CaseSelection selection;
      selection.shard = {i, n};
      for (size_t index : plumb::SelectCases(suite, selection)) {
        seen.insert(index);
        ++total;
      }
    }
    CHECK(total == 500);
    CHECK(seen.size() == 500);
  }
}

TEST_CASE("tag and glob and limit combine") {
  const plumb::Suite suite = SuiteWith(30);
  plumb::CaseSelection selection;
  selection.tags = {"safety"};
  CHECK(plumb::SelectCases(suite, selection).size() == 10);
  selection.id_globs = {"case-1*"};  // case-1, case-10..19 of which 12, 15, 18 are safety
  CHECK(plumb::SelectCases(suite, selection) == std::vector<size_t>{12, 15, 18});
  selection.limit = 2;
  CHECK(plumb::SelectCases(suite, selection) == std::vector<size_t>{12, 15});
}

TEST_CASE("shard parsing rejects what it cannot use") {
  plumb::Shard shard;
  std::string error;
  CHECK(plumb::ParseShard("2/4", &shard, &error));
  CHECK(shard.index == 2);
  CHECK(shard.count == 4);
  CHECK_FALSE(plumb::ParseShard("5/4", &shard, &error));
  CHECK(error == "--shard 5/4: I must be between 1 and N");
  CHECK_FALSE(plumb::ParseShard("2", &shard, &error));
  CHECK_FALSE(plumb::ParseShard("a/b", &shard, &error));
}
