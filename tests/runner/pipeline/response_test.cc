// The reply format of SPEC §5: which replies are answers, abstentions or case errors.
#include "runner/pipeline/response.h"

#include <catch2/catch.hpp>
#include <memory>

#include "runner/pipeline/reply_mapping.h"

using plumb::ParseResponse;
using plumb::ReplyFields;
using plumb::ReplyMapping;
using plumb::Response;

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
  REQUIRE(ParseResponse(body, plumb::ProtocolReplyMapping(), &r, &error));
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
  REQUIRE(ParseResponse(R"({"answer": null})", plumb::ProtocolReplyMapping(), &r, &error));
  CHECK(r.abstained);
  CHECK_FALSE(r.answer.has_value());
  REQUIRE(ParseResponse(R"({"answer": "maybe", "abstained": true})", plumb::ProtocolReplyMapping(),
                        &r, &error));
  CHECK(r.abstained);
  CHECK_FALSE(r.answer.has_value());
  CHECK_FALSE(r.has_retrieved);

  CHECK_FALSE(ParseResponse(R"({"text": "x"})", plumb::ProtocolReplyMapping(), &r, &error));
  CHECK(error == "response has no answer at '/answer'");
  CHECK_FALSE(ParseResponse("Ten minutes.", plumb::ProtocolReplyMapping(), &r, &error));
  CHECK(error == "response is not valid JSON");
  CHECK_FALSE(ParseResponse("[1, 2]", plumb::ProtocolReplyMapping(), &r, &error));
  CHECK(error == "response is not a JSON object");
  CHECK_FALSE(ParseResponse(R"({"answer": 10})", plumb::ProtocolReplyMapping(), &r, &error));
  CHECK(error == "answer at '/answer' must be a string or null, got number");
}

TEST_CASE("malformed citations are errors that name the item") {
  Response r;
  std::string error;
  CHECK_FALSE(ParseResponse(R"({"answer": "a", "citations": [{"doc": "a.md", "start": 3}]})",
                            plumb::ProtocolReplyMapping(), &r, &error));
  CHECK(error == "citations[0]: a span needs both 'start' and 'end'");
  CHECK_FALSE(ParseResponse(R"({"answer": "a", "citations": [{"doc": "a.md"}, {"start": 1}]})",
                            plumb::ProtocolReplyMapping(), &r, &error));
  CHECK(error == "citations[1]: missing string field 'doc'");
  CHECK_FALSE(ParseResponse(R"({"answer": "a", "citations": {"doc": "a.md"}})",
                            plumb::ProtocolReplyMapping(), &r, &error));
  CHECK(error == "citations at '/citations' must be a list");
}

namespace {

std::unique_ptr<ReplyMapping> Mapping(const ReplyFields& fields) {
  std::string error;
  std::unique_ptr<ReplyMapping> mapping = ReplyMapping::Create(fields, &error);
  INFO(error);
  REQUIRE(mapping != nullptr);
  return mapping;
}

}  // namespace

TEST_CASE("JSON Pointers and each list's own member names map a service's own reply shape") {
  // RFC 6901 pointers: "/data/text" is member "text" of member "data"; "/document/path" in a
  // list's member names points into each item.
  ReplyFields fields;
  fields.answer = "/data/text";
  fields.citations = ReplyFields::SourceList{"/data/refs", "source", "from", "to", ""};
  fields.retrieved = ReplyFields::SourceList{"/hits", "/document/path", "offset", "end", ""};
  auto mapping = Mapping(fields);
  Response r;
  std::string error;
  REQUIRE(ParseResponse(R"({"data": {"text": "Ten.", "refs": [{"source": "b.md", "from": 4,
      "to": 9}]}, "hits": [{"document": {"path": "c.md"}, "offset": 1, "end": 2}]})",
                        *mapping, &r, &error));
  CHECK(*r.answer == "Ten.");
  REQUIRE(r.citations.size() == 1);
  CHECK(r.citations[0].doc == "b.md");
  CHECK(*r.citations[0].start == 4);
  CHECK(*r.citations[0].end == 9);
  REQUIRE(r.retrieved.size() == 1);
  CHECK(r.retrieved[0].doc == "c.md");
  CHECK(*r.retrieved[0].start == 1);
  CHECK(r.has_retrieved);
  // The citations' names do not apply to the retrieved list: its items lack /document/path.
  CHECK_FALSE(ParseResponse(R"({"data": {"text": "x"}, "hits": [{"source": "b.md"}]})", *mapping,
                            &r, &error));
  CHECK(error == "retrieved[0]: missing string field '/document/path'");
}

