// Test support: the field codec of the reference-check drivers (tests/reference/*_driver.cc)
// and their Python references. A field is the hex of its UTF-8 bytes, so any byte string,
// invalid UTF-8 included, survives the pipe; "-" is the empty string. Header-only.
#ifndef PLUMB_TESTS_SUPPORT_HEX_FIELDS_H_
#define PLUMB_TESTS_SUPPORT_HEX_FIELDS_H_

#include <string>

namespace plumb_test {

inline int HexValue(char c) {
  if (c >= '0' && c <= '9') return c - '0';
  if (c >= 'a' && c <= 'f') return c - 'a' + 10;
  if (c >= 'A' && c <= 'F') return c - 'A' + 10;
  return -1;
}

/// False when `field` is not "-" or an even number of hex digits.
inline bool DecodeHex(const std::string& field, std::string* out) {
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

inline std::string EncodeHex(const std::string& bytes) {
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

}  // namespace plumb_test

#endif  // PLUMB_TESTS_SUPPORT_HEX_FIELDS_H_
