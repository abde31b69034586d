// ${VAR} expansion for pipeline configs (SPEC §5): hand-worked templates.

#include "runner/suite/env_expand.h"

#include <algorithm>
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

// Issue 17 item 11: a token with '&', '=', '/' or a space went into the URL raw and split the
// query (or the path). Expected encodings from RFC 3986 §2.1 and §2.3 (unreserved characters
// stay), checked with /usr/bin/python3: urllib.parse.quote('a&b=c/d e+é~_.-', safe='') ==
// 'a%26b%3Dc%2Fd%20e%2B%C3%A9~_.-'.
TEST_CASE("a ${VAR} inside a URL is percent-encoded in the path, query and user info") {
  setenv("PLUMB_TEST_URL_TOKEN", "a&b=c/d e+\xC3\xA9~_.-", 1);
  setenv("PLUMB_TEST_URL_HOST", "127.0.0.1:8088", 1);
  ExpandedString out;
  std::vector<std::string> secrets;
  std::string error;
  REQUIRE(ExpandEnvInUrl(
      "http://${PLUMB_TEST_URL_HOST}/v1/${PLUMB_TEST_URL_TOKEN}?t=${PLUMB_TEST_URL_TOKEN}#x", &out,
      &secrets, &error));
  CHECK(
      out.value ==
      "http://127.0.0.1:8088/v1/a%26b%3Dc%2Fd%20e%2B%C3%A9~_.-?t=a%26b%3Dc%2Fd%20e%2B%C3%A9~_.-#x");
  CHECK(out.redacted == "http://***/v1/***?t=***#x");
  // The raw value and the form the URL carries are both redacted wherever they are echoed.
  CHECK(std::count(secrets.begin(), secrets.end(), "a%26b%3Dc%2Fd%20e%2B%C3%A9~_.-") >= 1);
  CHECK(std::count(secrets.begin(), secrets.end(), "a&b=c/d e+\xC3\xA9~_.-") >= 1);

  REQUIRE(
      ExpandEnvInUrl("https://${PLUMB_TEST_URL_TOKEN}@example.invalid/", &out, nullptr, &error));
  CHECK(out.value == "https://a%26b%3Dc%2Fd%20e%2B%C3%A9~_.-@example.invalid/");
}

TEST_CASE("a ${VAR} in a URL's host that cannot be a host is an error naming it") {
  setenv("PLUMB_TEST_URL_BAD_HOST", "evil.invalid/x?", 1);
  ExpandedString out;
  std::string error;
  CHECK_FALSE(ExpandEnvInUrl("http://${PLUMB_TEST_URL_BAD_HOST}/answer", &out, nullptr, &error));
  CHECK(error.find("the value of 'PLUMB_TEST_URL_BAD_HOST' goes into the URL's host and port") ==
        0);
  CHECK(error.find("only values in the path, query or user info are percent-encoded") !=
        std::string::npos);
}

}  // namespace
}  // namespace plumb
