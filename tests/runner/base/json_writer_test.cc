// JsonWriter against nlohmann::json's dump() as the oracle for layout and string escaping (the
// library the project already reads every JSON file with), and against RFC 8259 for what a
// reader must get back.

#include "runner/base/json_writer.h"

#include <catch2/catch.hpp>
#include <charconv>
#include <cmath>
#include <cstring>
#include <limits>
#include <random>
#include <string>

namespace plumb {
namespace {

// A seeded random tree with every kind of value, strings drawn from a byte alphabet rich in
// escapes and multi-byte UTF-8.
nlohmann::json RandomTree(std::mt19937_64* rng, int depth) {
  static const char* const kPieces[] = {"a",  "Z",  " ",  "\"", "\\",           "/",    "\b",
                                        "\f", "\n", "\r", "\t", "\x01",         "\x1f", "\x7f",
                                        "é",  "—",  "日", "😀",  "\xEF\xBF\xBD", "key"};
  std::uniform_int_distribution<int> kind(0, depth > 3 ? 4 : 6);
  auto text = [&] {
    std::string s;
    const int pieces = static_cast<int>((*rng)() % 6);
    for (int i = 0; i < pieces; ++i) s += kPieces[(*rng)() % (sizeof kPieces / sizeof *kPieces)];
    return s;
  };
  switch (kind(*rng)) {
    case 0:
      return nullptr;
    case 1:
      return ((*rng)() & 1) != 0;
    case 2:
      return static_cast<int64_t>((*rng)()) >> ((*rng)() % 64);
    case 3:
      return text();
    case 4:
      return std::ldexp(static_cast<double>((*rng)() % 100000) - 50000,
                        static_cast<int>((*rng)() % 80) - 40);
    case 5: {
      nlohmann::json array = nlohmann::json::array();
      const int n = static_cast<int>((*rng)() % 4);
      for (int i = 0; i < n; ++i) array.push_back(RandomTree(rng, depth + 1));
      return array;
    }
    default: {
      nlohmann::json object = nlohmann::json::object();
      const int n = static_cast<int>((*rng)() % 4);
      for (int i = 0; i < n; ++i) object[text()] = RandomTree(rng, depth + 1);
      return object;
    }
  }
}

std::string StringText(std::string_view text) {
  JsonWriter w;
  w.String(text);
  return w.Take();
}

std::string Written(const nlohmann::json& value, int indent) {
  JsonWriter w(indent);
  w.Value(value);
  return w.Take();
}

TEST_CASE("json writer lays out and escapes exactly as nlohmann dump does", "[json_writer]") {
  std::mt19937_64 rng(20261202);
  int trees = 0;
  for (int i = 0; i < 3000; ++i) {
    const nlohmann::json tree = RandomTree(&rng, 0);
    // Doubles are compared by value below: dump() prints Grisu2 digits, which are not always
    // the shortest, while the writer prints the shortest round-trip form.
    const nlohmann::json reread = nlohmann::json::parse(Written(tree, -1));
    REQUIRE(reread == tree);
    if (tree.dump().find_first_of(".e") == std::string::npos) {
      REQUIRE(Written(tree, -1) == tree.dump());
      REQUIRE(Written(tree, 2) == tree.dump(2));
      ++trees;
    }
  }
  CHECK(trees > 1000);  // trees without a double, compared byte for byte
}

TEST_CASE("json writer members keep the order they were written in", "[json_writer]") {
  JsonWriter w(2);
  w.BeginObject().Member("z", 1).Member("a", "x").Key("list").BeginArray().EndArray();
  w.Key("empty").BeginObject().EndObject().Member("tags", std::vector<std::string>{"t1", "t2"});
  w.EndObject();
  CHECK(w.Take() ==
        "{\n  \"z\": 1,\n  \"a\": \"x\",\n  \"list\": [],\n  \"empty\": {},\n  \"tags\": [\n"
        "    \"t1\",\n    \"t2\"\n  ]\n}");
}

TEST_CASE("json writer replaces ill-formed utf-8 with one U+FFFD per maximal subpart",
          "[json_writer]") {
  // Unicode 15 §3.9, Table 3-8: "\xF1\x80\x80" is one maximal subpart, "\xE1\x80" another,
  // "\xC2" and "\x80" one each.
  std::string out = StringText("a\xF1\x80\x80\xE1\x80\xC2\x80z\xEF\xBF\xBD");
  CHECK(out == "\"a\xEF\xBF\xBD\xEF\xBF\xBD\xC2\x80z\xEF\xBF\xBD\"");
  out = StringText("\xED\xA0\x80");  // an encoded surrogate: three subparts
  CHECK(out == "\"\xEF\xBF\xBD\xEF\xBF\xBD\xEF\xBF\xBD\"");
  CHECK(nlohmann::json::accept(out));
}

TEST_CASE("json writer prints doubles in the shortest form that reads back exactly",
          "[json_writer]") {
  auto text = [](double v) {
    JsonWriter w;
    w.Double(v);
    return w.Take();
  };
  // Shortest round-trip digits (the C++17 to_chars guarantee, [charconv.to.chars]).
  CHECK(text(0.1) == "0.1");
  CHECK(text(1.0) == "1.0");
  CHECK(text(-0.0) == "-0.0");
  CHECK(text(0.7664510714285575) == "0.7664510714285575");
  CHECK(text(1e300) == "1e+300");
  CHECK(text(5e-324) == "5e-324");
  CHECK(text(123456789.0) == "123456789.0");
  CHECK(text(std::nan("")) == "null");
  CHECK(text(std::numeric_limits<double>::infinity()) == "null");
  // Whole numbers near the writer's short cut for those below 10^4 read as to_chars has them,
  // with ".0" added (10^5 is where its shortest form turns to an exponent: "1e+05").
  for (int i = -10010; i <= 10010; ++i) {
    for (double v : {static_cast<double>(i), i + 0.5}) {
      char digits[32];
      std::string expected(digits, std::to_chars(digits, digits + 32, v).ptr);
      if (expected.find_first_of(".e") == std::string::npos) expected += ".0";
      REQUIRE(text(v) == expected);
    }
  }
  CHECK(text(100000.0) == "1e+05");
  std::mt19937_64 rng(7);
  for (int i = 0; i < 100000; ++i) {
    uint64_t bits = rng();
    double v;
    std::memcpy(&v, &bits, sizeof v);
    if (!std::isfinite(v)) continue;
    const nlohmann::json back = nlohmann::json::parse(text(v));
    REQUIRE(back.is_number_float());
    REQUIRE(back.get<double>() == v);
  }
}

}  // namespace
}  // namespace plumb

