#include "runner/cli/check_command.h"

#include <fmt/format.h>

#include <algorithm>
#include <cstdio>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>

#include "runner/base/sha256.h"
#include "runner/cli/grader_session.h"
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

/// At most `limit` code points of `text` on one line (line breaks as spaces), "..." if cut.
std::string Clip(std::string_view text, size_t limit) {
  std::string out;
  size_t count = 0;
  for (size_t i = 0; i < text.size(); ++i) {
    const unsigned char c = static_cast<unsigned char>(text[i]);
    if ((c & 0xC0) != 0x80 && count++ == limit) return out + "...";
    out += c == '\n' || c == '\r' || c == '\t' ? ' ' : static_cast<char>(c);
  }
  return out;
}

/// Byte length of the first `n` code points of `text`.
size_t BytesOfCodePoints(std::string_view text, size_t n) {
  size_t i = 0;
  for (size_t seen = 0; i < text.size(); ++i) {
    if ((static_cast<unsigned char>(text[i]) & 0xC0) != 0x80 && seen++ == n) break;
  }
  return i;
}

size_t CodePointCount(std::string_view text) {
  size_t n = 0;
  for (char c : text) n += (static_cast<unsigned char>(c) & 0xC0) != 0x80 ? 1 : 0;
  return n;
}

/// The longest start (or end) of `text`, at least `minimum` code points, found in `doc`; its
/// span in *start, *end. A longer start found implies every shorter one is: binary search.
bool LongestFoundPart(const Document& doc, std::string_view text, bool from_end, size_t minimum,
                      int64_t* start, int64_t* end) {
  const size_t total = CodePointCount(text);
  auto part = [&](size_t n) {
    return from_end ? text.substr(BytesOfCodePoints(text, total - n))
                    : text.substr(0, BytesOfCodePoints(text, n));
  };
  size_t lo = minimum, hi = total, best = 0;
  while (lo <= hi && hi > 0) {
    const size_t mid = lo + (hi - lo) / 2;
    int64_t s = 0, e = 0;
    int occurrences = 0;
    if (mid > 0 && FindQuote(doc, part(mid), &s, &e, &occurrences)) {
      best = mid;
      *start = s;
      *end = e;
      lo = mid + 1;
    } else {
      if (mid == 0) break;
      hi = mid - 1;
    }
  }
  return best > 0;
}

/// Where the recorded text of a gold span went after a corpus edit, as a phrase: the stretch
/// of the document between the longest start and the longest end of the old text still found
/// (an edited middle), or what the recorded offsets hold now when neither end is found.
std::string WhereTextWent(const Document& doc, const std::string& old_text, int64_t old_start,
                          int64_t old_end) {
  const size_t length = CodePointCount(old_text);
  const size_t minimum = std::min<size_t>(length, std::max<size_t>(4, length / 4));
  int64_t head_start = 0, head_end = 0, tail_start = 0, tail_end = 0;
  const bool head = LongestFoundPart(doc, old_text, false, minimum, &head_start, &head_end);
  const bool tail = LongestFoundPart(doc, old_text, true, minimum, &tail_start, &tail_end);
  const int64_t room = 3 * static_cast<int64_t>(length) + 20;
  int64_t from = -1, to = -1;
  if (head && tail && head_start <= tail_start && tail_end - head_start <= room) {
    from = head_start;
    to = tail_end;
  } else if (head) {
    from = head_start;
    to = head_start + static_cast<int64_t>(length);
  } else if (tail) {
    from = std::max<int64_t>(0, tail_end - static_cast<int64_t>(length));
    to = tail_end;
  }
  if (from >= 0) {
    to = std::min(to, doc.length_cp);
    return fmt::format("the text there now reads \"{}\" at [{}, {})",
                       Clip(CodePointSlice(doc, from, to), 80), from, to);
  }
  if (old_start >= doc.length_cp) return "the document now ends before its recorded place";
  return fmt::format(
      "neither its start nor its end is left in the document; [{}, {}) now reads "
      "\"{}\"",
      old_start, old_end, Clip(CodePointSlice(doc, old_start, old_end), 80));
}

/// Compares each gold span of the suite with the span the run recorded for the same case and
/// position. Spans whose definition changed (another doc, or another quote or offsets in the
/// suite) are gold edits, not staleness, and are skipped: drift reports those cases as changed
/// gold. A quote that still resolves is never stale: if its offsets changed it goes to *moved,
/// for information. A quote that no longer resolves, and offsets whose text changed, are stale.
std::vector<StaleSpan> FindStaleSpans(const PreparedSuite& prepared, const nlohmann::json& run,
                                      std::vector<StaleSpan>* moved) {
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
      const std::string old_text = old.value("text", "");
      const std::string where =
          fmt::format("case '{}' span {} ({} [{}, {}))", c.id, i + 1, span.doc, old_start, old_end);
      std::string error;
      const Document* doc = prepared.corpus ? prepared.corpus->Get(span.doc, &error) : nullptr;
      if (span.quote && !span.located) {
        // The quote is not in the document any more: the corpus edit changed its text.
        const std::string went =
            doc != nullptr
                ? WhereTextWent(*doc, old_text.empty() ? *span.quote : old_text, old_start, old_end)
                : "the document cannot be read (" + error + ")";
        stale.push_back({span.pos, fmt::format("{}: the quote \"{}\" is no longer in the "
                                               "document; {}: rewrite the quote",
                                               where, Clip(*span.quote, 60), went)});
        continue;
      }
      if (span.quote) {
        // Found again. Another text than recorded means the quote itself was edited (a gold
        // edit); the same text at other offsets is a move, which needs nothing from the user.
        if (span.text == old_text && (old_start != span.start || old_end != span.end)) {
          moved->push_back({span.pos, fmt::format("{}: the quote is now at [{}, {}); nothing to "
                                                  "do, the next run records the new offsets",
                                                  where, span.start, span.end)});
        }
        continue;
      }
      if (old_start != span.start || old_end != span.end) continue;  // offsets edited in suite
      if (old.value("text_sha256", "") == Sha256Hex(span.text)) continue;
      std::string message = where + ": the document's text there changed";
      int64_t start = 0, end = 0;
      int occurrences = 0;
      if (!old_text.empty() && doc != nullptr &&
          FindQuote(*doc, old_text, &start, &end, &occurrences)) {
        message +=
            fmt::format("; the recorded text is now at [{}, {}): update start/end", start, end);
      } else {
        message += "; the recorded text is no longer in the document: rewrite this gold span";
        if (doc != nullptr && !old_text.empty()) {
          message += " (" + WhereTextWent(*doc, old_text, old_start, old_end) + ")";
        }
      }
      stale.push_back({span.pos, message});
    }
  }
  return stale;
}