TEST_CASE("a mapped pointer may miss in a reply, and NeverResolved names it once for the run") {
  ReplyFields fields;
  fields.answer = "/data/text";
  fields.citations = ReplyFields::SourceList{"/data/refs", "", "", "", ""};
  fields.latency_ms = "/timing/ms";
  auto mapping = Mapping(fields);
  Response r;
  std::string error;
  REQUIRE(ParseResponse(R"({"data": {"text": "Ten."}})", *mapping, &r, &error));
  CHECK(r.citations.empty());
  CHECK(mapping->NeverResolved().size() == 2);  // /data/refs and /timing/ms so far
  REQUIRE(ParseResponse(R"({"data": {"text": "Ten.", "refs": ["a.md"]}})", *mapping, &r, &error));
  const std::vector<ReplyMapping::Unresolved> never = mapping->NeverResolved();
  REQUIRE(never.size() == 1);
  CHECK(never[0].key == "latency_ms");
  CHECK(never[0].pointer == "/timing/ms");
  CHECK(mapping->replies_read() == 2);
  // The protocol's own shape names no pointer, so it never warns.
  CHECK(plumb::ProtocolReplyMapping().NeverResolved().empty());
}

TEST_CASE("abstention from a boolean, a non-empty refusal string, or a pattern on the answer") {
  ReplyFields fields;
  fields.answer = "/m/content";
  fields.abstained = "/m/declined";
  fields.refusal = "/m/refusal";
  fields.abstain_when = "(?i)\\bI (do not|don't) know\\b";
  auto mapping = Mapping(fields);
  struct Probe {
    const char* reply;
    bool abstains;
  };
  const Probe probes[] = {
      {R"({"m": {"content": "Ten minutes."}})", false},
      {R"({"m": {"content": "Ten minutes.", "declined": true}})", true},
      {R"({"m": {"content": "Sorry.", "refusal": "I cannot help with that."}})", true},
      {R"({"m": {"content": "Ten minutes.", "refusal": ""}})", false},
      {R"({"m": {"content": "Ten minutes.", "refusal": null}})", false},
      {R"({"m": {"content": "Honestly, I don't know."}})", true},
      {R"({"m": {"content": "I DO NOT KNOW"}})", true},
      {R"({"m": {"content": "I don't knowingly sell tickets."}})", false},  // \b after know
      {R"({"m": {"content": null}})", true},
  };
  for (const Probe& probe : probes) {
    INFO(probe.reply);
    Response r;
    std::string error;
    REQUIRE(ParseResponse(probe.reply, *mapping, &r, &error));
    CHECK(r.abstained == probe.abstains);
    CHECK(r.answer.has_value() == !probe.abstains);
  }
  Response r;
  std::string error;
  CHECK_FALSE(ParseResponse(R"({"m": {"content": "x", "refusal": true}})", *mapping, &r, &error));
  CHECK(error == "'refusal' at '/m/refusal' must be a string or null, got boolean");
}

TEST_CASE("token counts: mapped pointers, or input/output_tokens, or prompt/completion_tokens") {
  Response r;
  std::string error;
  REQUIRE(ParseResponse(R"({"answer": "x", "usage": {"prompt_tokens": 812,
      "completion_tokens": 24, "total_tokens": 836}})",
                        plumb::ProtocolReplyMapping(), &r, &error));
  CHECK(*r.input_tokens == 812);
  CHECK(*r.output_tokens == 24);
  REQUIRE(ParseResponse(R"({"answer": "x", "usage": {"input_tokens": 5, "prompt_tokens": 9}})",
                        plumb::ProtocolReplyMapping(), &r, &error));
  CHECK(*r.input_tokens == 5);  // the protocol's own name first
  ReplyFields fields;
  fields.input_tokens = "/meta/tokens/in";
  fields.output_tokens = "/meta/tokens/out";
  auto mapping = Mapping(fields);
  REQUIRE(ParseResponse(R"({"answer": "x", "meta": {"tokens": {"in": 3, "out": 4}}})", *mapping, &r,
                        &error));
  CHECK(*r.input_tokens == 3);
  CHECK(*r.output_tokens == 4);
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
                          plumb::ProtocolReplyMapping(), &r, &error));
    CHECK(r.input_tokens.has_value() == probe.counted);
    if (probe.counted) CHECK(*r.input_tokens == probe.value);
  }
}
