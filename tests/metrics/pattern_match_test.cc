// pattern_match (SPEC §6.2): RE2 patterns searched, unanchored, in the raw answer. Expected
// matches follow RE2's documented syntax (github.com/google/re2/wiki/Syntax, from memory); error
// messages are compared with RE2's own message for the same pattern.

#include "metrics/pattern_match.h"

#include <re2/re2.h>

#include <catch2/catch.hpp>
#include <string>
#include <utility>
#include <vector>

using plumb::metrics::PatternSet;

TEST_CASE("A suite's pattern matches anywhere in the raw answer", "[pattern_match]") {
  PatternSet set;
  std::string error;
  REQUIRE(PatternSet::Compile({R"(\b(10|ten)\s+min)"}, &set, &error));
  CHECK(set.size() == 1);
  CHECK(set.AnyMatch("Boarding closes ten minutes before departure."));
  CHECK(set.AnyMatch("10  min"));
  // Must not match: another number, a word boundary missing, and case (RE2 is case-sensitive).
  CHECK_FALSE(set.AnyMatch("Boarding closes 15 minutes before departure."));
  CHECK_FALSE(set.AnyMatch("often minutes"));
  CHECK_FALSE(set.AnyMatch("TEN MINUTES"));
  CHECK_FALSE(set.AnyMatch(""));
}

TEST_CASE("Any of several patterns is enough", "[pattern_match]") {
  PatternSet set;
  std::string error;
  REQUIRE(PatternSet::Compile({"^Pier [0-9]+$", "(?i)north pier"}, &set, &error));
  CHECK(set.AnyMatch("Pier 4"));
  CHECK(set.AnyMatch("Go to the NORTH PIER."));
  CHECK_FALSE(set.AnyMatch("Go to Pier 4 now"));  // anchored pattern, other one absent
}

TEST_CASE("An empty pattern set matches nothing", "[pattern_match]") {
  PatternSet set;
  std::string error;
  REQUIRE(PatternSet::Compile({}, &set, &error));
  CHECK(set.empty());
  CHECK_FALSE(set.AnyMatch("anything"));
}

TEST_CASE("Syntax errors name the pattern and RE2's message", "[pattern_match]") {
  PatternSet set;
  std::string error;
  REQUIRE(PatternSet::Compile({"kept"}, &set, &error));
  CHECK_FALSE(PatternSet::Compile({"fine", "(unclosed"}, &set, &error));
  RE2::Options quiet;
  quiet.set_log_errors(false);
  const RE2 reference("(unclosed", quiet);
  REQUIRE_FALSE(reference.ok());
  CHECK(error.find("pattern 1") != std::string::npos);
  CHECK(error.find("(unclosed") != std::string::npos);
  CHECK(error.find(reference.error()) != std::string::npos);
  // The failed compile left the earlier set in place.
  CHECK(set.AnyMatch("kept"));
  // Perl constructs RE2 rejects by design (backreferences, lookaround) are errors too.
  CHECK_FALSE(PatternSet::Compile({R"((a)\1)"}, &set, &error));
  CHECK(error.find("pattern 0") != std::string::npos);
  CHECK_FALSE(PatternSet::Compile({"a(?=b)"}, &set, &error));
}

TEST_CASE("A pattern beyond the memory budget fails to compile", "[pattern_match]") {
  // \pL is a class of hundreds of UTF-8 ranges; a thousand copies need far more than 8 MiB.
  PatternSet set;
  std::string error;
  CHECK_FALSE(PatternSet::Compile({R"(\pL{1000})"}, &set, &error));
  CHECK(error.find("pattern 0") != std::string::npos);
}

TEST_CASE("Matching survives invalid UTF-8 and the set moves", "[pattern_match]") {
  PatternSet set;
  std::string error;
  REQUIRE(PatternSet::Compile({"ferry"}, &set, &error));
  CHECK(set.AnyMatch("the \xFF\xFE ferry"));
  PatternSet moved = std::move(set);
  CHECK(moved.AnyMatch("ferry"));
}