namespace plumb {
namespace {

TEST_CASE("json writer grows its buffer across many pieces and starts again after take",
          "[json_writer]") {
  nlohmann::json big = nlohmann::json::array();
  for (int i = 0; i < 20000; ++i) big.push_back({{"id", "c" + std::to_string(i)}, {"n", i}});
  JsonWriter w(2);
  w.Value(big);
  const std::string text = w.Take();
  CHECK(text.size() > 800000);
  CHECK(text == big.dump(2));
  w.BeginArray().Int(1).EndArray();
  CHECK(w.Take() == "[\n  1\n]");
}

}  // namespace
}  // namespace plumb

namespace plumb {
namespace {

TEST_CASE("json writer parts written apart read as if written in one writer", "[json_writer]") {
  // As run.json is written: a head that opens an inner object, its members from a part
  // writer JsonWriter(indent, 2), and a tail writer that closes it (MarkFilled when members were
  // written) and goes on at the outer level. The oracle is nlohmann's dump() of the whole, in
  // compact and indented layouts, with members and without.
  for (int indent : {-1, 2}) {
    for (bool with_members : {true, false}) {
      nlohmann::json whole = {{"a", 1}, {"cases", nlohmann::json::object()}, {"z", "end"}};
      JsonWriter head(indent);
      head.BeginObject().Key("a").Int(1).Key("cases").BeginObject();
      JsonWriter part(indent, 2);
      if (with_members) {
        part.Key("c1").BeginObject().Key("q").String("x").EndObject();
        part.Key("c2").StringArray({"p", "q"});
        whole["cases"] = {{"c1", {{"q", "x"}}}, {"c2", {"p", "q"}}};
      }
      JsonWriter tail(indent, 2);
      if (with_members) tail.MarkFilled();
      tail.EndObject().MarkFilled().Key("z").String("end").EndObject();
      INFO("indent " << indent << ", members " << with_members);
      CHECK(head.Take() + part.Take() + tail.Take() == whole.dump(indent));
    }
  }
}

}  // namespace
}  // namespace plumb

