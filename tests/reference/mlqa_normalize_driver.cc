// Driver for the MLQA differential check (mlqa_normalize_reference.py): reads requests from
// stdin, one per line, and answers each with one line on stdout. Text is hex-encoded UTF-8 bytes
// (so any byte string, invalid UTF-8 included, survives the pipe); "-" is the empty string.
//   N <lang> <text>   ->  the hex of each NormalizeMlqaTokens(text, lang) token, space-separated
//   C <first> <last>  ->  for each code point in [first, last] (hex, surrogates skipped) one line
//                         "<space><word><punct> <hex of LowerCase(c)>", the three flags 0 or 1:
//                         IsPythonWhitespace, IsPythonWordChar, IsPunctuation

#include <cstdio>
#include <cstdlib>
#include <iostream>
#include <sstream>
#include <string>
#include <vector>

#include "metrics/icu_text.h"
#include "metrics/normalize.h"
#include "tests/support/hex_fields.h"

namespace {

using plumb_test::DecodeHex;
using plumb_test::EncodeHex;

bool ParseCodePoint(const std::string& field, UChar32* out) {
  if (field.empty() || field.size() > 6) return false;
  char* end = nullptr;
  const unsigned long value = std::strtoul(field.c_str(), &end, 16);
  if (*end != '\0' || value > 0x10FFFF) return false;
  *out = static_cast<UChar32>(value);
  return true;
}

}  // namespace

int main() {
  namespace m = plumb::metrics;
  std::ios::sync_with_stdio(false);
  std::string line;
  std::string out;
  size_t line_number = 0;
  while (std::getline(std::cin, line)) {
    ++line_number;
    std::istringstream fields(line);
    std::string kind;
    fields >> kind;
    std::vector<std::string> values;
    for (std::string field; fields >> field;) values.push_back(field);
    auto bad = [&]() {
      std::fprintf(stderr, "mlqa_normalize_driver: line %zu is not a valid request\n", line_number);
      return 2;
    };
    if (kind == "N" && values.size() == 2) {
      std::string text;
      if (!DecodeHex(values[1], &text)) return bad();
      const std::vector<std::string> tokens = m::NormalizeMlqaTokens(text, values[0]);
      for (size_t i = 0; i < tokens.size(); ++i) {
        if (i > 0) out.push_back(' ');
        out += EncodeHex(tokens[i]);
      }
      out.push_back('\n');
    } else if (kind == "C" && values.size() == 2) {
      UChar32 first = 0;
      UChar32 last = 0;
      if (!ParseCodePoint(values[0], &first) || !ParseCodePoint(values[1], &last)) return bad();
      for (UChar32 c = first; c <= last; ++c) {
        if (c >= 0xD800 && c <= 0xDFFF) continue;
        out.push_back(m::IsPythonWhitespace(c) ? '1' : '0');
        out.push_back(m::IsPythonWordChar(c) ? '1' : '0');
        out.push_back(m::IsPunctuation(c) ? '1' : '0');
        out.push_back(' ');
        out += EncodeHex(m::ToUtf8(m::LowerCase(icu::UnicodeString(c))));
        out.push_back('\n');
      }
    } else {
      return bad();
    }
  }
  std::fwrite(out.data(), 1, out.size(), stdout);
  return 0;
}
