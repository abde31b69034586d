// ReadPlainCaseLine against ReadJsonLine, the general reader it stands in for: on seeded random
// case lines (the plain keys and others, in any order, repeated or missing; strings with every
// escape, surrogates, raw and ill-formed UTF-8; arrays, numbers, nesting; stray text, a BOM),
// every line the plain reader accepts must be one ReadJsonLine parses to a mapping of exactly
// those members, with the same decoded strings and the same columns. RFC 8259 and
// ReadJsonLine's own nlohmann differential test (jsonl_reader_test) decide what is JSON.

#include "runner/suite/plain_case_line.h"

#include <catch2/catch.hpp>
#include <random>
#include <string>

#include "runner/suite/jsonl_reader.h"
#include "tests/support/random_json.h"

namespace plumb {
namespace {

// Half valid strings of a few kinds (ASCII, raw and escaped non-ASCII), half random ones.
std::string SomeString(std::mt19937_64* rng) {
  static const char* const kValid[] = {"\"c1\"", "\"ten minutes\"", "\"caf\xC3\xA9\"",
                                       "\"\\u00e9t\\u00e9\"", "\"\xF0\x9F\x98\x80 pier\""};
  return (*rng)() % 2 ? kValid[(*rng)() % 5] : RandomJsonString(rng);
}

std::string RandomStrings(std::mt19937_64* rng) {
  std::string out = "[";
  const int items = static_cast<int>((*rng)() % 4);
  for (int i = 0; i < items; ++i) {
    if (i > 0) out += (*rng)() % 30 == 0 ? " " : ", ";
    out += (*rng)() % 25 == 0 ? RandomJsonNumber(rng) : SomeString(rng);
  }
  return out + ((*rng)() % 40 == 0 ? "" : "]");
}

std::string RandomMemberValue(std::mt19937_64* rng) {
  switch ((*rng)() % 10) {
    case 0:
      return RandomJsonNumber(rng);
    case 1:
      return (*rng)() % 2 ? "null" : "true";
    case 2:
      return "{\"k\": " + RandomJsonString(rng) + "}";
    case 3:
    case 4:
    case 5:
      return RandomStrings(rng);
    default:
      return RandomJsonString(rng);
  }
}

// Mostly the four plain keys, each with a value of the right type, so that a fair share of the
// lines has the plain shape; now and then another key, an escaped key, or a repeat.
std::string RandomCaseLine(std::mt19937_64* rng) {
  static const char* const kSpace[] = {"", " ", "\t", "\r", "  "};
  auto space = [&] { return std::string(kSpace[(*rng)() % 5]); };
  static const char* const kOtherKeys[] = {"patterns", "input", "sources", "ID", "\\u0069d", ""};
  std::string line = (*rng)() % 50 == 0 ? "\xEF\xBB\xBF" : "";
  line += space() + "{";
  const char* keys[] = {"id", "question", "answers", "tags"};
  std::shuffle(std::begin(keys), std::end(keys), *rng);
  const int members = static_cast<int>((*rng)() % 4 == 0 ? (*rng)() % 6 : 3 + (*rng)() % 2);
  for (int i = 0; i < members; ++i) {
    if (i > 0) line += ",";
    std::string key = i < 4 ? keys[i] : keys[(*rng)() % 4];
    if ((*rng)() % 20 == 0) key = kOtherKeys[(*rng)() % 6];
    std::string value;
    if ((*rng)() % 8 == 0) {
      value = RandomMemberValue(rng);
    } else if (key == "answers" || key == "tags") {
      value = RandomStrings(rng);
    } else {
      value = SomeString(rng);
    }
    line += space() + "\"" + key + "\"" + space() + ":" + space() + value + space();
  }
  line += (*rng)() % 40 == 0 ? "" : "}";
  line += space();
  if ((*rng)() % 40 == 0) line += (*rng)() % 2 ? "x" : std::string(1, '\0');
  return line;
}

const SourceNode* Member(const SourceNode& mapping, const std::string& key) {
  for (const SourceEntry& entry : mapping.entries) {
    if (entry.key.scalar == key) return &entry.value;
  }
  return nullptr;
}

void RequireStrings(const SourceNode* node, const std::vector<std::string>& values) {
  if (node == nullptr) {
    REQUIRE(values.empty());
    return;
  }
  REQUIRE(node->IsSequence());
  REQUIRE(node->items.size() == values.size());
  for (size_t i = 0; i < values.size(); ++i) {
    REQUIRE(node->items[i].IsScalar());
    REQUIRE(node->items[i].quoted);
    REQUIRE(node->items[i].scalar == values[i]);
  }
}

TEST_CASE("plain case lines read as ReadJsonLine reads them, or are declined") {
  std::mt19937_64 rng(20261203);
  int accepted = 0, declined = 0;
  for (int i = 0; i < 200000; ++i) {
    const std::string line = RandomCaseLine(&rng);
    Case gold;
    PlainCaseColumns columns;
    if (!ReadPlainCaseLine(line, &gold, &columns)) {
      ++declined;
      continue;
    }
    ++accepted;
    INFO("line: " << line);
    SourceNode root;
    Diagnostic error;
    REQUIRE(ReadJsonLine(line, "cases.jsonl", 7, &root, &error));
    REQUIRE(root.IsMapping());
    REQUIRE(root.column == columns.object);
    REQUIRE((root.entries.size() == 3 || root.entries.size() == 4));
    for (const SourceEntry& entry : root.entries) {
      const std::string& key = entry.key.scalar;
      REQUIRE((key == "id" || key == "question" || key == "answers" || key == "tags"));
      REQUIRE(Member(root, key) == &entry.value);  // given once
    }
    const SourceNode* id = Member(root, "id");
    REQUIRE(id != nullptr);
    REQUIRE(id->quoted);
    REQUIRE(id->scalar == gold.id);
    REQUIRE(id->column == columns.id);
    const SourceNode* question = Member(root, "question");
    REQUIRE(question != nullptr);
    REQUIRE(question->quoted);
    REQUIRE(question->scalar == gold.question);
    REQUIRE(Member(root, "answers") != nullptr);
    RequireStrings(Member(root, "answers"), gold.answers);
    RequireStrings(Member(root, "tags"), gold.tags);
  }
  // Both sides of the decision are exercised (the counts move only with the generator).
  CHECK(accepted > 10000);
  CHECK(declined > 10000);
}

TEST_CASE("a plain case line's columns count code points, as the general reader's do") {
  // Hand-worked: "é" is two bytes and one column; the tab before '{' is one column.
  const std::string line = "\t{\"question\": \"caf\xC3\xA9?\", \"id\": \"c1\", \"answers\": []}";
  Case gold;
  PlainCaseColumns columns;
  REQUIRE(ReadPlainCaseLine(line, &gold, &columns));
  CHECK(columns.object == 2);
  CHECK(columns.id == 30);  // 30 bytes before the id's quote, 29 code points (é is two bytes)
  CHECK(gold.question == "caf\xC3\xA9?");
  CHECK(gold.answers.empty());
  CHECK(gold.tags.empty());
}

TEST_CASE("a plain case line declines what the general reader must word") {
  Case gold;
  PlainCaseColumns columns;
  for (const char* line : {
           R"({"id": "c1", "question": "q"})",                                    // no answers
           R"({"id": "c1", "question": "q", "answers": [], "id": "c2"})",         // repeated key
           R"({"id": "c1", "question": "q", "answers": [], "patterns": ["x"]})",  // other key
           R"({"id": 1, "question": "q", "answers": []})",                        // not a string
           R"({"id": "c1", "question": "q", "answers": [["a"]]})",                // nested
           R"({"id": "c1", "question": "q", "answers": []} x)",                   // stray text
           "\xEF\xBB\xBF{\"id\": \"c1\", \"question\": \"q\", \"answers\": []}",  // BOM
       }) {
    INFO("line: " << line);
    Case fresh;
    CHECK_FALSE(ReadPlainCaseLine(line, &fresh, &columns));
  }
  CHECK(ReadPlainCaseLine(R"({"answers": ["a"], "tags": ["t"], "question": "q", "id": "c1"})",
                          &gold, &columns));
}

}  // namespace
}  // namespace plumb
