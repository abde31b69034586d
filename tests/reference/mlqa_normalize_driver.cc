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

namespace {

int HexValue(char c) {
  if (c >= '0' && c <= '9') return c - '0';
  if (c >= 'a' && c <= 'f') return c - 'a' + 10;
  if (c >= 'A' && c <= 'F') return c - 'A' + 10;
  return -1;
}

bool DecodeHex(const std::string& field, std::string* out) {
  out->clear();
  if (field == "-") return true;
  if (field.size() % 2 != 0) return false;
  for (size_t i = 0; i < field.size(); i += 2) {
    const int hi = HexValue(field[i]);
    const int lo = HexValue(field[i + 1]);
    if (hi < 0 || lo < 0) return false;
    out->push_back(static_cast<char>(hi * 16 + lo));
  }
  return true;
}

std::string EncodeHex(const std::string& bytes) {
  if (bytes.empty()) return "-";
  static const char kDigits[] = "0123456789abcdef";
  std::string out;
  out.reserve(bytes.size() * 2);
  for (char ch : bytes) {
    const unsigned char b = static_cast<unsigned char>(ch);
    out.push_back(kDigits[b >> 4]);
    out.push_back(kDigits[b & 15]);
  }
  return out;
}

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
