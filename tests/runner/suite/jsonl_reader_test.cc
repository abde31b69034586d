// ReadJsonLine (runner/suite/jsonl_reader.h): the positioned SourceNode tree it builds, the RFC
// 8259 grammar it enforces, and a differential check against nlohmann::json 3.11, the reference
// parser the project already trusts, over a few hundred thousand mutated lines. Columns are
// counted by hand on the line written beside them (1-based, in code points); a ruler comment
// marks every tenth column.

#include "runner/suite/jsonl_reader.h"

#include <catch2/catch.hpp>
#include <charconv>
#include <cstdio>
#include <cstdlib>
#include <nlohmann/json.hpp>
#include <random>
#include <string>
#include <vector>

#include "runner/base/code_points.h"

namespace plumb {
namespace {

using Kind = SourceNode::Kind;

struct Read {
  bool ok = false;
  SourceNode root;
  Diagnostic error;
};

Read ReadLine(std::string_view line) {
  Read r;
  r.ok = ReadJsonLine(line, "gen.jsonl", 7, &r.root, &r.error);
  return r;
}

void CheckAt(const SourceNode& node, Kind kind, int column) {
  CHECK(node.kind == kind);
  CHECK(node.line == 7);
  CHECK(node.column == column);
}

void CheckString(const SourceNode& node, const std::string& text, int column) {
  CheckAt(node, Kind::kScalar, column);
  CHECK(node.quoted);
  CHECK(node.scalar == text);
}

void CheckPlain(const SourceNode& node, const std::string& text, int column) {
  CheckAt(node, Kind::kScalar, column);
  CHECK_FALSE(node.quoted);
  CHECK(node.scalar == text);
}

std::string Nested(int depth, const std::string& open, const std::string& inner,
                   const std::string& close) {
  std::string out;
  for (int i = 0; i < depth; ++i) out += open;
  out += inner;
  for (int i = 0; i < depth; ++i) out += close;
  return out;
}

TEST_CASE("a case object line: every key and value with its kind, text and column") {
  //                         1         2         3         4         5         6         7
  //                1234567890123456789012345678901234567890123456789012345678901234567890123
  Read r = ReadLine(
      R"({"id": "c0", "n": -1.5e3, "ok": true, "no": false, "none": null, "t": ["a", 7]})");
  REQUIRE(r.ok);
  CheckAt(r.root, Kind::kMapping, 1);
  REQUIRE(r.root.entries.size() == 6);
  const std::vector<SourceEntry>& e = r.root.entries;
  CheckString(e[0].key, "id", 2);
  CheckString(e[0].value, "c0", 8);
  CheckString(e[1].key, "n", 14);
  CheckPlain(e[1].value, "-1.5e3", 19);  // numbers keep the text as written
  CheckString(e[2].key, "ok", 27);
  CheckPlain(e[2].value, "true", 33);
  CheckString(e[3].key, "no", 39);
  CheckPlain(e[3].value, "false", 45);
  CheckString(e[4].key, "none", 52);
  CheckAt(e[4].value, Kind::kNull, 60);
  CheckString(e[5].key, "t", 66);
  CheckAt(e[5].value, Kind::kSequence, 71);
  REQUIRE(e[5].value.items.size() == 2);
  CheckString(e[5].value.items[0], "a", 72);
  CheckPlain(e[5].value.items[1], "7", 77);
}

TEST_CASE("columns count code points, not bytes, after non-ASCII text") {
  // "Le café — ferry" is 15 code points in 18 bytes (é is 2 bytes, the em dash 3): the string
  // with its quotes spans columns 7 to 23, so "v" starts at 26, not at byte 29.
  Read r = ReadLine("{\"k\": \"Le caf\xC3\xA9 \xE2\x80\x94 ferry\", \"v\": 1}");
  REQUIRE(r.ok);
  REQUIRE(r.root.entries.size() == 2);
  CheckString(r.root.entries[0].value, "Le caf\xC3\xA9 \xE2\x80\x94 ferry", 7);
  CheckString(r.root.entries[1].key, "v", 26);
  CheckPlain(r.root.entries[1].value, "1", 31);
}

TEST_CASE("escapes are resolved and columns count them as written") {
  // RFC 8259 §7: the two-character escapes, \u in the BMP, a surrogate pair for U+1F600
  // (UTF-8 F0 9F 98 80), and \u0000 as a NUL byte inside the string.
  //                         1         2         3         4         5         6
  //                1234567890123456789012345678901234567890123456789012345678901234567
  Read r = ReadLine(R"(["a\"b\\c\/d\b\f\n\r\t", "\u00e9\u20AC", "\ud83d\ude00", "x\u0000y"])");
  REQUIRE(r.ok);
  REQUIRE(r.root.items.size() == 4);
  CheckString(r.root.items[0], "a\"b\\c/d\b\f\n\r\t", 2);
  CheckString(r.root.items[1], "\xC3\xA9\xE2\x82\xAC", 26);  // é and the euro sign
  CheckString(r.root.items[2], "\xF0\x9F\x98\x80", 42);
  CheckString(r.root.items[3], std::string("x\0y", 3), 58);
}

TEST_CASE("numbers keep their text, beyond int64 and underflowing to zero too") {
  //                         1         2         3         4         5         6
  //                1234567890123456789012345678901234567890123456789012345678901234
  Read r = ReadLine("[-0, 0.5, 1E+2, 2.5e-3, 123456789012345678901234, 1e-400, 0e999]");
  REQUIRE(r.ok);
  REQUIRE(r.root.items.size() == 7);
  CheckPlain(r.root.items[0], "-0", 2);
  CheckPlain(r.root.items[1], "0.5", 6);
  CheckPlain(r.root.items[2], "1E+2", 11);
  CheckPlain(r.root.items[3], "2.5e-3", 17);
  CheckPlain(r.root.items[4], "123456789012345678901234", 25);
  CheckPlain(r.root.items[5], "1e-400", 51);
  CheckPlain(r.root.items[6], "0e999", 59);
}

TEST_CASE("a top-level scalar, whitespace around it, and duplicate keys kept in order") {
  Read text = ReadLine(R"("just text")");
  REQUIRE(text.ok);
  CheckString(text.root, "just text", 1);

  Read number = ReadLine(" \t42\r");  // RFC 8259 §2: space, tab, CR and LF are whitespace
  REQUIRE(number.ok);
  CheckPlain(number.root, "42", 3);

  Read null = ReadLine("\n null ");
  REQUIRE(null.ok);
  CheckAt(null.root, Kind::kNull, 3);

  // RFC 8259 §4 leaves duplicate names to the reader; the loader reports them, so both stay.
  Read dup = ReadLine(R"({"a": 1, "a": {"a": []}, "b": {}})");
  REQUIRE(dup.ok);
  REQUIRE(dup.root.entries.size() == 3);
  CheckString(dup.root.entries[0].key, "a", 2);
  CheckString(dup.root.entries[1].key, "a", 10);
  CheckAt(dup.root.entries[1].value, Kind::kMapping, 15);
  CheckAt(dup.root.entries[1].value.entries[0].value, Kind::kSequence, 21);
  CheckAt(dup.root.entries[2].value, Kind::kMapping, 31);
  CHECK(dup.root.entries[2].value.entries.empty());
}

TEST_CASE("a byte-order mark first is skipped, as nlohmann skips it, and is one column") {
  Read r = ReadLine("\xEF\xBB\xBF{\"a\": 1}");
  REQUIRE(r.ok);
  CheckAt(r.root, Kind::kMapping, 2);
  CheckString(r.root.entries[0].key, "a", 3);
  CheckPlain(r.root.entries[0].value, "1", 8);
}

// Error wording is nlohmann 3.11's (its lexer and parser messages); the column is that of the
// byte where nlohmann stopped, counted in code points.
TEST_CASE("a syntax error is worded by nlohmann at its column") {
  //                         1
  //                1234567890123
  Read r = ReadLine(R"({"id": "c0",})");
  REQUIRE_FALSE(r.ok);
  CHECK(r.error.pos.file == "gen.jsonl");
  CHECK(r.error.pos.line == 7);
  CHECK(r.error.pos.column == 13);
  CHECK(r.error.message ==
        "not valid JSON: syntax error while parsing object key - unexpected '}'; expected string "
        "literal");
  CHECK(r.error.hint == "each line of a .jsonl include is one case object");
  CHECK(r.root.kind == Kind::kNull);  // nothing half-built is left behind
  CHECK(r.root.entries.empty());
}

TEST_CASE("the error column counts code points before a bad byte in a string") {
  // "é" is one code point in two bytes. The lone 0xC3 is code point 10; nlohmann stops after
  // reading the '"' that cannot continue it, code point 11.
  Read r = ReadLine("{\"\xC3\xA9\": \"ab\xC3\"}");
  REQUIRE_FALSE(r.ok);
  CHECK(r.error.pos.column == 11);
  CHECK(r.error.message.find(
            "not valid JSON: syntax error while parsing value - invalid string: ill-formed UTF-8 "
            "byte") == 0);
}

TEST_CASE("an empty line, a leading zero, a control character and an overflow are each refused") {
  Read empty = ReadLine("");
  REQUIRE_FALSE(empty.ok);
  CHECK(empty.error.pos.column == 1);
  CHECK(empty.error.message ==
        "not valid JSON: syntax error while parsing value - unexpected end of input; expected "
        "'[', '{', or a literal");

  Read zero = ReadLine(R"({"a": 01})");
  REQUIRE_FALSE(zero.ok);
  CHECK(zero.error.pos.column == 8);
  CHECK(zero.error.message ==
        "not valid JSON: syntax error while parsing object - unexpected number literal; expected "
        "'}'");

  Read tab = ReadLine("[\"a\tb\"]");
  REQUIRE_FALSE(tab.ok);
  CHECK(tab.error.pos.column == 4);
  CHECK(tab.error.message.find("invalid string: control character U+0009 (HT) must be escaped to "
                               "\\u0009 or \\t") != std::string::npos);

  // nlohmann refuses a number that is infinite as a double with an out_of_range error rather
  // than a parse_error; it carries no position, so the column is 1.
  Read huge = ReadLine("[1e400]");
  REQUIRE_FALSE(huge.ok);
  CHECK(huge.error.pos.column == 1);
  CHECK(huge.error.message ==
        "cannot parse JSON: [json.exception.out_of_range.406] number overflow parsing '1e400'");
  CHECK(huge.error.hint.empty());
}

TEST_CASE("nesting: a value inside 200 arrays or objects is read, inside 201 is refused") {
  Read arrays = ReadLine(Nested(kMaxJsonDepth, "[", "0", "]"));
  REQUIRE(arrays.ok);
  const SourceNode* node = &arrays.root;
  for (int i = 0; i < kMaxJsonDepth; ++i) {
    REQUIRE(node->items.size() == 1);
    node = &node->items[0];
  }
  CheckPlain(*node, "0", kMaxJsonDepth + 1);

  // The innermost empty array is itself inside 200 arrays and holds no value.
  CHECK(ReadLine(Nested(kMaxJsonDepth + 1, "[", "", "]")).ok);
  CHECK(ReadLine(Nested(kMaxJsonDepth, "{\"k\":", "null", "}")).ok);

  for (const std::string& line : {Nested(kMaxJsonDepth + 1, "[", "0", "]"),
                                  Nested(kMaxJsonDepth + 1, "{\"k\":", "null", "}")}) {
    Read r = ReadLine(line);
    REQUIRE_FALSE(r.ok);
    CHECK(r.error.pos.column == 1);
    CHECK(r.error.message == "JSON nests deeper than 200 levels");
    CHECK(r.error.hint == "flatten the structure");
  }
  // Too deep and broken: the syntax error wins, as nlohmann words it.
  Read broken = ReadLine(Nested(kMaxJsonDepth + 1, "[", "0,", "]"));
  REQUIRE_FALSE(broken.ok);
  CHECK(broken.error.message.find("not valid JSON: syntax error") == 0);
}

TEST_CASE("a NUL byte after the value, which nlohmann takes for the end of input, is refused") {
  // nlohmann 3.11's lexer returns end_of_input at a NUL byte, so it accepts these lines whole.
  //                         1
  //                1234567890
  std::string line("{\"a\": 1}\0junk", 13);
  CHECK(nlohmann::json::accept(line));
  for (const std::string& refused : {line, std::string("4\0", 2), std::string("[] \0", 4)}) {
    INFO("line: " << refused);
    Read r = ReadLine(refused);
    REQUIRE_FALSE(r.ok);
    CHECK(r.error.message == "not valid JSON: a NUL byte after the value");
    CHECK(r.error.hint == "each line of a .jsonl include is one case object");
  }
  CHECK(ReadLine(line).error.pos.column == 9);
  CHECK(ReadLine(std::string("4\0", 2)).error.pos.column == 2);
  CHECK(ReadLine(std::string("[] \0", 4)).error.pos.column == 4);
}

struct GrammarCase {
  std::string text;
  bool valid;
};

// RFC 8259 (§2 whitespace and structure, §6 numbers, §7 strings, §8.1 UTF-8) as nlohmann 3.11
// reads it: it also skips a leading byte-order mark and refuses numbers beyond a double.
std::vector<GrammarCase> GrammarCases() {
  std::string nul(1, '\0');
  return {
      // §6 numbers: -?(0|[1-9][0-9]*)(\.[0-9]+)?([eE][+-]?[0-9]+)?
      {"0", true},
      {"-0", true},
      {"10", true},
      {"-12", true},
      {"1.5", true},
      {"-0.0", true},
      {"1e5", true},
      {"1E5", true},
      {"1e+5", true},
      {"1e-5", true},
      {"0e0", true},
      {"123456789012345678901234567890", true},
      {"1.7976931348623157e308", true},  // the largest double
      {"1e-400", true},                  // underflows to zero: nlohmann takes it
      {"5e-324", true},
      {"+1", false},
      {"01", false},
      {"-01", false},
      {"00", false},
      {".5", false},
      {"1.", false},
      {"1.e5", false},
      {"-", false},
      {"--1", false},
      {"-a", false},
      {"1e", false},
      {"1e+", false},
      {"1E-", false},
      {"1e5.5", false},
      {"0x10", false},
      {"1_000", false},
      {"Infinity", false},
      {"-Infinity", false},
      {"NaN", false},
      {"1e400", false},  // infinite as a double
      {"-1e400", false},
      {"1.7976931348623159e308", false},
      {"1" + std::string(400, '0'), false},
      {"0." + std::string(400, '0') + "1", true},
      {"[1" + std::string(400, '0') + "e-100]", true},
      {"[0.000001e314]", true},
      {"[0.0001e314]", false},
      // literals
      {"true", true},
      {"false", true},
      {"null", true},
      {"True", false},
      {"TRUE", false},
      {"nul", false},
      {"nulll", false},
      {"truee", false},
      {"t", false},
      {"fals", false},
      {"NULL", false},
      {"[true,false,null]", true},
      {"[tru]", false},
      // §7 strings: control characters must be escaped, 0x7F need not be
      {"\"\x01\"", false},
      {"\"\x1F\"", false},
      {"\"\t\"", false},
      {"\"\n\"", false},
      {"\"\r\"", false},
      {"\"" + nul + "\"", false},
      {"\"\x7F\"", true},
      {"\"\"", true},
      {"\"abc", false},
      {"\"", false},
      // §7 escapes
      {R"("\" \\ \/ \b \f \n \r \t")", true},
      {R"("\a")", false},
      {R"("\x41")", false},
      {R"("\'")", false},
      {R"("\U0041")", false},
      {R"("\0")", false},
      {R"("\u12")", false},
      {R"("\u12G4")", false},
      {R"("\u00e9\u00E9")", true},
      {R"("\")", false},
      {"\"\\", false},
      {"\"\\" + nul + "\"", false},
      // §7 surrogates: only a high one followed by a low one
      {R"("\ud83d\ude00")", true},
      {R"("\udbff\udfff")", true},  // U+10FFFF
      {R"("\ud800\udc00")", true},  // U+10000
      {R"("\udc00")", false},       // a lone low surrogate
      {R"("\udfff\ud800")", false},
      {R"("\ud83d")", false},  // a lone high surrogate
      {R"("\ud83dx")", false},
      {R"("\ud83d\n")", false},
      {R"("\ud83d\u0041")", false},
      {R"("\ud83d\ud83d")", false},
      {R"("\ud83d\u")", false},
      {R"("\ud83d\ude0")", false},
      // §8.1 / RFC 3629: well-formed UTF-8 inside strings
      {"\"\xC3\xA9\"", true},
      {"\"\xE2\x82\xAC\"", true},
      {"\"\xF0\x9F\x98\x80\"", true},
      {"\"\xF4\x8F\xBF\xBF\"", true},   // U+10FFFF
      {"\"\xEF\xBB\xBF\"", true},       // U+FEFF inside a string is a character
      {"\"\xC0\x80\"", false},          // overlong NUL
      {"\"\xC1\xBF\"", false},          // overlong
      {"\"\xE0\x80\x80\"", false},      // overlong
      {"\"\xE0\x9F\xBF\"", false},      // overlong
      {"\"\xF0\x80\x80\x80\"", false},  // overlong
      {"\"\xF0\x8F\xBF\xBF\"", false},  // overlong
      {"\"\xED\xA0\x80\"", false},      // U+D800 encoded
      {"\"\xED\xBF\xBF\"", false},      // U+DFFF encoded
      {"\"\xF4\x90\x80\x80\"", false},  // U+110000
      {"\"\xF5\x80\x80\x80\"", false},
      {"\"\xF8\x88\x80\x80\x80\"", false},
      {"\"\xC3\"", false},  // truncated
      {"\"\xE2\x82\"", false},
      {"\"\xF0\x9F\x98\"", false},
      {"\"\xC3", false},
      {"\"\x80\"", false},  // a lone continuation byte
      {"\"\xBF\"", false},
      {"\"\xFE\"", false},
      {"\"\xFF\"", false},
      {"\"\xC3\xA9\xA9\"", false},
      // bytes >= 0x80 outside strings, and the byte-order mark
      {"[\xC3\xA9]", false},
      {"\xC2\xA0[]", false},          // no-break space is not whitespace
      {"[1,\xE2\x80\x83 2]", false},  // nor is an em space
      {"\xEF\xBB\xBF[]", true},
      {"\xEF\xBB\xBF \"a\"", true},
      {"\xEF\xBB\xBF", false},
      {"\xEF\xBB\xBF\xEF\xBB\xBF[]", false},
      {" \xEF\xBB\xBF[]", false},
      {"[\xEF\xBB\xBF]", false},
      {"\xEF\xBB[]", false},
      {"\x80", false},
      // §2 whitespace: space, tab, CR, LF and nothing else
      {" \t\r\n[ 1 ,\t2 ]\n", true},
      {"\f[]", false},
      {"\v[]", false},
      {"[1,\f2]", false},
      {"[1" + nul + "]", false},
      {nul, false},
      {nul + "[]", false},
      // §2 one value and nothing after it
      {"[] []", false},
      {"{}x", false},
      {"1 2", false},
      {"\"a\"\"b\"", false},
      {"[1]]", false},
      {"{}}", false},
      {"[1] ", true},
      {"", false},
      {" ", false},
      {"\t", false},
      // §2, §4, §5 structure
      {"{}", true},
      {"[]", true},
      {"[[]]", true},
      {R"({"":""})", true},
      {R"({"a":{"b":[{}]}})", true},
      {"[1,]", false},
      {"[,1]", false},
      {"[1,,2]", false},
      {R"({"a":1,})", false},
      {"{,}", false},
      {R"({"a"})", false},
      {R"({"a" 1})", false},
      {R"({"a"::1})", false},
      {"{1:2}", false},
      {"{a:1}", false},
      {"{'a':1}", false},
      {"['a']", false},
      {"[1 2]", false},
      {"[", false},
      {"{", false},
      {"]", false},
      {"}", false},
      {R"({"a":1)", false},
      {R"({"a":)", false},
      {"[1,", false},
      {"[1}", false},
      {R"({"a":1])", false},
      {R"({"a",1})", false},
      {"//", false},
      {"[1]//", false},
      {"/* */[]", false},
  };
}

std::string Printable(std::string_view text) {
  std::string out;
  for (unsigned char c : text) {
    if (c >= 0x20 && c < 0x7F && c != '\\') {
      out += char(c);
    } else {
      char hex[8];
      std::snprintf(hex, sizeof hex, "\\x%02X", c);
      out += hex;
    }
  }
  return out;
}

TEST_CASE("the RFC 8259 grammar: each case read or refused as nlohmann 3.11 does") {
  for (const GrammarCase& g : GrammarCases()) {
    INFO("line: " << Printable(g.text));
    CHECK(nlohmann::json::accept(g.text) == g.valid);  // the table agrees with the reference
    Read r = ReadLine(g.text);
    CHECK(r.ok == g.valid);
    if (!r.ok) CHECK(r.error.message.find("JSON") != std::string::npos);
  }
}

// The tree nlohmann parses, as its SAX events report it: keys in the order written, duplicates
// kept, strings unescaped, integers as values and other numbers with the text nlohmann read.
struct OracleNode {
  Kind kind = Kind::kNull;
  bool quoted = false;
  std::string text;  // strings, booleans, and numbers nlohmann read as floats
  enum class Number { kNone, kSigned, kUnsigned, kFloat } number = Number::kNone;
  int64_t signed_value = 0;
  uint64_t unsigned_value = 0;
  std::vector<OracleNode> children;  // items, or each key followed by its value
};

class OracleTree : public nlohmann::json_sax<nlohmann::json> {
 public:
  OracleNode root;
  int max_depth = 0;  // arrays and objects around the deepest value

  bool null() override { return Add(OracleNode()); }
  bool boolean(bool value) override { return Add(Scalar(value ? "true" : "false", false)); }
  bool number_integer(number_integer_t value) override {
    OracleNode n = Scalar("", false);
    n.number = OracleNode::Number::kSigned;
    n.signed_value = value;
    return Add(std::move(n));
  }
  bool number_unsigned(number_unsigned_t value) override {
    OracleNode n = Scalar("", false);
    n.number = OracleNode::Number::kUnsigned;
    n.unsigned_value = value;
    return Add(std::move(n));
  }
  bool number_float(number_float_t, const string_t& text) override {
    OracleNode n = Scalar(text, false);
    n.number = OracleNode::Number::kFloat;
    return Add(std::move(n));
  }
  bool string(string_t& value) override { return Add(Scalar(value, true)); }
  bool binary(binary_t&) override { return false; }
  bool start_object(std::size_t) override { return Open(Kind::kMapping); }
  bool key(string_t& value) override { return Add(Scalar(value, true)); }
  bool end_object() override { return Close(); }
  bool start_array(std::size_t) override { return Open(Kind::kSequence); }
  bool end_array() override { return Close(); }
  bool parse_error(std::size_t, const std::string&, const nlohmann::detail::exception&) override {
    return false;
  }

 private:
  static OracleNode Scalar(std::string text, bool quoted) {
    OracleNode n;
    n.kind = Kind::kScalar;
    n.quoted = quoted;
    n.text = std::move(text);
    return n;
  }
  bool Add(OracleNode node) {
    max_depth = std::max(max_depth, int(open_.size()));
    if (open_.empty()) {
      root = std::move(node);
    } else {
      open_.back()->children.push_back(std::move(node));
    }
    return true;
  }
  bool Open(Kind kind) {
    OracleNode n;
    n.kind = kind;
    Add(std::move(n));
    open_.push_back(open_.empty() ? &root : &open_.back()->children.back());
    return true;
  }
  bool Close() {
    open_.pop_back();
    return true;
  }
  std::vector<OracleNode*> open_;  // each lives in its parent, which grows only after it closes
};

template <typename T>
bool ParsesAs(const std::string& text, T expected) {
  T value;
  auto result = std::from_chars(text.data(), text.data() + text.size(), value);
  return result.ec == std::errc() && result.ptr == text.data() + text.size() && value == expected;
}

// The first difference between our tree and nlohmann's, or "" when they match. Each node's
// column must also point at where its text starts in the line: `starts` holds the byte offset
// of every code point.
std::string Difference(const SourceNode& node, const OracleNode& oracle, std::string_view line,
                       const std::vector<size_t>& starts) {
  if (node.kind != oracle.kind) return "kind";
  if (node.line != 7 || node.column < 1 || size_t(node.column) > starts.size()) {
    return "position " + std::to_string(node.line) + ":" + std::to_string(node.column);
  }
  std::string_view at = line.substr(starts[size_t(node.column) - 1]);
  switch (node.kind) {
    case Kind::kNull:
      return at.substr(0, 4) == "null" ? "" : "null column";
    case Kind::kMapping:
      if (at[0] != '{') return "mapping column";
      if (node.entries.size() * 2 != oracle.children.size()) return "entry count";
      for (size_t i = 0; i < node.entries.size(); ++i) {
        const SourceEntry& entry = node.entries[i];
        std::string d = Difference(entry.key, oracle.children[2 * i], line, starts);
        if (d.empty()) d = Difference(entry.value, oracle.children[2 * i + 1], line, starts);
        if (!d.empty()) return d;
      }
      return "";
    case Kind::kSequence:
      if (at[0] != '[') return "sequence column";
      if (node.items.size() != oracle.children.size()) return "item count";
      for (size_t i = 0; i < node.items.size(); ++i) {
        std::string d = Difference(node.items[i], oracle.children[i], line, starts);
        if (!d.empty()) return d;
      }
      return "";
    case Kind::kScalar:
      break;
  }
  if (node.quoted != oracle.quoted) return "quoted";
  if (node.quoted) {
    if (at[0] != '"') return "string column";
    return node.scalar == oracle.text ? "" : "string '" + Printable(node.scalar) + "'";
  }
  if (at.substr(0, node.scalar.size()) != node.scalar) return "plain column";
  bool same = false;
  switch (oracle.number) {
    case OracleNode::Number::kNone:
    case OracleNode::Number::kFloat:
      same = node.scalar == oracle.text;
      break;
    case OracleNode::Number::kSigned:
      same = ParsesAs(node.scalar, oracle.signed_value);
      break;
    case OracleNode::Number::kUnsigned:
      same = ParsesAs(node.scalar, oracle.unsigned_value);
      break;
  }
  return same ? "" : "plain '" + node.scalar + "'";
}

// Lines to mutate: a case object, non-ASCII text, every escape, numbers at the edges of int64,
// uint64 and double, nesting, odd whitespace, top-level scalars, duplicate keys and a
// byte-order mark.
std::vector<std::string> ShallowLines() {
  return {
      R"({"id": "c0", "question": "ferry boarding closes ten minutes before departure the", )"
      R"("answers": ["ferry boarding closes ten", "closes ten minutes before"], "tags": ["t0"]})",
      "{\"id\": \"caf\xC3\xA9-1\", \"question\": \"Le caf\xC3\xA9 \xE2\x80\x94 ferry \xC3\xA0 "
      "Z\xC3\xBCrich?\", \"answers\": [\"\xE6\xB8\xA1\xE3\x81\x97\xE8\x88\xB9\", "
      "\"\xF0\x9F\x98\x80 smile\"], \"weight\": 2.5, \"strict\": false, \"notes\": null}",
      R"({"q": "line\nbreak \"quoted\" back\\slash \/ tab\t \u00e9\u20ac \ud83d\ude00 \u0000 )"
      R"(\u001f \b\f\r", "a": [], "\u00e9": "\udbff\udfff"})",
      "[0, -0, 12, -3.25, 1e10, 2.5E-3, 1E+2, 18446744073709551615, 18446744073709551616, "
      "9223372036854775807, -9223372036854775808, -9223372036854775809, "
      "123456789012345678901234, 1.7976931348623157e308, 1e-400, 4.9e-324]",
      R"({"nested": {"deep": [[{"x": [true, false, null]}]], "empty": {}, "list": []}})",
      " \t{ \"a\" : [ 1 , 2 ] ,\"b\":{ } }\r\n ",
      R"("just a string")",
      "42",
      "true",
      R"({"a": 1, "a": {"a": [1]}, "": ""})",
      "\xEF\xBB\xBF{\"bom\": \"\\u00e9\", \"n\": -0.5e-7}",
  };
}

