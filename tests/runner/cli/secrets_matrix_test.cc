// The secrets matrix (issue 17 item 1): secrets made of every character class a JSON encoder
// treats specially (a quote, a backslash, non-ASCII letters up to a code point beyond the BMP,
// a tab, a newline, the text of JSON \u escapes, a slash) are given to a pipeline that echoes
// them back in every way a JSON encoder writes them (secret-echo-pipeline: nlohmann's dump,
// ensure_ascii, every code point \uXXXX, '/' as '\/', a reply that is not JSON, a crash with
// the secrets on stdout and stderr), in persistent and per-case mode. Nothing plumb writes
// (the journal, run.json, the HTML, JUnit and Markdown reports, its stdout and stderr) may hold
// any secret in any of those forms, nor once its JSON strings are decoded or its HTML
// character references resolved; and the secrets must show up masked, so the search is known
// to have had something to find.
//
// The escaped forms are written here independently of plumb: nlohmann::json's dump (the
// encoder most C++ pipelines use), and \u escapes by RFC 8259 §7 (UTF-16 surrogate pairs
// beyond the BMP, hex digits in either case).

#include <stdlib.h>

#include <catch2/catch.hpp>
#include <cstdio>
#include <filesystem>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "tests/support/plumb_process.h"

using nlohmann::json;
namespace fs = std::filesystem;

namespace {

// Invented values; each occurs nowhere else.
const std::vector<std::string> kSecrets = {
    "Qx\"7-quote\"Zt",   // quotes
    "Bk\\7\\slash\\Wv",  // backslashes
    "Fj\xC3\xB6r\xC3\xB0r-\xC3\x9F"
    "e\xC3\xB1"
    "al-\xE6\x97\xA5\xE6\x9C\xAC-\xF0\x9D\x94\x98x",  // öðßñ 日本 𝔘
    "Tb\t9-tab\tHs",                                  // tabs
    "Nl\n3-line\nPe",                                 // newlines
    "Ue\\u004b\\u0077-Jr",                            // the text of JSON \u escapes
    "Sl/5-path/Kd",                                   // slashes
};

std::vector<char32_t> CodePoints(const std::string& text) {
  std::vector<char32_t> out;
  for (size_t i = 0; i < text.size();) {
    const unsigned char lead = static_cast<unsigned char>(text[i]);
    const int length = lead < 0x80 ? 1 : lead < 0xE0 ? 2 : lead < 0xF0 ? 3 : 4;
    char32_t c = length == 1 ? lead : lead & (0xFF >> (length + 1));
    for (int k = 1; k < length; ++k) {
      c = (c << 6) | (static_cast<unsigned char>(text[i + k]) & 0x3F);
    }
    out.push_back(c);
    i += static_cast<size_t>(length);
  }
  return out;
}

std::string EveryCodePointEscaped(const std::string& text, const char* format) {
  std::string out;
  char unit[16];
  for (const char32_t c : CodePoints(text)) {
    if (c >= 0x10000) {
      std::snprintf(unit, sizeof unit, format, 0xD800 + ((c - 0x10000) >> 10));
      out += unit;
      std::snprintf(unit, sizeof unit, format, 0xDC00 + ((c - 0x10000) & 0x3FF));
    } else {
      std::snprintf(unit, sizeof unit, format, static_cast<unsigned>(c));
    }
    out += unit;
  }
  return out;
}

std::string Unquoted(const std::string& quoted) { return quoted.substr(1, quoted.size() - 2); }

// Every form in which a secret must not appear in a file.
std::vector<std::string> Forms(const std::string& secret) {
  std::string slashed;
  for (const char c : Unquoted(json(secret).dump()))
    slashed += c == '/' ? "\\/" : std::string(1, c);
  return {secret, Unquoted(json(secret).dump()), Unquoted(json(secret).dump(-1, ' ', true)),
          EveryCodePointEscaped(secret, "\\u%04X"), EveryCodePointEscaped(secret, "\\u%04x"),
          slashed,
          // The same once more inside a JSON string (a reply quoted in a record's text).
          Unquoted(json(Unquoted(json(secret).dump())).dump())};
}

// HTML and XML character references resolved (named ones the reports use, decimal, hex).
std::string ResolveReferences(const std::string& text) {
  std::string out;
  for (size_t i = 0; i < text.size(); ++i) {
    if (text[i] != '&') {
      out += text[i];
      continue;
    }
    const size_t semi = text.find(';', i);
    if (semi == std::string::npos || semi - i > 10) {
      out += text[i];
      continue;
    }
    const std::string name = text.substr(i + 1, semi - i - 1);
    std::string decoded;
    if (name == "amp") decoded = "&";
    if (name == "lt") decoded = "<";
    if (name == "gt") decoded = ">";
    if (name == "quot") decoded = "\"";
    if (name == "apos") decoded = "'";
    if (name.size() > 1 && name[0] == '#') {
      const long c = name[1] == 'x' || name[1] == 'X' ? std::strtol(name.c_str() + 2, nullptr, 16)
                                                      : std::strtol(name.c_str() + 1, nullptr, 10);
      if (c < 0x80) {
        decoded = std::string(1, static_cast<char>(c));
      } else if (c < 0x800) {
        decoded = {static_cast<char>(0xC0 | (c >> 6)), static_cast<char>(0x80 | (c & 0x3F))};
      } else if (c < 0x10000) {
        decoded = {static_cast<char>(0xE0 | (c >> 12)), static_cast<char>(0x80 | ((c >> 6) & 0x3F)),
                   static_cast<char>(0x80 | (c & 0x3F))};
      } else {
        decoded = {
            static_cast<char>(0xF0 | (c >> 18)), static_cast<char>(0x80 | ((c >> 12) & 0x3F)),
            static_cast<char>(0x80 | ((c >> 6) & 0x3F)), static_cast<char>(0x80 | (c & 0x3F))};
      }
    }
    if (decoded.empty()) {
      out += text[i];
      continue;
    }
    out += decoded;
    i = semi;
  }
  return out;
}

// Every string in a JSON value, keys included.
void Strings(const json& value, std::vector<std::string>* out) {
  if (value.is_string()) out->push_back(value.get<std::string>());
  if (value.is_array()) {
    for (const json& item : value) Strings(item, out);
  }
  if (value.is_object()) {
    for (auto it = value.begin(); it != value.end(); ++it) {
      out->push_back(it.key());
      Strings(*it, out);
    }
  }
}

// Where `text` (the content of `what`) holds a secret in any form; empty when nowhere.
std::vector<std::string> Leaks(const std::string& what, const std::string& text) {
  std::vector<std::string> leaks;
  std::vector<std::string> views = {text, ResolveReferences(text)};
  // JSON files: their decoded strings too, line by line for the journal.
  std::istringstream lines(text);
  for (std::string line; std::getline(lines, line);) {
    const json value = json::parse(line, nullptr, false);
    if (!value.is_discarded()) Strings(value, &views);
  }
  const json whole = json::parse(text, nullptr, false);
  if (!whole.is_discarded()) Strings(whole, &views);
  for (size_t s = 0; s < kSecrets.size(); ++s) {
    for (const std::string& form : Forms(kSecrets[s])) {
      for (const std::string& view : views) {
        if (view.find(form) != std::string::npos) {
          leaks.push_back(what + ": secret " + std::to_string(s + 1) + " as " + json(form).dump());
          break;
        }
      }
    }
  }
  return leaks;
}

}  // namespace