/// Quotes kept unlocated for --since that the run did not record (a new case or span): these
/// are errors, as without --since.
std::vector<StaleSpan> UnlocatedQuotesNotInRun(const PreparedSuite& prepared,
                                               const nlohmann::json& run) {
  std::vector<StaleSpan> errors;
  const nlohmann::json& recorded_cases = run["cases"];
  for (const Case& c : prepared.suite.cases) {
    auto it = recorded_cases.find(c.id);
    const nlohmann::json* recorded =
        it != recorded_cases.end() && it->contains("sources") ? &(*it)["sources"] : nullptr;
    for (size_t i = 0; i < c.sources.size(); ++i) {
      const GoldSpan& span = c.sources[i];
      if (span.located) continue;
      if (recorded != nullptr && i < recorded->size() &&
          (*recorded)[i].value("doc", "") == span.doc) {
        continue;
      }
      errors.push_back({span.pos, "quote not found in '" + span.doc + "': \"" +
                                      Clip(*span.quote, 60) +
                                      "\"; the quote must appear in the document as written "
                                      "(runs of whitespace may differ)"});
    }
  }
  return errors;
}

}  // namespace

int CheckCommand(const CheckOptions& options) {
  PreparedSuite prepared;
  // ${VAR} is not expanded: checking a suite must not need the pipeline's secrets. With
  // --since, a quote no longer found is not a load error: it is stale gold to report.
  const bool since = !options.since_run_dir.empty();
  if (!PrepareSuite(options.suite_path, options.pipelines_file, /*expand_env=*/false, &prepared, {},
                    /*keep_unlocated_quotes=*/since)) {
    return 2;
  }
  if (!RefuseUncalibratedGates(prepared.suite)) return 2;
  std::vector<StaleSpan> stale;
  std::vector<StaleSpan> moved;
  if (since) {
    nlohmann::json run;
    std::string error;
    if (!ReadRunRecord(options.since_run_dir, &run, &error)) {
      std::fprintf(stderr, "plumb: %s\n", error.c_str());
      return 2;
    }
    const std::vector<StaleSpan> errors = UnlocatedQuotesNotInRun(prepared, run);
    if (!errors.empty()) {
      for (const StaleSpan& e : errors) {
        std::fprintf(stderr, "%s\n", Diagnostic{e.pos, e.message, ""}.Format("error").c_str());
      }
      std::fprintf(stderr, "plumb: %zu problem%s in %s\n", errors.size(),
                   errors.size() == 1 ? "" : "s", options.suite_path.c_str());
      return 2;
    }
    stale = FindStaleSpans(prepared, run, &moved);
  }
  const Suite& suite = prepared.suite;
  size_t spans = 0, quotes = 0, abstention = 0;
  for (const Case& c : suite.cases) {
    spans += c.sources.size();
    for (const GoldSpan& s : c.sources) quotes += s.quote ? 1 : 0;
    abstention += c.answers.empty() ? 1 : 0;
  }
  if (options.json) {
    auto to_json = [](const std::vector<StaleSpan>& spans) {
      nlohmann::json list = nlohmann::json::array();
      for (const StaleSpan& s : spans) {
        list.push_back({{"file", s.pos.file},
                        {"line", s.pos.line},
                        {"column", s.pos.column},
                        {"message", s.message}});
      }
      return list;
    };
    const nlohmann::json stale_json = to_json(stale);
    const nlohmann::json moved_json = to_json(moved);
    const nlohmann::json out = {{"suite", suite.name},
                                {"ok", stale.empty()},
                                {"cases", suite.cases.size()},
                                {"abstention_cases", abstention},
                                {"gold_spans", spans},
                                {"quotes_located", quotes},
                                {"pipelines", suite.pipelines.size()},
                                {"corpus_fingerprint", prepared.corpus_fingerprint},
                                {"stale_spans", stale_json},
                                {"moved_spans", moved_json}};
    std::printf("%s\n", out.dump(2).c_str());
  } else {
    for (const StaleSpan& s : stale) {
      Diagnostic d{s.pos, s.message, ""};
      std::printf("%s\n", d.Format("stale").c_str());
    }
    for (const StaleSpan& s : moved) {
      Diagnostic d{s.pos, s.message, ""};
      std::printf("%s\n", d.Format("moved").c_str());
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
    if (!moved.empty()) {
      std::printf("%zu quote%s moved since %s (informational: %s still found)\n", moved.size(),
                  moved.size() == 1 ? "" : "s", options.since_run_dir.c_str(),
                  moved.size() == 1 ? "it is" : "they are");
    }
  }
  return stale.empty() ? 0 : 1;
}

}  // namespace plumb