// Lines nested up to and past kMaxJsonDepth, all of which nlohmann accepts.
std::vector<std::string> DeepLines() {
  return {
      Nested(kMaxJsonDepth - 1, "[", "1", "]"),
      Nested(kMaxJsonDepth, "[", "1", "]"),
      Nested(kMaxJsonDepth + 1, "[", "", "]"),
      Nested(kMaxJsonDepth + 1, "[", "1", "]"),  // too deep
      Nested(kMaxJsonDepth / 2, "{\"k\": [", "\"v\"", "]}"),
  };
}

// Bytes and snippets a mutation inserts: JSON's structural characters, digits and number signs,
// whitespace in and out of the RFC set, control bytes, every kind of UTF-8 lead and
// continuation byte, and pieces of escapes, surrogates, overlongs and literals.
const unsigned char kSpecialBytes[] = {
    '"',  '\\', '{',  '}',  '[',  ']',  ',',  ':',  '0',  '1',  '9',  '-',  '+',  '.',  'e',  'E',
    ' ',  '\t', '\r', '\n', '\f', '\v', 0x00, 0x01, 0x1F, 0x7F, 0x80, 0xBF, 0xC0, 0xC1, 0xC2, 0xDF,
    0xE0, 0xED, 0xEF, 0xF0, 0xF4, 0xF5, 0xFF, 'u',  't',  'f',  'n',  'a',  '/',  'x',  'D',  'c'};