TEST_CASE("secrets of every character class never reach a file, escaped or not") {
  std::string env_block, vars;
  for (size_t i = 0; i < kSecrets.size(); ++i) {
    const std::string name = "PLUMB_MATRIX_SECRET_" + std::to_string(i + 1);
    REQUIRE(setenv(name.c_str(), kSecrets[i].c_str(), 1) == 0);
    env_block +=
        (i ? ", " : "") + std::string("S") + std::to_string(i + 1) + ": \"${" + name + "}\"";
    vars += ", S" + std::to_string(i + 1);
  }
  const std::string forms[] = {"encoder", "ascii", "every-upper", "slash", "invalid", "crash"};
  for (const char* mode : {"persistent", "per-case"}) {
    const std::string dir = plumb_test::MakeTempDir();
    std::string suite =
        "plumb: 1\nname: matrix\nmax_error_rate: 1.0\npipelines:\n  echo:\n"
        "    command: [" +
        plumb_test::kFixtures + "secret-echo-pipeline" + vars + "]\n    env: {" + env_block +
        "}\n    mode: " + mode + "\n    timeout: 10s\ncases:\n";
    for (const std::string& form : forms) {
      suite += "  - {id: " + form + ", question: " + form + " please, answers: [x]}\n";
    }
    plumb_test::WriteFile(dir + "/suite.yaml", suite);
    const plumb_test::Result run =
        plumb_test::Plumb({"run", dir + "/suite.yaml", "--out", dir + "/out", "--json", "--html",
                           dir + "/out/report.html", "--junit", dir + "/out/junit.xml",
                           "--markdown", dir + "/out/summary.md"},
                          dir);
    INFO(mode << " mode; stderr: " << run.err);
    REQUIRE(run.code == 0);

    // The secrets were echoed and masked where they stood.
    const std::string masked = "echo *** *** *** *** *** *** ***";
    for (const json& record : plumb_test::ReadJournal(dir + "/out/cases.jsonl")) {
      const std::string id = record["id"];
      INFO(record.dump());
      if (id == "invalid") {
        CHECK(record["error"]["reason"] == "response is not valid JSON");
        CHECK(record["error"]["stdout"].get<std::string>().find(masked) != std::string::npos);
      } else if (id == "crash") {
        CHECK(record["error"]["stdout"].get<std::string>().find("echo ***") != std::string::npos);
        CHECK(record["error"]["stderr"].get<std::string>().find(masked) != std::string::npos);
      } else {
        CHECK(record["error"].is_null());
        CHECK(record["answer"] == masked);
        CHECK(record["citations"][0]["doc"] == "***");
        CHECK(record["citations"][0]["quote"] == "***");
        CHECK(record["response"]["debug"] == json{{"***", "***"}});
      }
    }

    std::vector<std::string> leaks;
    size_t files = 0;
    for (const fs::directory_entry& entry : fs::recursive_directory_iterator(dir + "/out")) {
      if (!entry.is_regular_file()) continue;
      ++files;
      for (const std::string& leak :
           Leaks(entry.path().string(), plumb_test::ReadFile(entry.path().string()))) {
        leaks.push_back(leak);
      }
    }
    for (const std::string& leak : Leaks("stdout", run.out)) leaks.push_back(leak);
    for (const std::string& leak : Leaks("stderr", run.err)) leaks.push_back(leak);
    CHECK(files == 6);  // cases.jsonl, run.start.json, run.json, report.html, junit.xml, summary.md
    for (const std::string& leak : leaks) UNSCOPED_INFO(leak);
    CHECK(leaks.empty());
  }
}