namespace plumb {
namespace {

TEST_CASE("json writer compacts what lies deeper than a depth, one line per entry",
          "[json_writer]") {
  // run.json's case entries: indented down to the entries, each entry on one line. The oracle
  // is nlohmann's dump(): the same tree, read back, and the layout line by line.
  nlohmann::json whole = {{"a", 1},
                          {"cases",
                           {{"c1", {{"q", "x"}, {"t", {"p", "q"}}, {"e", nlohmann::json::array()}}},
                            {"c2", {{"n", {{"v", 1.5}}}}}}}};
  JsonWriter w(2);
  w.CompactDeeperThan(2);
  w.BeginObject().Key("a").Int(1).Key("cases").BeginObject();
  w.Key("c1").BeginObject().Key("q").String("x").Key("t").StringArray({"p", "q"});
  w.Key("e").BeginArray().EndArray().EndObject();
  w.Key("c2").BeginObject().Key("n").BeginObject().Key("v").Double(1.5).EndObject().EndObject();
  w.EndObject().EndObject();
  const std::string text = w.Take();
  CHECK(nlohmann::json::parse(text) == whole);
  CHECK(text ==
        "{\n"
        "  \"a\": 1,\n"
        "  \"cases\": {\n"
        "    \"c1\": {\"q\":\"x\",\"t\":[\"p\",\"q\"],\"e\":[]},\n"
        "    \"c2\": {\"n\":{\"v\":1.5}}\n"
        "  }\n"
        "}");
  // Each entry's line holds what a compact writer gives for the same entry.
  JsonWriter compact;
  compact.BeginObject().Key("q").String("x").Key("t").StringArray({"p", "q"});
  compact.Key("e").BeginArray().EndArray().EndObject();
  CHECK(text.find("\"c1\": " + compact.Take() + ",\n") != std::string::npos);
}

TEST_CASE("json writer nests deeper than the levels it keeps inline", "[json_writer]") {
  // Replies are untrusted and may nest deeply; dump() stays the oracle past the inline levels.
  nlohmann::json tree = {{"leaf", 1}};
  for (int depth = 0; depth < 100; ++depth) {
    tree = depth % 2 == 0 ? nlohmann::json::array({tree, depth}) : nlohmann::json{{"k", tree}};
  }
  JsonWriter compact;
  compact.Value(tree);
  CHECK(compact.Take() == tree.dump());
  JsonWriter indented(2);
  indented.Value(tree);
  CHECK(indented.Take() == tree.dump(2));
}

}  // namespace
}  // namespace plumb

namespace plumb {
namespace {

TEST_CASE("json writer finds a byte to escape at every position of short and long strings",
          "[json_writer]") {
  // The plain-run scan reads 16 bytes at a time and overlaps the last 16; a string shorter than
  // 16 is read as two overlapping 8-byte words, or byte by byte below 8: one byte that needs
  // escaping (or is UTF-8, or is the plain DEL) at each position of strings of 0 to 40 bytes,
  // then two at every pair of positions of strings of up to 17 (where a borrow in the word test
  // could mark a later byte), against dump().
  const char* const kBytes[] = {"\"", "\\", "\n", "\x01", "\x1f", "\x7f", "\xC3\xA9", " ", "~"};
  int compared = 0;
  for (size_t length = 0; length <= 40; ++length) {
    for (size_t at = 0; at < std::max<size_t>(length, 1); ++at) {
      for (const char* special : kBytes) {
        std::string text(length, 'x');
        if (length > 0) text.replace(at, 1, special);
        CHECK(StringText(text) == nlohmann::json(text).dump());
        ++compared;
      }
    }
  }
  const std::string kFirst[] = {"\"", "\x01", "\x7f", "\xC3\xA9"};
  const std::string kSecond[] = {"\\", "\x1f", "~", "\n"};
  for (size_t length = 2; length <= 17; ++length) {
    for (size_t i = 0; i < length; ++i) {
      for (const std::string& first : kFirst) {
        for (size_t j = i + first.size(); j < length; ++j) {
          for (const std::string& second : kSecond) {
            std::string text(length, 'x');
            text.replace(i, first.size(), first);
            text[j] = second[0];
            CHECK(StringText(text) == nlohmann::json(text).dump());
            ++compared;
          }
        }
      }
    }
  }
  CHECK(compared > 19000);
}

}  // namespace
}  // namespace plumb