const char* const kSnippets[] = {"\\u",
                                 "\\ud83d",
                                 "\\ude00",
                                 "\\ud83d\\ude00",
                                 "\\u00e9",
                                 "\\uD800\\u",
                                 "\\u0000",
                                 "\xEF\xBB\xBF",
                                 "\xED\xA0\x80",
                                 "\xF4\x90\x80\x80",
                                 "\xE0\x80\x80",
                                 "\xC3\xA9",
                                 "\xF0\x9F\x98\x80",
                                 "1e400",
                                 "1e-400",
                                 "-0",
                                 "0.",
                                 "true",
                                 "null",
                                 "false",
                                 "[]",
                                 "{}",
                                 "\"\"",
                                 ",\"k\":",
                                 "]]]]",
                                 "[[[[",
                                 "\"\\\"",
                                 "\\\\",
                                 "\\n",
                                 "e+",
                                 "\xE2\x80\x83"};

std::string Mutate(std::string line, std::mt19937_64* rng) {
  auto pick = [&](size_t n) { return size_t((*rng)() % n); };
  // Mostly one mutation, so that about a third of the lines stay valid and their trees are
  // compared too.
  size_t roll = pick(10);
  int mutations = roll < 7 ? 1 : roll < 9 ? 2 : 3;
  for (int m = 0; m < mutations; ++m) {
    size_t at = pick(line.size() + 1);
    switch (pick(9)) {
      case 0:  // any byte replaced
        if (at < line.size()) line[at] = char(pick(256));
        break;
      case 1:  // one bit flipped
        if (at < line.size()) line[at] = char(line[at] ^ (1 << pick(8)));
        break;
      case 2:
        if (at < line.size()) line[at] = char(kSpecialBytes[pick(sizeof kSpecialBytes)]);
        break;
      case 3:
        line.insert(at, 1, char(kSpecialBytes[pick(sizeof kSpecialBytes)]));
        break;
      case 4:
        line.insert(at, kSnippets[pick(sizeof kSnippets / sizeof kSnippets[0])]);
        break;
      case 5:  // a few bytes dropped
        line.erase(at, 1 + pick(3));
        break;
      case 6:  // truncated
        line.resize(at);
        break;
      case 7: {  // a stretch copied elsewhere
        std::string piece = line.substr(at, pick(12));
        line.insert(pick(line.size() + 1), piece);
        break;
      }
      case 8:  // a printable ASCII byte inserted, which a string takes as it is
        line.insert(at, 1, char(' ' + pick(95)));
        break;
    }
  }
  return line;
}

