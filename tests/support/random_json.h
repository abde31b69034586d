#ifndef PLUMB_TESTS_SUPPORT_RANDOM_JSON_H_
#define PLUMB_TESTS_SUPPORT_RANDOM_JSON_H_

// Pieces of JSON text for the differential tests of the one-pass readers (flat replies, plain
// case lines): strings with every escape, paired and lone surrogates, raw and ill-formed UTF-8
// and controls, now and then unterminated; numbers of many spellings, valid and not. Seeded by
// the caller, so a failure repeats.

#include <random>
#include <string>

namespace plumb {

inline std::string RandomJsonString(std::mt19937_64* rng) {
  static const char* const kPieces[] = {"a",
                                        "Z",
                                        " ",
                                        "ten minutes",
                                        "\\\"",
                                        "\\\\",
                                        "\\/",
                                        "\\b",
                                        "\\f",
                                        "\\n",
                                        "\\r",
                                        "\\t",
                                        "\\u00e9",
                                        "\\u0000",
                                        "\\u001F",
                                        "\\ud83d\\ude00",
                                        "\\ud800",
                                        "\\udc00x",
                                        "\\uZZZZ",
                                        "\\x",
                                        "\xC3\xA9",
                                        "\xE2\x80\x94",
                                        "\xF0\x9F\x98\x80",
                                        "\xC3",
                                        "\xED\xA0\x80",
                                        "\xC0\xAF",
                                        "\x01",
                                        "\x7f",
                                        "\t",
                                        "é",
                                        "\xEF\xBB\xBF"};
  std::string s = "\"";
  const int pieces = static_cast<int>((*rng)() % 5);
  for (int i = 0; i < pieces; ++i) s += kPieces[(*rng)() % (sizeof kPieces / sizeof *kPieces)];
  if ((*rng)() % 40 != 0) s += "\"";  // now and then, an unterminated string
  return s;
}

inline std::string RandomJsonNumber(std::mt19937_64* rng) {
  static const char* const kNumbers[] = {"0",
                                         "-0",
                                         "7",
                                         "12.5",
                                         "-3.25",
                                         "0.1",
                                         "1e3",
                                         "2E-2",
                                         "1.5e+300",
                                         "01",
                                         "1.",
                                         ".5",
                                         "-",
                                         "+1",
                                         "9223372036854775807",
                                         "9223372036854775808",
                                         "-9223372036854775808",
                                         "-9223372036854775809",
                                         "123456789012345678",
                                         "0.30000000000000004",
                                         "12345678901234567",
                                         "1.2345678901234567",
                                         "1e400",
                                         "-0.0",
                                         "100000000000000000000"};
  return kNumbers[(*rng)() % (sizeof kNumbers / sizeof *kNumbers)];
}

}  // namespace plumb

#endif  // PLUMB_TESTS_SUPPORT_RANDOM_JSON_H_
