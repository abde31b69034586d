// ${VAR} expansion for pipeline configs (SPEC §5): hand-worked templates.

#include "runner/suite/env_expand.h"

#include <catch2/catch.hpp>
#include <cstdlib>

namespace plumb {
namespace {

TEST_CASE("${NAME} expands from the environment and is redacted") {
  setenv("PLUMB_TEST_TOKEN", "s3cret", 1);
  setenv("PLUMB_TEST_HOST", "127.0.0.1", 1);
  ExpandedString out;
  std::vector<std::string> secrets;
  std::string error;
  REQUIRE(
      ExpandEnv("http://${PLUMB_TEST_HOST}:8088/?t=${PLUMB_TEST_TOKEN}", &out, &secrets, &error));
  CHECK(out.value == "http://127.0.0.1:8088/?t=s3cret");
  CHECK(out.redacted == "http://***:8088/?t=***");
  CHECK(secrets == std::vector<std::string>{"127.0.0.1", "s3cret"});
}

TEST_CASE("$$ is a literal dollar and a lone $ stays") {
  ExpandedString out;
  std::vector<std::string> secrets;
  std::string error;
  REQUIRE(ExpandEnv("cost $$5, $ and $1 stay", &out, &secrets, &error));
  CHECK(out.value == "cost $5, $ and $1 stay");
  CHECK(out.redacted == "cost $$5, $ and $1 stay");
  CHECK(secrets.empty());
  REQUIRE(ExpandEnv("trailing $", &out, &secrets, &error));
  CHECK(out.value == "trailing $");
}

TEST_CASE("an empty value expands but is no secret") {
  setenv("PLUMB_TEST_EMPTY", "", 1);
  ExpandedString out;
  std::vector<std::string> secrets;
  std::string error;
  REQUIRE(ExpandEnv("[${PLUMB_TEST_EMPTY}]", &out, &secrets, &error));
  CHECK(out.value == "[]");
  CHECK(out.redacted == "[***]");
  CHECK(secrets.empty());
}

TEST_CASE("an unset variable is an error naming it") {
  unsetenv("PLUMB_TEST_UNSET");
  ExpandedString out;
  std::string error;
  CHECK_FALSE(ExpandEnv("Bearer ${PLUMB_TEST_UNSET}", &out, nullptr, &error));
  CHECK(error == "environment variable 'PLUMB_TEST_UNSET' is not set");
}

TEST_CASE("malformed references are errors") {
  ExpandedString out;
  std::string error;
  CHECK_FALSE(ExpandEnv("a ${OPEN", &out, nullptr, &error));
  CHECK(error == "unterminated '${' at character 3; write '${NAME}'");
  CHECK_FALSE(ExpandEnv("${1ABC}", &out, nullptr, &error));
  CHECK(error.find("'${1ABC}' is not a valid variable reference") == 0);
  CHECK_FALSE(ExpandEnv("${}", &out, nullptr, &error));
  CHECK_FALSE(ExpandEnv("Bearer $TOKEN", &out, nullptr, &error));
  CHECK(error ==
        "'$TOKEN' is not expanded: write '${TOKEN}' to expand it, or '$$TOKEN' for a "
        "literal '$'");
}

TEST_CASE("RedactEnv keeps the template and never reads the environment") {
  unsetenv("PLUMB_TEST_UNSET");
  ExpandedString out;
  std::string error;
  REQUIRE(RedactEnv("Bearer ${PLUMB_TEST_UNSET}", &out, &error));
  CHECK(out.value == "Bearer ${PLUMB_TEST_UNSET}");
  CHECK(out.redacted == "Bearer ***");
  CHECK_FALSE(RedactEnv("${OPEN", &out, &error));
}

}  // namespace
}  // namespace plumb
