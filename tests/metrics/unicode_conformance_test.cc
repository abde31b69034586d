// Conformance of the ICU plumbing the `unicode` profile stands on, against the Unicode
// Consortium's own test files as Debian's unicode-data package installs them:
//   /usr/share/unicode/NormalizationTest.txt(.bz2)  (UAX #15 conformance)
//   /usr/share/unicode/auxiliary/WordBreakTest.txt  (UAX #29 conformance)
// NFKC and the word boundaries go through the same functions NormalizeUnicodeTokens uses
// (metrics/icu_text.h), text passing through UTF-8 as it does there. When a file's Unicode
// version differs from ICU's, lines holding characters ICU does not know are skipped and counted.

#include <unicode/uchar.h>
#include <unicode/uversion.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <cstdio>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "metrics/icu_text.h"

namespace {

namespace m = plumb::metrics;

constexpr const char* kUnicodeDataDir = "/usr/share/unicode/";

// The standard output of `command`, or false when it cannot run or exits non-zero.
bool CommandOutput(const std::string& command, std::string* out) {
  FILE* pipe = popen(command.c_str(), "r");
  if (pipe == nullptr) return false;
  out->clear();
  char buffer[65536];
  for (size_t n; (n = std::fread(buffer, 1, sizeof buffer, pipe)) > 0;) out->append(buffer, n);
  return pclose(pipe) == 0;
}

// Reads NAME, or NAME.bz2 (Debian ships NormalizationTest.txt compressed) through bzip2 or,
// where bzip2 is missing, Debian's Python and its bz2 module.
bool ReadUnicodeFile(const std::string& name, std::vector<std::string>* lines, std::string* err) {
  const std::string path = std::string(kUnicodeDataDir) + name;
  lines->clear();
  std::ifstream plain(path);
  if (plain) {
    for (std::string line; std::getline(plain, line);) lines->push_back(line);
    return true;
  }
  if (!std::ifstream(path + ".bz2")) {
    *err = "neither " + path + " nor " + path + ".bz2 exists; install Debian's unicode-data";
    return false;
  }
  std::string text;
  if (!CommandOutput("bzip2 -dc '" + path + ".bz2' 2>/dev/null", &text) &&
      !CommandOutput("/usr/bin/python3 -c 'import bz2, sys; "
                     "sys.stdout.buffer.write(bz2.open(sys.argv[1]).read())' '" +
                         path + ".bz2'",
                     &text)) {
    *err = "could not decompress " + path + ".bz2; install bzip2 or python3";
    return false;
  }
  std::istringstream stream(text);
  for (std::string line; std::getline(stream, line);) lines->push_back(line);
  return true;
}

// "# WordBreakTest-15.0.0.txt" -> {15, 0, 0}.
std::vector<int> FileUnicodeVersion(const std::vector<std::string>& lines) {
  std::vector<int> version;
  if (lines.empty()) return version;
  const size_t dash = lines[0].find('-');
  if (dash == std::string::npos) return version;
  std::istringstream parts(lines[0].substr(dash + 1));
  for (int part; parts >> part;) {
    version.push_back(part);
    if (parts.peek() != '.') break;
    parts.get();
  }
  while (version.size() < 3) version.push_back(0);
  return version;
}

std::vector<int> IcuUnicodeVersion() {
  UVersionInfo info;
  u_getUnicodeVersion(info);
  return {info[0], info[1], info[2]};
}

std::string VersionString(const std::vector<int>& version) {
  std::string out;
  for (size_t i = 0; i < version.size(); ++i) out += (i ? "." : "") + std::to_string(version[i]);
  return out;
}

bool UnknownToIcu(UChar32 c) {
  UVersionInfo age;
  u_charAge(c, age);
  return age[0] == 0 && age[1] == 0;
}

// "1E0A 0323" -> code points.
std::vector<UChar32> ParseCodePoints(const std::string& field) {
  std::vector<UChar32> out;
  std::istringstream words(field);
  for (std::string word; words >> word;) out.push_back(std::stoi(word, nullptr, 16));
  return out;
}

std::string Utf8Of(const std::vector<UChar32>& code_points) {
  icu::UnicodeString text;
  for (UChar32 c : code_points) text.append(c);
  return m::ToUtf8(text);
}

std::string NfkcUtf8(const std::string& utf8) {
  icu::UnicodeString out;
  std::string err;
  if (!m::Nfkc(m::FromUtf8(utf8), &out, &err)) return "<" + err + ">";
  return m::ToUtf8(out);
}

std::string Hex(const std::string& utf8) {
  const icu::UnicodeString text = m::FromUtf8(utf8);
  std::string out;
  char buffer[16];
  for (int32_t i = 0; i < text.length(); i = text.moveIndex32(i, 1)) {
    std::snprintf(buffer, sizeof buffer, "%s%04X", i ? " " : "", text.char32At(i));
    out += buffer;
  }
  return out;
}

TEST_CASE("NFKC conforms to NormalizationTest.txt", "[conformance][nfkc]") {
  std::vector<std::string> lines;
  std::string err;
  const bool read = ReadUnicodeFile("NormalizationTest.txt", &lines, &err);
  INFO(err);
  REQUIRE(read);
  const std::vector<int> file_version = FileUnicodeVersion(lines);
  const std::vector<int> icu_version = IcuUnicodeVersion();
  const bool same_version = file_version == icu_version;
  std::printf("NormalizationTest.txt: Unicode %s, ICU %s: Unicode %s\n",
              VersionString(file_version).c_str(), U_ICU_VERSION,
              VersionString(icu_version).c_str());

  size_t passed = 0;
  size_t failed = 0;
  size_t skipped = 0;
  std::vector<std::string> failures;  // the first few, for the report
  std::vector<bool> in_part1(0x110000, false);
  bool part1 = false;
  for (size_t n = 0; n < lines.size(); ++n) {
    const std::string& line = lines[n];
    if (line.empty() || line[0] == '#') continue;
    if (line[0] == '@') {
      part1 = line.rfind("@Part1", 0) == 0;
      continue;
    }
    std::vector<std::vector<UChar32>> columns;
    std::istringstream fields(line.substr(0, line.find('#')));
    for (std::string field; std::getline(fields, field, ';') && columns.size() < 5;) {
      columns.push_back(ParseCodePoints(field));
    }
    REQUIRE(columns.size() == 5);
    bool unknown = false;
    for (const auto& column : columns) {
      for (UChar32 c : column) unknown = unknown || UnknownToIcu(c);
    }
    if (!same_version && unknown) {
      ++skipped;
      continue;
    }
    if (part1 && columns[0].size() == 1) in_part1[columns[0][0]] = true;
    const std::string c4 = Utf8Of(columns[3]);
    bool ok = true;
    for (int i = 0; i < 5; ++i) {
      const std::string got = NfkcUtf8(Utf8Of(columns[i]));
      if (got != c4) {
        ok = false;
        if (failures.size() < 20) {
          failures.push_back("line " + std::to_string(n + 1) + ": NFKC(c" + std::to_string(i + 1) +
                             ") = " + Hex(got) + ", c4 = " + Hex(c4));
        }
      }
    }
    if (ok) {
      ++passed;
    } else {
      ++failed;
    }
  }
  std::printf("NormalizationTest.txt: %zu lines passed, %zu failed, %zu skipped\n", passed, failed,
              skipped);
  for (const std::string& failure : failures) UNSCOPED_INFO(failure);
  CHECK(failed == 0);
  CHECK(passed > 19000);

  // UAX #15 conformance, part 1 complement: every code point not listed in Part 1 is unchanged
  // by NFKC (surrogates cannot pass through UTF-8 and are left out).
  size_t invariant = 0;
  size_t changed = 0;
  std::vector<std::string> changes;  // the first few, for the report
  for (UChar32 c = 0; c <= 0x10FFFF; ++c) {
    if ((c >= 0xD800 && c <= 0xDFFF) || in_part1[c]) continue;
    if (!same_version && UnknownToIcu(c)) continue;
    const std::string one = Utf8Of({c});
    if (NfkcUtf8(one) == one) {
      ++invariant;
    } else if (++changed <= 20) {
      changes.push_back(Hex(one));
    }
  }
  std::printf("NormalizationTest.txt part 1 complement: %zu code points unchanged, %zu changed\n",
              invariant, changed);
  for (const std::string& c : changes) UNSCOPED_INFO("NFKC changes U+" + c);
  CHECK(changed == 0);
}

// "÷ 0041 × 0308 ÷ 0020 ÷" -> code points and the code-point indices of the ÷ marks.
bool ParseWordBreakLine(const std::string& line, std::vector<UChar32>* text,
                        std::vector<int32_t>* boundaries) {
  text->clear();
  boundaries->clear();
  std::istringstream words(line.substr(0, line.find('#')));
  for (std::string word; words >> word;) {
    if (word == "\u00f7") {
      boundaries->push_back(static_cast<int32_t>(text->size()));
    } else if (word != "\u00d7") {
      text->push_back(std::stoi(word, nullptr, 16));
    }
  }
  return !text->empty();
}

bool IsColon(UChar32 c) { return c == 0x003A || c == 0xFE55 || c == 0xFF1A; }

// ICU's root word rules follow CLDR's root tailoring of UAX #29 (from memory: CLDR takes the
// colons U+003A, U+FE55, U+FF1A out of MidLetter; only Swedish and Finnish want "c:a" to be one
// word). A colon the file joins between letters (WB6/WB7) is then an Other character: a break
// before it, and one after it and the Extend/Format/ZWJ characters that attach to it (WB4).
// Returns the boundaries under that tailoring; equal to `boundaries` when no colon is joined.
std::vector<int32_t> WithColonTailoring(const std::vector<UChar32>& text,
                                        std::vector<int32_t> boundaries) {
  auto is_boundary = [&](int32_t i) {
    for (int32_t b : boundaries) {
      if (b == i) return true;
    }
    return false;
  };
  std::vector<int32_t> added;
  for (int32_t i = 0; i < static_cast<int32_t>(text.size()); ++i) {
    if (!IsColon(text[i]) || i == 0 || is_boundary(i)) continue;
    int32_t after = i + 1;
    while (after < static_cast<int32_t>(text.size())) {
      const int32_t wb = u_getIntPropertyValue(text[after], UCHAR_WORD_BREAK);
      if (wb != U_WB_EXTEND && wb != U_WB_FORMAT && wb != U_WB_ZWJ) break;
      ++after;
    }
    added.push_back(i);
    added.push_back(after);
  }
  for (int32_t b : added) {
    if (!is_boundary(b)) boundaries.push_back(b);
  }
  std::sort(boundaries.begin(), boundaries.end());
  return boundaries;
}

TEST_CASE("ICU word boundaries conform to WordBreakTest.txt", "[conformance][words]") {
  std::vector<std::string> lines;
  std::string err;
  const bool read = ReadUnicodeFile("auxiliary/WordBreakTest.txt", &lines, &err);
  INFO(err);
  REQUIRE(read);
  const std::vector<int> file_version = FileUnicodeVersion(lines);
  const std::vector<int> icu_version = IcuUnicodeVersion();
  const bool same_version = file_version == icu_version;
  std::printf("WordBreakTest.txt: Unicode %s, ICU %s: Unicode %s\n",
              VersionString(file_version).c_str(), U_ICU_VERSION,
              VersionString(icu_version).c_str());

  size_t passed = 0;
  size_t passed_tailored = 0;
  size_t failed = 0;
  size_t skipped = 0;
  std::vector<std::string> failures;  // the first few, for the report
  for (size_t n = 0; n < lines.size(); ++n) {
    std::vector<UChar32> code_points;
    std::vector<int32_t> expected;
    if (!ParseWordBreakLine(lines[n], &code_points, &expected)) continue;
    bool unknown = false;
    for (UChar32 c : code_points) unknown = unknown || UnknownToIcu(c);
    if (!same_version && unknown) {
      ++skipped;
      continue;
    }
    const icu::UnicodeString text = m::FromUtf8(Utf8Of(code_points));
    std::vector<m::WordSegment> segments;
    REQUIRE(m::WordSegments(text, &segments, &err));
    std::vector<int32_t> got = {0};
    for (const m::WordSegment& segment : segments) {
      got.push_back(text.countChar32(0, segment.limit));
    }
    if (got == expected) {
      ++passed;
    } else if (got == WithColonTailoring(code_points, expected)) {
      ++passed_tailored;
    } else {
      ++failed;
      if (failures.size() < 20) {
        std::string shown;
        for (int32_t b : got) shown += " " + std::to_string(b);
        failures.push_back("line " + std::to_string(n + 1) + ": ICU breaks at" + shown + " for " +
                           lines[n]);
      }
    }
  }
  std::printf(
      "WordBreakTest.txt: %zu lines passed as written, %zu passed under CLDR's colon tailoring, "
      "%zu failed, %zu skipped\n",
      passed, passed_tailored, failed, skipped);
  for (const std::string& failure : failures) UNSCOPED_INFO(failure);
  CHECK(failed == 0);
  CHECK(passed > 1800);
}

}  // namespace
