// FlatReply against nlohmann::json, the general path it stands in for: on seeded random lines
// (flat and nested objects, every JSON escape, surrogates paired and lone, raw and ill-formed
// UTF-8, controls, integers and doubles of many spellings, repeated keys, stray text), every
// line FlatReply accepts must be one nlohmann parses to an object that JsonWriter::Value writes
// exactly as FlatReply::Write does. RFC 8259 decides what is JSON; nlohmann is the oracle.

#include "runner/pipeline/flat_reply.h"

#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>
#include <random>
#include <string>

#include "runner/pipeline/reply_mapping.h"
#include "tests/support/random_json.h"

namespace plumb {
namespace {

std::string RandomValue(std::mt19937_64* rng, int depth) {
  switch ((*rng)() % (depth > 1 ? 6 : 8)) {
    case 0:
    case 1:
      return RandomJsonString(rng);
    case 2:
      return RandomJsonNumber(rng);
    case 3:
      return "true";
    case 4:
      return (*rng)() % 2 ? "false" : "null";
    case 5:
      return (*rng)() % 10 == 0 ? "nul" : "null";
    case 6:
      return "[" + RandomValue(rng, depth + 1) + "]";
    default:
      return "{\"k\": " + RandomValue(rng, depth + 1) + "}";
  }
}

std::string RandomLine(std::mt19937_64* rng) {
  static const char* const kKeys[] = {"id",   "answer", "abstained",   "latency_ms", "repeat",
                                      "note", "",       "caf\xC3\xA9", "a\\u0062",   "id"};
  static const char* const kSpace[] = {"", " ", "\t", "\r\n", "  "};
  auto space = [&] { return std::string(kSpace[(*rng)() % 5]); };
  std::string line = (*rng)() % 50 == 0 ? "\xEF\xBB\xBF" : "";
  line += space() + "{";
  const int members = static_cast<int>((*rng)() % 5);
  for (int i = 0; i < members; ++i) {
    if (i > 0) line += ",";
    line += space() + "\"" + kKeys[(*rng)() % (sizeof kKeys / sizeof *kKeys)] + "\"" + space() +
            ":" + space() + RandomValue(rng, 0) + space();
  }
  line += "}" + space();
  if ((*rng)() % 40 == 0) line += "x";
  if ((*rng)() % 60 == 0) line = "[" + line + "]";
  return line;
}

TEST_CASE("flat replies read as nlohmann reads them, or are declined") {
  std::mt19937_64 rng(20261202);
  int accepted = 0, declined_valid = 0, invalid = 0;
  FlatReply reply;
  for (int i = 0; i < 200000; ++i) {
    const std::string line = RandomLine(&rng);
    const nlohmann::json parsed = nlohmann::json::parse(line, nullptr, /*allow_exceptions=*/false);
    const bool flat = ReadFlatReply(line, &reply);
    if (!flat) {
      (parsed.is_discarded() ? invalid : declined_valid) += 1;
      continue;
    }
    INFO("line: " << line);
    REQUIRE(!parsed.is_discarded());
    REQUIRE(parsed.is_object());
    JsonWriter general, fast;
    general.Value(parsed);
    reply.Write(&fast);
    REQUIRE(fast.Take() == general.Take());
    ++accepted;
  }
  // The generator must exercise all three outcomes in earnest.
  CHECK(accepted > 40000);
  CHECK(declined_valid > 10000);
  CHECK(invalid > 10000);
}

// A prediction line: mostly the keys plumb score reads, each with a likely value or a random one.
std::string RandomPrediction(std::mt19937_64* rng) {
  static const char* const kKeys[] = {"id",     "answer",    "abstained", "latency_ms",
                                      "repeat", "citations", "usage",     "note"};
  static const char* const kLikely[] = {
      "\"c7\"", "\"ten minutes\"", "false", "12.5", "2", "[]", "{}", "null"};
  std::string line = "{";
  const int members = 1 + static_cast<int>((*rng)() % 5);
  for (int i = 0; i < members; ++i) {
    const size_t key = i == 0 ? 0 : i == 1 ? 1 : (*rng)() % 8;
    const std::string value = (*rng)() % 3 == 0 ? RandomValue(rng, 0) : kLikely[key];
    line += std::string(i > 0 ? ", " : "") + "\"" + kKeys[key] + "\": " + value;
  }
  return line + "}";
}

TEST_CASE("flat predictions read as the general path reads them, or are declined") {
  // The general path: nlohmann::json::parse, then ParseResponseJson with the default map (and
  // the "id", "repeat" and "latency_ms" reads of plumb score).
  std::mt19937_64 rng(20261203);
  int accepted = 0;
  FlatReply reply;
  for (int i = 0; i < 100000; ++i) {
    const std::string line = RandomPrediction(&rng);
    FlatPrediction flat;
    if (!ReadFlatPrediction(line, 1000, &reply, &flat)) continue;
    INFO("line: " << line);
    const nlohmann::json json = nlohmann::json::parse(line, nullptr, /*allow_exceptions=*/false);
    REQUIRE(json.is_object());
    REQUIRE(json["id"].is_string());
    CHECK(json["id"].get<std::string>() == flat.id);
    if (json.contains("repeat")) {
      REQUIRE(json["repeat"].is_number_integer());
      CHECK(json["repeat"].get<int64_t>() == flat.repeat);
    } else {
      CHECK(flat.repeat == 0);
    }
    const bool timed = json.contains("latency_ms") && json["latency_ms"].is_number();
    CHECK(flat.latency_ms == (timed ? json["latency_ms"].get<double>() : 0.0));
    Response general;
    std::string error;
    REQUIRE(ParseResponseJson(json, plumb::ProtocolReplyMapping(), &general, &error));
    CHECK(general.answer == flat.parsed.answer);
    CHECK(general.abstained == flat.parsed.abstained);
    CHECK(general.citations.empty());
    CHECK(!general.has_retrieved);
    CHECK(!general.input_tokens.has_value());
    ++accepted;
  }
  CHECK(accepted > 10000);  // about one line in six
  // Declined on purpose: lists and usage, a repeat out of range, no answer.
  FlatPrediction flat;
  CHECK(!ReadFlatPrediction(R"({"id": "a", "answer": "x", "citations": []})", 1000, &reply, &flat));
  CHECK(!ReadFlatPrediction(R"({"id": "a", "answer": "x", "repeat": 1001})", 1000, &reply, &flat));
  CHECK(!ReadFlatPrediction(R"({"id": "a"})", 1000, &reply, &flat));
  CHECK(
      ReadFlatPrediction(R"({"id": "a", "answer": "x", "abstained": true})", 1000, &reply, &flat));
  CHECK(flat.parsed.abstained);
  CHECK(!flat.parsed.answer.has_value());
}

TEST_CASE("a flat reply's members by key") {
  FlatReply reply;
  REQUIRE(ReadFlatReply(R"({"id": "c1", "answer": "ten \u00e9", "latency_ms": 12.5, "n": -3})",
                        &reply));
  REQUIRE(reply.Find("answer") != nullptr);
  CHECK(reply.Find("answer")->text == "ten \xC3\xA9");
  CHECK(reply.Find("latency_ms")->number == 12.5);
  CHECK(reply.Find("n")->integer == -3);
  CHECK(reply.Find("missing") == nullptr);
  // Sorted as nlohmann's std::map sorts its keys.
  CHECK(reply.members[0].first == "answer");
  CHECK(reply.members[3].first == "n");
}

}  // namespace
}  // namespace plumb
