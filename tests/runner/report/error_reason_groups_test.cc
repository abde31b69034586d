// Errored cases grouped by reason for the run page (issue 20 item 2): texts that differ only in
// their numbers are one reason, the largest group comes first, and each group is named by its
// most frequent exact text.

#include "runner/report/error_reason_groups.h"

#include <catch2/catch.hpp>

TEST_CASE("error reason groups: numbers do not split a reason, the largest group leads",
          "[error_reason_groups]") {
  const std::vector<std::string> errors = {
      "timed out after 30 s",                            // 0
      "retrieved[0]: missing string field 'document'",   // 1
      "retrieved[12]: missing string field 'document'",  // 2
      "retrieved[0]: missing string field 'document'",   // 3
      "",                                                // 4
  };
  const std::vector<plumb::ErrorReasonGroup> groups = plumb::GroupErrorReasons(errors);
  REQUIRE(groups.size() == 3);
  CHECK(groups[0].reason == "retrieved[0]: missing string field 'document'");
  CHECK(groups[0].members == std::vector<size_t>{1, 2, 3});
  CHECK(groups[0].variants == 2);
  // Equal sizes keep the order of their first member.
  CHECK(groups[1].reason == "timed out after 30 s");
  CHECK(groups[1].members == std::vector<size_t>{0});
  CHECK(groups[2].reason == "no reason recorded");
  CHECK(groups[2].members == std::vector<size_t>{4});
}

TEST_CASE("error reason groups: the most frequent exact text names the group",
          "[error_reason_groups]") {
  const std::vector<plumb::ErrorReasonGroup> groups =
      plumb::GroupErrorReasons({"exit status 1", "exit status 139", "exit status 139"});
  REQUIRE(groups.size() == 1);
  CHECK(groups[0].reason == "exit status 139");
  CHECK(groups[0].variants == 2);
  CHECK(plumb::GroupErrorReasons({}).empty());
}
