// The reply format of SPEC §5: which replies are answers, abstentions or case errors.
#include "runner/pipeline/response.h"

#include <catch2/catch.hpp>

using plumb::ParseResponse;
using plumb::Response;
using plumb::ResponseMap;

TEST_CASE("the reply of SPEC §5 parses into answer, citations, retrieved and usage") {
  // The example reply printed in SPEC §5.
  const char* body = R"({"answer": "Ten minutes before departure.", "abstained": false,
    "citations": [{"doc": "boarding.md", "start": 120, "end": 168},
                  {"doc": "boarding.md", "quote": "Boarding closes ten minutes before"},
                  {"doc": "fares.md"}],
    "retrieved": [{"doc": "boarding.md", "start": 0, "end": 400}],
    "usage": {"input_tokens": 812, "output_tokens": 24}})";
  Response r;
  std::string error;
  REQUIRE(ParseResponse(body, ResponseMap(), &r, &error));
  CHECK(*r.answer == "Ten minutes before departure.");
  CHECK_FALSE(r.abstained);
  REQUIRE(r.citations.size() == 3);
  CHECK(*r.citations[0].start == 120);
  CHECK(*r.citations[0].end == 168);
  CHECK(*r.citations[1].quote == "Boarding closes ten minutes before");
  CHECK_FALSE(r.citations[2].start.has_value());
  CHECK(r.has_retrieved);
  CHECK(r.retrieved.size() == 1);
  CHECK(*r.input_tokens == 812);
  CHECK(*r.output_tokens == 24);
}

TEST_CASE("answer null and abstained true are abstentions but a missing answer is an error") {
  Response r;
  std::string error;
  REQUIRE(ParseResponse(R"({"answer": null})", ResponseMap(), &r, &error));
  CHECK(r.abstained);
  CHECK_FALSE(r.answer.has_value());
  REQUIRE(ParseResponse(R"({"answer": "maybe", "abstained": true})", ResponseMap(), &r, &error));
  CHECK(r.abstained);
  CHECK_FALSE(r.answer.has_value());
  CHECK_FALSE(r.has_retrieved);

  CHECK_FALSE(ParseResponse(R"({"text": "x"})", ResponseMap(), &r, &error));
  CHECK(error == "response has no answer at '/answer'");
  CHECK_FALSE(ParseResponse("Ten minutes.", ResponseMap(), &r, &error));
  CHECK(error == "response is not valid JSON");
  CHECK_FALSE(ParseResponse("[1, 2]", ResponseMap(), &r, &error));
  CHECK(error == "response is not a JSON object");
  CHECK_FALSE(ParseResponse(R"({"answer": 10})", ResponseMap(), &r, &error));
  CHECK(error == "answer at '/answer' must be a string or null, got number");
}

TEST_CASE("malformed citations are errors that name the item") {
  Response r;
  std::string error;
  CHECK_FALSE(ParseResponse(R"({"answer": "a", "citations": [{"doc": "a.md", "start": 3}]})",
                            ResponseMap(), &r, &error));
  CHECK(error == "citations[0]: a span needs both 'start' and 'end'");
  CHECK_FALSE(ParseResponse(R"({"answer": "a", "citations": [{"doc": "a.md"}, {"start": 1}]})",
                            ResponseMap(), &r, &error));
  CHECK(error == "citations[1]: missing string field 'doc'");
  CHECK_FALSE(
      ParseResponse(R"({"answer": "a", "citations": {"doc": "a.md"}})", ResponseMap(), &r, &error));
  CHECK(error == "citations at '/citations' must be a list");
}

TEST_CASE("JSON Pointers and renamed citation fields map a service's own reply shape") {
  // RFC 6901 pointers: "/data/text" is member "text" of member "data".
  ResponseMap map = ResponseMap::FromConfig({{"answer", "/data/text"},
                                             {"citations", "/data/refs"},
                                             {"fields.doc", "source"},
                                             {"fields.start", "from"},
                                             {"fields.end", "to"}});
  Response r;
  std::string error;
  REQUIRE(ParseResponse(
      R"({"data": {"text": "Ten.", "refs": [{"source": "b.md", "from": 4, "to": 9}]}})", map, &r,
      &error));
  CHECK(*r.answer == "Ten.");
  REQUIRE(r.citations.size() == 1);
  CHECK(r.citations[0].doc == "b.md");
  CHECK(*r.citations[0].start == 4);
  CHECK(*r.citations[0].end == 9);
}

TEST_CASE("a pointer the map names explicitly must resolve") {
  // A mistyped `map: {citations: /data/refz}` would otherwise score every case as uncited.
  ResponseMap map =
      ResponseMap::FromConfig({{"answer", "/data/text"}, {"citations", "/data/refs"}});
  Response r;
  std::string error;
  CHECK_FALSE(ParseResponse(R"({"data": {"text": "Ten."}})", map, &r, &error));
  CHECK(error == "response has no citations at '/data/refs'");
  // The default keys stay optional: a reply without "citations" simply cites nothing.
  REQUIRE(ParseResponse(R"({"answer": "Ten."})", ResponseMap(), &r, &error));
  CHECK(r.citations.empty());
}

TEST_CASE(
    "usage counts that are negative, fractional beyond a billion or not numbers are left out") {
  // 1e31 input tokens does not fit the run's int64_t totals (found by tests/fuzz/reply_fuzz.cc).
  struct Probe {
    const char* usage;
    bool counted;
    int64_t value;
  };
  const Probe probes[] = {
      {R"({"input_tokens": 812})", true, 812},
      {R"({"input_tokens": 812.9})", true, 812},
      {R"({"input_tokens": 1000000000})", true, 1000000000},
      {R"({"input_tokens": 1000000001})", false, 0},
      {R"({"input_tokens": 1e31})", false, 0},
      {R"({"input_tokens": -5})", false, 0},
      {R"({"input_tokens": 18446744073709551615})", false, 0},
      {R"({"input_tokens": "812"})", false, 0},
  };
  for (const Probe& probe : probes) {
    INFO(probe.usage);
    Response r;
    std::string error;
    REQUIRE(ParseResponse(std::string(R"({"answer": "x", "usage": )") + probe.usage + "}",
                          ResponseMap(), &r, &error));
    CHECK(r.input_tokens.has_value() == probe.counted);
    if (probe.counted) CHECK(*r.input_tokens == probe.value);
  }
}
