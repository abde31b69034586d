// Fuzz target: untrusted text shown in the reports (SPEC §10: "All pipeline output is
// untrusted: escaped"). The input is split at 0x1F into a reply's answer, a cited quote, a
// cited doc name and a stray reply member, and a case's question and gold answer. `plumb score`
// runs in process on a one-case suite with that reply, writing the HTML report and JUnit XML,
// and `plumb drift` compares it with a benign reply's run of the same suite, writing the drift
// page (a suite the loader refuses, with an empty question say, writes none and is skipped).
// Contracts checked: scoring, comparing and rendering never crash; each page holds only the tags
// and attribute names benign runs' pages hold (a passing and a failing reply on either side), and
// exactly as many <script> elements (one); the JUnit file holds only a benign run's tags. Text that
// escaped its escaping would add a tag or an attribute (an `onerror`, a second script) that the
// benign pages lack.
#include <fcntl.h>
#include <stdlib.h>
#include <unistd.h>

#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <set>
#include <sstream>
#include <string>
#include <tuple>
#include <utility>
#include <vector>

#include "runner/cli/drift_command.h"
#include "runner/cli/score_command.h"
#include "tests/fuzz/fuzz_check.h"

namespace {

struct Markup {
  std::set<std::string> tags;        // lower-cased names, closing tags as "/name"
  std::set<std::string> attributes;  // lower-cased names
  int scripts = 0;
};

bool NameChar(char c) {
  return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '-' ||
         c == '_' || c == ':' || c == '!' || c == '?';
}

std::string Lower(std::string s) {
  for (char& c : s) c = static_cast<char>(c >= 'A' && c <= 'Z' ? c - 'A' + 'a' : c);
  return s;
}

/// The tags and attribute names of an HTML or XML text, as a browser's tokenizer would start
/// them: a '<' followed by a name or '/'. The contents of script and style elements and of
/// comments and CDATA sections are skipped, as a browser skips them.
Markup Scan(const std::string& text) {
  Markup m;
  size_t at = 0;
  while ((at = text.find('<', at)) != std::string::npos) {
    if (text.compare(at, 4, "<!--") == 0) {
      at = text.find("-->", at);
      if (at == std::string::npos) break;
      continue;
    }
    if (text.compare(at, 9, "<![CDATA[") == 0) {
      m.tags.insert("![cdata[");
      at = text.find("]]>", at);
      if (at == std::string::npos) break;
      continue;
    }
    size_t i = at + 1;
    const bool closing = i < text.size() && text[i] == '/';
    if (closing) ++i;
    size_t name_end = i;
    while (name_end < text.size() && NameChar(text[name_end])) ++name_end;
    if (name_end == i) {  // a '<' that starts no tag (text in a script, say)
      ++at;
      continue;
    }
    const std::string name = Lower(text.substr(i, name_end - i));
    m.tags.insert((closing ? "/" : "") + name);
    // Attribute names up to the tag's '>', stepping over quoted values.
    size_t j = name_end;
    while (j < text.size() && text[j] != '>') {
      if (text[j] == '"' || text[j] == '\'') {
        const size_t close = text.find(text[j], j + 1);
        j = close == std::string::npos ? text.size() : close + 1;
        continue;
      }
      if (NameChar(text[j])) {
        size_t k = j;
        while (k < text.size() && NameChar(text[k])) ++k;
        m.attributes.insert(Lower(text.substr(j, k - j)));
        j = k;
        continue;
      }
      ++j;
    }
    at = j;
    if (!closing && (name == "script" || name == "style")) {
      if (name == "script") ++m.scripts;
      at = text.find("</" + name, at);
      if (at == std::string::npos) break;
    }
  }
  return m;
}

std::string ReadAll(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

struct Workspace {
  std::string dir;
  Markup page;
  Markup junit;
  Markup drift;
};

struct Pages {
  std::string html;
  std::string junit;
  std::string drift;
};

std::string JsonText(const std::vector<std::string>& f, size_t i, const char* fallback) {
  return nlohmann::json(i < f.size() ? f[i] : std::string(fallback))
      .dump(-1, ' ', false, nlohmann::json::error_handler_t::replace);
}

void WriteReply(const std::string& path, const std::vector<std::string>& f) {
  std::ofstream(path, std::ios::trunc)
      << "{\"id\": \"c\", \"answer\": " << JsonText(f, 0, "Ten minutes before departure.")
      << ", \"citations\": [{\"doc\": \"boarding.md\", \"quote\": " << JsonText(f, 1, "ten minutes")
      << "}, {\"doc\": " << JsonText(f, 2, "boarding.md") << ", \"start\": 0, \"end\": 8}]"
      << ", \"retrieved\": [{\"doc\": " << JsonText(f, 2, "boarding.md") << "}]"
      << ", \"note\": " << JsonText(f, 5, "") << "}\n";
}

/// Scores the reply `f` (and, as the drift's base, the reply `base`) on a one-case suite whose
/// question and gold come from `f`, and renders the run's HTML and JUnit files and the drift
/// page; false when the suite itself was refused (an empty question or gold answer, say).
bool Render(const Workspace& w, const std::vector<std::string>& f,
            const std::vector<std::string>& base, Pages* out) {
  std::ofstream(w.dir + "/cases.jsonl", std::ios::trunc)
      << "{\"id\": \"c\", \"question\": " << JsonText(f, 3, "When does boarding close?")
      << ", \"answers\": [" << JsonText(f, 4, "ten minutes") << "]}\n";
  WriteReply(w.dir + "/base.jsonl", base);
  WriteReply(w.dir + "/predictions.jsonl", f);
  plumb::ScoreOptions options;
  options.suite_path = w.dir + "/suite.yaml";
  options.predictions_path = w.dir + "/base.jsonl";
  options.out_dir = w.dir + "/base";
  if (plumb::ScoreCommand(options) == 2) return false;
  options.predictions_path = w.dir + "/predictions.jsonl";
  options.out_dir = w.dir + "/run";
  options.outputs.html = w.dir + "/report.html";
  options.outputs.junit = w.dir + "/junit.xml";
  plumb::DriftCommandOptions drift;
  drift.base_dir = w.dir + "/base";
  drift.cand_dir = options.out_dir;
  drift.outputs.html = w.dir + "/drift.html";
  drift.drift.resamples = 200;  // the page's markup does not depend on it; the time does
  for (const std::string* file :
       {&options.outputs.html, &options.outputs.junit, &drift.outputs.html}) {
    std::remove(file->c_str());
  }
  if (plumb::ScoreCommand(options) == 2) return false;
  plumb::DriftCommand(drift);
  out->html = ReadAll(options.outputs.html);
  out->junit = ReadAll(options.outputs.junit);
  out->drift = ReadAll(drift.outputs.html);
  return true;
}

void Merge(const Markup& more, Markup* into) {
  into->tags.insert(more.tags.begin(), more.tags.end());
  into->attributes.insert(more.attributes.begin(), more.attributes.end());
  into->scripts = more.scripts;
}

const Workspace& Setup() {
  static const Workspace workspace = [] {
    Workspace w;
    char dir[] = "/tmp/plumb_report_fuzz_XXXXXX";
    FUZZ_CHECK(mkdtemp(dir) != nullptr, "cannot make a directory for the run");
    w.dir = dir;
    static const std::string removed_at_exit = w.dir;
    std::atexit([] { std::filesystem::remove_all(removed_at_exit); });
    std::filesystem::create_directories(w.dir + "/docs");
    std::ofstream(w.dir + "/docs/boarding.md")
        << "Foot passengers: Boarding closes ten minutes before departure.\n";
    std::ofstream(w.dir + "/suite.yaml")
        << "plumb: 1\nname: report-fuzz\ncorpus: docs\nmax_error_rate: 1\ninclude: [cases.jsonl]\n";
    // The summary table goes to stdout; a fuzzer's own output goes to stderr.
    const int null = open("/dev/null", O_WRONLY);
    dup2(null, 1);
    close(null);
    // The benign pages: a passing and a failing answer on either side of the drift, so every
    // group (lost, gained, still failing, still passing) and its cards are among them.
    // And an answer longer than the page shows at once (html_bounded_text.h), whose card has
    // a "show all" button and the whole text in a <template>.
    const std::vector<std::string> passing = {"Ten minutes."}, failing = {"Five minutes."};
    std::string words;
    for (int i = 0; i < 3000; ++i) words += "ten minutes ";
    const std::vector<std::string> long_answer = {words};
    for (const auto* cand : {&passing, &failing, &long_answer}) {
      for (const auto* base : {&passing, &failing, &long_answer}) {
        Pages pages;
        FUZZ_CHECK(Render(w, *cand, *base, &pages) && !pages.html.empty() && !pages.junit.empty() &&
                       !pages.drift.empty(),
                   "a benign run wrote no report");
        Merge(Scan(pages.html), &w.page);
        Merge(Scan(pages.junit), &w.junit);
        Merge(Scan(pages.drift), &w.drift);
      }
    }
    return w;
  }();
  return workspace;
}

void CheckWithin(const Markup& seen, const Markup& allowed, const char* what) {
  for (const std::string& tag : seen.tags) {
    if (allowed.tags.count(tag) == 0) {
      std::fprintf(stderr, "fuzz: %s has a tag the benign one lacks: <%s>\n", what, tag.c_str());
      FUZZ_CHECK(false, "untrusted text became markup");
    }
  }
  for (const std::string& name : seen.attributes) {
    if (allowed.attributes.count(name) == 0) {
      std::fprintf(stderr, "fuzz: %s has an attribute the benign one lacks: %s\n", what,
                   name.c_str());
      FUZZ_CHECK(false, "untrusted text became an attribute");
    }
  }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  const Workspace& w = Setup();
  std::vector<std::string> fields(1);
  for (size_t i = 0; i < size && fields.size() <= 6; ++i) {
    if (data[i] == 0x1F) {
      fields.emplace_back();
    } else {
      fields.back() += static_cast<char>(data[i]);
    }
  }
  Pages pages;
  if (!Render(w, fields, {}, &pages)) return 0;
  FUZZ_CHECK(!pages.html.empty() && !pages.junit.empty() && !pages.drift.empty(),
             "a scored run wrote no report");
  for (const auto& [text, allowed, what] : {std::tuple{&pages.html, &w.page, "the HTML report"},
                                            {&pages.drift, &w.drift, "the drift page"}}) {
    const Markup page = Scan(*text);
    CheckWithin(page, *allowed, what);
    FUZZ_CHECK(page.scripts == allowed->scripts, "a page has another <script> than its own");
  }
  CheckWithin(Scan(pages.junit), w.junit, "the JUnit XML");
  return 0;
}
