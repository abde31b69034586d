#include "runner/cli/check_command.h"

#include <fmt/format.h>

#include <cstdio>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>

#include "runner/base/sha256.h"
#include "runner/run/prepared_suite.h"

namespace plumb {
namespace {

struct StaleSpan {
  SourcePos pos;
  std::string message;
};

bool ReadRunRecord(const std::string& dir, nlohmann::json* record, std::string* error) {
  const std::string path = dir + "/run.json";
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    *error = "cannot read " + path + "; --since takes a run directory that holds a run.json";
    return false;
  }
  std::stringstream buffer;
  buffer << in.rdbuf();
  *record = nlohmann::json::parse(buffer.str(), nullptr, false);
  if (record->is_discarded() || !record->contains("cases")) {
    *error = path + " is not a plumb run record";
    return false;
  }
  return true;
}

/// Compares each gold span of the suite with the span the run recorded for the same case and
/// position. Spans whose definition changed (another doc, quote or offsets in the suite) are
/// gold edits, not staleness, and are skipped: drift reports those cases as changed gold.
std::vector<StaleSpan> FindStaleSpans(const PreparedSuite& prepared, const nlohmann::json& run) {
  std::vector<StaleSpan> stale;
  const nlohmann::json& recorded_cases = run["cases"];
  for (const Case& c : prepared.suite.cases) {
    auto it = recorded_cases.find(c.id);
    if (it == recorded_cases.end() || !it->contains("sources")) continue;
    const nlohmann::json& recorded = (*it)["sources"];
    for (size_t i = 0; i < c.sources.size() && i < recorded.size(); ++i) {
      const GoldSpan& span = c.sources[i];
      const nlohmann::json& old = recorded[i];
      if (old.value("doc", "") != span.doc) continue;
      const int64_t old_start = old.value("start", int64_t{-1});
      const int64_t old_end = old.value("end", int64_t{-1});
      const bool same_text = old.value("text_sha256", "") == Sha256Hex(span.text);
      const std::string where =
          fmt::format("case '{}' span {} ({} [{}, {}))", c.id, i + 1, span.doc, old_start, old_end);
      if (span.quote) {
        // The quote was found again (the loader fails otherwise): stale only if it moved.
        if (old_start != span.start || old_end != span.end) {
          stale.push_back({span.pos, fmt::format("{}: the quote moved to [{}, {}) after a "
                                                 "corpus edit; rerun to record the new offsets",
                                                 where, span.start, span.end)});
        }
        continue;
      }
      if (old_start != span.start || old_end != span.end) continue;  // offsets edited in suite
      if (same_text) continue;
      std::string message = where + ": the document's text there changed";
      const std::string old_text = old.value("text", "");
      int64_t start = 0, end = 0;
      int occurrences = 0;
      std::string error;
      const Document* doc = prepared.corpus ? prepared.corpus->Get(span.doc, &error) : nullptr;
      if (!old_text.empty() && doc != nullptr &&
          FindQuote(*doc, old_text, &start, &end, &occurrences)) {
        message +=
            fmt::format("; the recorded text is now at [{}, {}): update start/end", start, end);
      } else {
        message += "; the recorded text is no longer in the document: rewrite this gold span";
      }
      stale.push_back({span.pos, message});
    }
  }
  return stale;
}

}  // namespace

int CheckCommand(const CheckOptions& options) {
  PreparedSuite prepared;
  // ${VAR} is not expanded: checking a suite must not need the pipeline's secrets.
  if (!PrepareSuite(options.suite_path, options.pipelines_file, /*expand_env=*/false, &prepared)) {
    return 2;
  }
  std::vector<StaleSpan> stale;
  if (!options.since_run_dir.empty()) {
    nlohmann::json run;
    std::string error;
    if (!ReadRunRecord(options.since_run_dir, &run, &error)) {
      std::fprintf(stderr, "plumb: %s\n", error.c_str());
      return 2;
    }
    stale = FindStaleSpans(prepared, run);
  }
  const Suite& suite = prepared.suite;
  size_t spans = 0, quotes = 0, abstention = 0;
  for (const Case& c : suite.cases) {
    spans += c.sources.size();
    for (const GoldSpan& s : c.sources) quotes += s.quote ? 1 : 0;
    abstention += c.answers.empty() ? 1 : 0;
  }
  if (options.json) {
    nlohmann::json stale_json = nlohmann::json::array();
    for (const StaleSpan& s : stale) {
      stale_json.push_back({{"file", s.pos.file},
                            {"line", s.pos.line},
                            {"column", s.pos.column},
                            {"message", s.message}});
    }
    const nlohmann::json out = {{"suite", suite.name},
                                {"ok", stale.empty()},
                                {"cases", suite.cases.size()},
                                {"abstention_cases", abstention},
                                {"gold_spans", spans},
                                {"quotes_located", quotes},
                                {"pipelines", suite.pipelines.size()},
                                {"corpus_fingerprint", prepared.corpus_fingerprint},
                                {"stale_spans", stale_json}};
    std::printf("%s\n", out.dump(2).c_str());
  } else {
    for (const StaleSpan& s : stale) {
      Diagnostic d{s.pos, s.message, ""};
      std::printf("%s\n", d.Format("stale").c_str());
    }
    std::printf(
        "%s: %s: %zu cases (%zu abstention), %zu gold spans (%zu quotes located), %zu "
        "pipelines\n",
        suite.path.c_str(), stale.empty() ? "ok" : "stale gold", suite.cases.size(), abstention,
        spans, quotes, suite.pipelines.size());
    if (!stale.empty()) {
      std::printf("%zu gold span%s stale since %s\n", stale.size(),
                  stale.size() == 1 ? " is" : "s are", options.since_run_dir.c_str());
    }
  }
  return stale.empty() ? 0 : 1;
}

}  // namespace plumb