struct Tally {
  int lines = 0;
  int read = 0;
  int too_deep = 0;
  int disagreements = 0;
  std::string first_disagreement;
};

// Reads `line` with ReadJsonLine and with nlohmann and checks that they agree: read exactly
// when nlohmann accepts and the depth is within kMaxJsonDepth, the same tree when read, and an
// error inside the line when not.
void Compare(const std::string& line, Tally* tally) {
  bool reference = nlohmann::json::accept(line);
  OracleTree oracle;
  if (reference && !nlohmann::json::sax_parse(line, &oracle)) {
    FAIL("nlohmann accepts but its SAX parse refuses: " << Printable(line));
  }
  bool deep = reference && oracle.max_depth > kMaxJsonDepth;
  // nlohmann reads a NUL byte as the end of its input; a line it takes with one in it has the
  // first after its value, where ReadJsonLine refuses it.
  size_t nul = line.find('\0');
  bool nul_ends = reference && nul != std::string::npos;
  Read r = ReadLine(line);
  std::string problem;
  if (r.ok != (reference && !deep && !nul_ends)) {
    problem = r.ok ? "read, but nlohmann refuses it" : "refused (" + r.error.message + ")";
  } else if (r.ok) {
    std::vector<size_t> starts;  // the byte offset of each code point
    char32_t code_point;
    for (size_t offset = 0; offset < line.size();) {
      starts.push_back(offset);
      if (!DecodeCodePoint(line, &offset, &code_point)) ++offset;
    }
    std::string d = Difference(r.root, oracle.root, line, starts);
    if (!d.empty()) problem = "tree differs: " + d;
  } else {
    bool placed = r.error.pos.line == 7 && r.error.pos.column >= 1 &&
                  r.error.pos.column <= CountCodePoints(line) + 1;
    if (deep) {
      placed = placed && r.error.message == "JSON nests deeper than 200 levels";
    } else if (nul_ends) {
      placed = r.error.message == "not valid JSON: a NUL byte after the value" &&
               r.error.pos.column == CountCodePoints(line.substr(0, nul)) + 1;
    }
    if (!placed)
      problem = "error at " + std::to_string(r.error.pos.column) + ": " + r.error.message;
  }
  ++tally->lines;
  tally->read += r.ok;
  tally->too_deep += deep;
  if (!problem.empty() && tally->disagreements++ == 0) {
    tally->first_disagreement = problem + ": " + Printable(line);
  }
}

TEST_CASE("differential: mutated lines are read exactly when nlohmann accepts them") {
  uint64_t seed = 20240611;
  if (const char* env = std::getenv("PLUMB_JSONL_SEED")) seed = std::strtoull(env, nullptr, 10);
  const int kMutated = 200000;
  std::mt19937_64 rng(seed);
  std::vector<std::string> shallow = ShallowLines();
  std::vector<std::string> deep = DeepLines();
  Tally tally;
  for (const std::vector<std::string>* lines : {&shallow, &deep}) {
    for (const std::string& line : *lines) Compare(line, &tally);
  }
  for (int i = 0; i < kMutated; ++i) {
    // Deep lines are long, and nearly any mutation breaks them: one line in ten is plenty.
    const std::vector<std::string>& from = rng() % 10 == 0 ? deep : shallow;
    Compare(Mutate(from[rng() % from.size()], &rng), &tally);
  }
  std::printf("jsonl_reader differential: seed %llu, %d lines, %d read, %d too deep\n",
              static_cast<unsigned long long>(seed), tally.lines, tally.read, tally.too_deep);
  INFO("seed " << seed << ", first disagreement: " << tally.first_disagreement);
  CHECK(tally.disagreements == 0);
  // The mutations must land on both sides, or the comparison proves little.
  CHECK(tally.read > tally.lines / 10);
  CHECK(tally.read < tally.lines * 9 / 10);
  CHECK(tally.too_deep > 10);
}

}  // namespace
}  // namespace plumb
