#include "runner/suite/suite_loader.h"

#include <re2/re2.h>
#include <sys/stat.h>

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <exception>
#include <filesystem>
#include <fstream>
#include <memory>
#include <set>
#include <thread>
#include <utility>

#include "runner/base/code_points.h"
#include "runner/base/json_writer.h"
#include "runner/base/parallel_chunks.h"
#include "runner/base/sha256.h"
#include "runner/suite/corpus.h"
#include "runner/suite/did_you_mean.h"
#include "runner/suite/flow_yaml.h"
#include "runner/suite/jsonl_reader.h"
#include "runner/suite/node_checker.h"
#include "runner/suite/pipeline_config_loader.h"
#include "runner/suite/plain_case_line.h"
#include "runner/suite/source_node.h"
#include "runner/suite/yaml_reader.h"

namespace plumb {
namespace {

namespace fs = std::filesystem;

const std::vector<std::string> kSuiteKeys = {
    "plumb",       "name",      "corpus",       "normalize",   "lang",           "include",
    "retrieval_k", "case_pass", "correct_from", "min_overlap", "max_error_rate", "floors",
    "ceilings",    "graders",   "pipelines",    "updates",     "cases"};
// Top-level keys an earlier format used; each is refused with its entry in the new form.
const std::vector<std::string> kRetiredSuiteKeys = {"thresholds"};
const std::vector<std::string> kGraderKeys = {"pipeline", "rubric",           "scale",
                                              "repeat",   "same_as_pipeline", "verdict_pattern",
                                              "labels",   "min_labels",       "min_kappa"};
const std::vector<std::string> kCaseKeys = {"id",     "question", "answers", "patterns",
                                            "number", "sources",  "tags",    "input",
                                            "turns",  "after",    "stale_answers"};
// A turn of a session (issue 22) holds a case's gold fields; a session holds id, turns, and
// tags and input that every turn takes (a turn's own input replaces the session's).
const std::vector<std::string> kTurnKeys = {"question", "answers", "patterns", "number",
                                            "sources",  "tags",    "input"};
const std::vector<std::string> kUpdateKeys = {"id", "docs", "remove"};
// More files than this under one update's docs directory is refused (a mistyped `docs:` that
// names a large tree would otherwise be walked and copied into every run).
constexpr size_t kMaxUpdateFiles = 100000;
const std::vector<std::string> kSourceKeys = {"doc", "quote", "start", "end"};
const std::vector<std::string> kNumberKeys = {"value", "tolerance", "unit"};
// Metrics scored on each case (recall@K comes on top, one per K in retrieval_k).
const std::vector<std::string> kCaseMetrics = {
    "exact_match",     "token_f1",    "correct",      "pattern_match", "number_match",
    "token_recall",    "covers_gold", "knowledge_f1", "cited_support", "citation_precision",
    "citation_recall", "citation_f1", "mrr"};
// Metrics that exist only over a whole run.
const std::vector<std::string> kRunMetrics = {"abstain_precision", "abstain_recall",
                                              "pass_rate",         "error_rate",
                                              "latency_p50_ms",    "latency_p95_ms"};

// Below this many cases per thread, reading or hashing them on one thread is quicker than
// starting another.
constexpr size_t kCasesPerChunk = 2000;
// A JSONL file at least this large is hashed on a thread of its own while its lines are read.
constexpr size_t kHashApartBytes = 1 << 20;
// added[] of a JSONL line that held a session (its turns are kept apart until ids register).
constexpr char kSessionLine = 2;
constexpr char kNoCorpusMessage[] = "this suite has gold sources but no corpus";

bool Contains(const std::vector<std::string>& names, const std::string& name) {
  return std::find(names.begin(), names.end(), name) != names.end();
}

// `value` relative to `dir` (the directory of the file that names it), lexically normalized.
std::string ResolveAgainst(const std::string& dir, const std::string& value) {
  fs::path path(value);
  if (path.is_relative() && !dir.empty()) path = fs::path(dir) / path;
  std::string out = path.lexically_normal().generic_string();
  while (out.size() > 1 && out.back() == '/') out.pop_back();
  return out.empty() ? "." : out;
}

std::string DirectoryOf(const std::string& file) {
  return fs::path(file).parent_path().generic_string();
}

bool HasExtension(const std::string& path, const char* extension) {
  return fs::path(path).extension() == extension;
}

std::string FirstCodePoints(const std::string& text, size_t count) {
  size_t end = 0, seen = 0;
  while (end < text.size() && seen < count) {
    ++end;
    while (end < text.size() && (static_cast<unsigned char>(text[end]) & 0xC0) == 0x80) ++end;
    ++seen;
  }
  return end < text.size() ? text.substr(0, end) + "..." : text;
}

std::string FormatKs(const std::vector<int>& ks) {
  std::string out = "[";
  for (size_t i = 0; i < ks.size(); ++i) out += (i ? ", " : "") + std::to_string(ks[i]);
  return out + "]";
}

bool KeyComesBefore(const SourceEntry* a, const SourceEntry* b) {
  return std::make_pair(a->key.line, a->key.column) < std::make_pair(b->key.line, b->key.column);
}

class SuiteLoader {
 public:
  SuiteLoader(const LoadOptions& options, Suite* suite, Diagnostics* errors, Diagnostics* warnings)
      : options_(options),
        suite_(suite),
        errors_(errors),
        warnings_(warnings),
        first_error_(errors->size()),
        first_warning_(warnings->size()) {}

  void Load(const std::string& path) {
    suite_->path = path;
    std::string text;
    if (ReadFile(path, SourcePos{path, 0, 0}, "suite file", &text)) {
      SourceNode root;
      Diagnostic syntax;
      if (!ReadYaml(text, path, &root, &syntax)) {
        errors_->push_back(syntax);
      } else {
        include_chain_.push_back({Canonical(path), path});
        NodeChecker check(path, errors_, warnings_);
        ReadSuiteRoot(root, &check);
      }
    }
    if (!options_.pipelines_file.empty()) ReadPipelinesFile(options_.pipelines_file);
    Finish();
  }

 private:
  enum class CorpusState { kNone, kOpen, kBroken };

  static std::string Canonical(const std::string& path) {
    std::error_code ec;
    fs::path canonical = fs::weakly_canonical(path, ec);
    return ec ? path : canonical.string();
  }

  // Reads `path` after checking its size; records it for Suite::files and, unless `hash` is
  // false (the caller then calls HashFileText itself, before any later file), the suite hash.
  // Problems are reported at `named_at` (where an include names the file, or the file itself).
  bool ReadFile(const std::string& path, const SourcePos& named_at, const char* what,
                std::string* text, bool hash = true) {
    struct stat info;
    if (stat(path.c_str(), &info) != 0) {
      errors_->push_back(
          {named_at,
           std::string("cannot read ") + what + " '" + path + "': " + std::strerror(errno), ""});
      return false;
    }
    if (!S_ISREG(info.st_mode)) {
      errors_->push_back(
          {named_at, std::string("cannot read ") + what + " '" + path + "': not a regular file",
           ""});
      return false;
    }
    if (info.st_size > kMaxSuiteFileBytes) {
      errors_->push_back({named_at,
                          std::string(what) + " '" + path + "' is " + std::to_string(info.st_size) +
                              " bytes; the limit is " + std::to_string(kMaxSuiteFileBytes) +
                              " bytes (64 MiB)",
                          "split the cases into several include files"});
      return false;
    }
    std::ifstream in(path, std::ios::binary);
    text->assign(static_cast<size_t>(info.st_size), '\0');
    if (!in.read(text->data(), info.st_size)) {
      errors_->push_back({named_at, std::string("cannot read ") + what + " '" + path + "'", ""});
      return false;
    }
    suite_->files.push_back(path);
    if (hash) HashFileText(*text);
    // yaml-cpp passes ill-formed UTF-8 through into scalars, and every later stage writes
    // case text into JSON, so the file is checked whole, here.
    size_t bad = 0;
    if (!IsValidUtf8(*text, &bad)) {
      size_t line_start = text->rfind('\n', bad == 0 ? 0 : bad - 1);
      line_start = line_start == std::string::npos || bad == 0 ? 0 : line_start + 1;
      int line = 1 + int(std::count(text->begin(), text->begin() + long(line_start), '\n'));
      int column =
          1 + int(CountCodePoints(std::string_view(*text).substr(line_start, bad - line_start)));
      errors_->push_back({{path, line, column},
                          std::string(what) +
                              " is not valid UTF-8: ill-formed byte sequence at "
                              "byte offset " +
                              std::to_string(bad),
                          "save the file as UTF-8"});
      return false;
    }
    return true;
  }

  /// A file's share of the suite hash: its size, a newline, its bytes.
  void HashFileText(const std::string& text) {
    suite_hash_.Update(std::to_string(text.size()) + "\n");
    suite_hash_.Update(text);
  }

  void ReadSuiteRoot(const SourceNode& root, NodeChecker* check) {
    if (root.IsNull()) {
      check->Error(root, "the suite file is empty", "start it with 'plumb: 1' and 'name: ...'");
      return;
    }
    auto keys = check->Keys(root, kSuiteKeys, "at the top level of the suite", "a suite",
                            kRetiredSuiteKeys);
    if (!root.IsMapping()) return;
    const std::string dir = DirectoryOf(check->file());

    if (auto it = keys.find("plumb"); it == keys.end()) {
      check->Error(root, "missing required key 'plumb'", "add 'plumb: 1' (the format version)");
    } else {
      int64_t version;
      const SourceNode& value = it->second->value;
      if (!ScalarAsInt(value, &version)) {
        check->Error(value, "wrong type for 'plumb'",
                     "expected the integer 1, got " + DescribeNode(value));
      } else if (version != 1) {
        check->Error(value, "unsupported suite format version " + value.scalar,
                     "this plumb reads 'plumb: 1'");
      }
    }
    if (auto it = keys.find("name"); it == keys.end()) {
      check->Error(root, "missing required key 'name'", "add e.g. 'name: my-suite'");
    } else if (check->String(it->second->value, "name", &suite_->name)) {
      bool valid = !suite_->name.empty();
      for (char c : suite_->name) {
        valid = valid && ((c >= 'a' && c <= 'z') || (c >= '0' && c <= '9') || c == '.' ||
                          c == '_' || c == '-');
      }
      if (!valid) {
        check->Error(it->second->value, "invalid suite name '" + suite_->name + "'",
                     "use lowercase letters, digits, '.', '_' and '-'");
      }
    }
    if (auto it = keys.find("corpus"); it != keys.end()) {
      std::string value;
      if (check->NonEmptyString(it->second->value, "corpus", &value)) {
        std::string dir_path = ResolveAgainst(dir, value);
        corpus_ = std::make_unique<Corpus>();
        std::string error;
        if (corpus_->Open(dir_path, &error)) {
          suite_->corpus_dir = dir_path;
          corpus_state_ = CorpusState::kOpen;
        } else {
          check->Error(it->second->value, error,
                       "'corpus' is relative to the suite file's directory");
          corpus_state_ = CorpusState::kBroken;
        }
      } else {
        corpus_state_ = CorpusState::kBroken;
      }
    }
    if (auto it = keys.find("updates"); it != keys.end())
      ReadUpdates(it->second->value, dir, check);
    if (auto it = keys.find("normalize"); it != keys.end()) {
      std::string value;
      if (check->String(it->second->value, "normalize", &value) &&
          !metrics::ParseNormalizationProfile(value, &suite_->normalize)) {
        check->Error(it->second->value, "unknown normalization profile '" + value + "'",
                     DidYouMeanHint(value, {"squad", "mlqa", "unicode"}, "profiles"));
      }
    }
    if (auto it = keys.find("lang"); it != keys.end()) {
      if (check->String(it->second->value, "lang", &suite_->lang) &&
          (!IsNameOf(suite_->lang, "-_") || suite_->lang.size() > 35)) {
        check->Error(it->second->value, "invalid language code '" + suite_->lang + "'",
                     "use an ISO 639-1 code such as en, fr or ja");
      }
    }
    if (auto it = keys.find("retrieval_k"); it != keys.end())
      ReadRetrievalK(it->second->value, check);
    // Graders first: their grade.NAME metrics may appear in case_pass, correct_from, floors.
    if (auto it = keys.find("graders"); it != keys.end()) ReadGraders(it->second->value, check);
    if (auto it = keys.find("case_pass"); it != keys.end()) {
      suite_->case_pass.clear();
      ReadMetricMap(it->second->value, "case_pass", /*per_case=*/true, check, &suite_->case_pass);
    }
    if (auto it = keys.find("correct_from"); it != keys.end())
      ReadCorrectFrom(it->second->value, check);
    if (auto it = keys.find("min_overlap"); it != keys.end()) {
      check->Fraction(it->second->value, "min_overlap", &suite_->min_overlap);
    }
    if (auto it = keys.find("max_error_rate"); it != keys.end()) {
      check->Fraction(it->second->value, "max_error_rate", &suite_->max_error_rate);
    }
    if (auto it = keys.find("thresholds"); it != keys.end()) RefuseThresholds(*it->second, check);
    if (auto it = keys.find("floors"); it != keys.end())
      ReadLimits(it->second->value, "floors", /*ceilings=*/false, check);
    if (auto it = keys.find("ceilings"); it != keys.end())
      ReadLimits(it->second->value, "ceilings", /*ceilings=*/true, check);
    if (auto it = keys.find("pipelines"); it != keys.end()) {
      if (options_.pipelines_file.empty()) {
        ReadPipelines(it->second->value, Expansion(), check, &suite_->pipelines);
      } else if (!suite_->graders.empty()) {
        // --pipelines replaces the pipelines under test, not the graders': the suite's grader
        // pipelines are kept unless the file defines the same names (ReadPipelinesFile).
        std::vector<std::string> names;
        for (const GraderConfig& grader : suite_->graders) names.push_back(grader.pipeline);
        ReadPipelines(it->second->value, PipelineExpansion{options_.expand_env, names}, check,
                      &suite_grader_pipelines_);
      }
    }
    ReadCasesAndIncludes(keys, check);
  }

  // `include` and `cases` in the order they are written.
  void ReadCasesAndIncludes(const KeyIndex& keys, NodeChecker* check) {
    std::vector<const SourceEntry*> parts;
    for (const char* key : {"include", "cases"}) {
      if (auto it = keys.find(key); it != keys.end()) parts.push_back(it->second);
    }
    std::sort(parts.begin(), parts.end(), KeyComesBefore);
    for (const SourceEntry* part : parts) {
      if (part->key.scalar == "include") {
        ReadIncludeList(part->value, check);
      } else if (check->Sequence(part->value, "cases", "cases")) {
        for (const SourceNode& item : part->value.items) ReadCase(item, check);
      }
    }
  }

  void ReadIncludeList(const SourceNode& list, NodeChecker* check) {
    std::vector<std::string> names;
    std::vector<const SourceNode*> nodes;
    check->StringList(list, "include", &names, &nodes);
    const std::string dir = DirectoryOf(check->file());
    for (size_t i = 0; i < names.size(); ++i) {
      const SourceNode& node = *nodes[i];
      if (!HasExtension(names[i], ".yaml") && !HasExtension(names[i], ".yml") &&
          !HasExtension(names[i], ".jsonl")) {
        check->Error(node, "include '" + names[i] + "' is not a .yaml, .yml or .jsonl file");
        continue;
      }
      ReadIncludedFile(ResolveAgainst(dir, names[i]), node, check);
    }
  }

  void ReadIncludedFile(const std::string& path, const SourceNode& named_at,
                        NodeChecker* named_in) {
    std::string canonical = Canonical(path);
    for (size_t i = 0; i < include_chain_.size(); ++i) {
      if (include_chain_[i].first != canonical) continue;
      std::string chain;
      for (size_t j = i; j < include_chain_.size(); ++j) chain += include_chain_[j].second + " -> ";
      named_in->Error(named_at, "include cycle: " + chain + path,
                      "a file must not include itself, directly or through other includes");
      return;
    }
    const bool jsonl = HasExtension(path, ".jsonl");
    std::string text;
    if (!ReadFile(path, named_in->Pos(named_at), "include file", &text, /*hash=*/!jsonl)) return;
    include_chain_.push_back({canonical, path});
    NodeChecker check(path, errors_, warnings_);
    if (jsonl && text.size() >= kHashApartBytes && WorkerCount() > 1) {
      // The file's share of the suite hash is taken on another thread while its lines are
      // read; no other file is hashed meanwhile (a JSONL file includes none), so the order of
      // the files in the hash holds.
      std::thread hashing([this, &text] { HashFileText(text); });
      struct JoinOnExit {
        std::thread& thread;
        ~JoinOnExit() { thread.join(); }
      } join{hashing};
      ReadJsonLines(text, &check);
    } else if (jsonl) {
      HashFileText(text);
      ReadJsonLines(text, &check);
    } else {
      SourceNode root;
      Diagnostic syntax;
      if (!ReadYaml(text, path, &root, &syntax)) {
        errors_->push_back(syntax);
      } else if (root.IsMapping()) {
        // Only cases (and further includes) belong in an included file; anything else would
        // silently not apply, so it is an error rather than ignored.
        KeyIndex keys;
        for (const SourceEntry& entry : root.entries) {
          std::string key;
          ScalarAsString(entry.key, &key);
          if (key == "cases" || key == "include") {
            if (!keys.emplace(key, &entry).second) {
              check.Error(entry.key, "duplicate key '" + key + "'");
            }
          } else if (Contains(kSuiteKeys, key)) {
            check.Error(entry.key, "'" + key + "' is not allowed in an included file",
                        "an included file holds only 'cases' (and 'include' for further "
                        "files); set '" +
                            key + "' in the suite file");
          } else {
            check.Error(entry.key, "unknown key '" + key + "' in an included file",
                        DidYouMeanHint(key, {"cases", "include"}, "keys"));
          }
        }
        ReadCasesAndIncludes(keys, &check);
      } else if (!root.IsNull()) {
        check.Error(root, "an included YAML file must be a mapping with 'cases', got " +
                              DescribeNode(root));
      }
    }
    include_chain_.pop_back();
  }

  /// The lines of a JSONL include are parsed and read in chunks on several threads, each chunk
  /// with its own checker and diagnostics; the cases are then added and the diagnostics kept in
  /// file order, as if read on one thread.
  void ReadJsonLines(const std::string& text, NodeChecker* check) {
    struct Line {
      std::string_view text;
      int number;
    };
    std::vector<Line> lines;
    int line_number = 0;
    for (size_t start = 0; start < text.size();) {
      size_t end = text.find('\n', start);
      if (end == std::string::npos) end = text.size();
      std::string_view line(text.data() + start, end - start);
      if (!line.empty() && line.back() == '\r') line.remove_suffix(1);
      ++line_number;
      start = end + 1;
      if (line.find_first_not_of(" \t") == std::string_view::npos) continue;
      lines.push_back({line, line_number});
    }
    // Each line's case is read into its own slot of the suite's list; the list is closed up
    // over the lines that gave no case afterwards, as the ids are registered in file order.
    const size_t base = suite_->cases.size();
    suite_->cases.resize(base + lines.size());
    suite_->case_ids.Reserve(suite_->cases.size());
    id_positions_.reserve(suite_->cases.size());
    std::vector<CaseId> ids(lines.size());
    std::vector<char> added(lines.size(), 0);
    struct Chunk {
      Diagnostics errors;
      Diagnostics warnings;
      bool reported_missing_corpus = false;
      std::vector<std::pair<size_t, std::vector<Turn>>> sessions;  // (line, its turns)
    };
    std::vector<Chunk> chunks(static_cast<size_t>(WorkerCount()));
    const size_t used =
        ForEachChunk(lines.size(), kCasesPerChunk, [&](size_t index, size_t begin, size_t end) {
          Chunk& chunk = chunks[index];
          // A chunk reports a missing corpus once at most; so does the whole load, below.
          chunk.reported_missing_corpus = reported_missing_corpus_;
          NodeChecker chunk_check(check->file(), &chunk.errors, &chunk.warnings);
          for (size_t i = begin; i < end; ++i) {
            Case& gold = suite_->cases[base + i];
            if (ReadPlainCase(lines[i].text, check->file(), lines[i].number, &gold, &ids[i])) {
              added[i] = true;
              gold.gold_hash = GoldHash(gold);  // here, while the case is in cache
              continue;
            }
            gold = Case();
            SourceNode root;
            Diagnostic error;
            if (!ReadJsonLine(lines[i].text, check->file(), lines[i].number, &root, &error)) {
              chunk.errors.push_back(std::move(error));
              continue;
            }
            std::vector<Turn> turns;
            added[i] = ReadCaseFields(root, &chunk_check, &chunk.reported_missing_corpus, &gold,
                                      &ids[i], &turns);
            if (!turns.empty()) {
              added[i] = kSessionLine;
              chunk.sessions.emplace_back(i, std::move(turns));
            } else if (added[i]) {
              gold.gold_hash = GoldHash(gold);
            }
          }
        });
    std::vector<std::vector<Turn>> session_turns;  // by line, only when a line is a session
    for (size_t index = 0; index < used; ++index) {
      Chunk& chunk = chunks[index];
      for (auto& [line, turns] : chunk.sessions) {
        if (session_turns.empty()) session_turns.resize(lines.size());
        session_turns[line] = std::move(turns);
      }
      for (Diagnostic& error : chunk.errors) {
        if (error.message == kNoCorpusMessage) {
          if (reported_missing_corpus_) continue;
          reported_missing_corpus_ = true;
        }
        errors_->push_back(std::move(error));
      }
      for (Diagnostic& warning : chunk.warnings) warnings_->push_back(std::move(warning));
    }
    if (!session_turns.empty()) {
      // A session line gives several cases: the list is rebuilt rather than closed up.
      std::vector<Case> read(std::make_move_iterator(suite_->cases.begin() + long(base)),
                             std::make_move_iterator(suite_->cases.end()));
      suite_->cases.resize(base);
      for (size_t i = 0; i < lines.size(); ++i) {
        if (added[i] == kSessionLine) {
          for (Turn& turn : session_turns[i]) {
            suite_->cases.push_back(std::move(turn.gold));
            RegisterId(suite_->cases.size() - 1, turn.id, check);
          }
        } else if (added[i]) {
          suite_->cases.push_back(std::move(read[i]));
          RegisterId(suite_->cases.size() - 1, ids[i], check);
        }
      }
      return;
    }
    size_t kept = base;
    for (size_t i = 0; i < lines.size(); ++i) {
      if (!added[i]) continue;
      if (kept != base + i) suite_->cases[kept] = std::move(suite_->cases[base + i]);
      RegisterId(kept, ids[i], check);
      ++kept;
    }
    suite_->cases.resize(kept);
  }

  void ReadRetrievalK(const SourceNode& node, NodeChecker* check) {
    suite_->retrieval_k.clear();
    if (!check->Sequence(node, "retrieval_k", "positive integers")) return;
    for (const SourceNode& item : node.items) {
      int64_t k;
      if (!ScalarAsInt(item, &k) || k < 1 || k > 1000000) {
        check->Error(item, "wrong value in 'retrieval_k'",
                     "expected a positive integer, got " +
                         (item.IsScalar() ? "'" + item.scalar + "'" : DescribeNode(item)));
        continue;
      }
      if (std::find(suite_->retrieval_k.begin(), suite_->retrieval_k.end(), k) !=
          suite_->retrieval_k.end()) {
        check->Error(item, "k = " + item.scalar + " is listed twice in 'retrieval_k'");
        continue;
      }
      suite_->retrieval_k.push_back(int(k));
    }
  }

  void ReadGraders(const SourceNode& node, NodeChecker* check) {
    if (!check->Mapping(node, "graders")) return;
    for (const SourceEntry& entry : node.entries) {
      GraderConfig grader;
      grader.pos = check->Pos(entry.key);
      if (!ScalarAsString(entry.key, &grader.name) || !IsNameOf(grader.name, "._-") ||
          grader.name.size() > 64) {
        check->Error(entry.key, "invalid grader name " + DescribeNode(entry.key),
                     "a grader name uses letters, digits, '.', '_' and '-' (its metric is "
                     "grade.NAME)");
        continue;
      }
      for (const GraderConfig& other : suite_->graders) {
        if (other.name == grader.name) {
          check->Error(entry.key, "duplicate grader '" + grader.name + "'",
                       "first given at " + FormatPos(other.pos));
        }
      }
      const std::string field = "graders." + grader.name;
      auto keys = check->Keys(entry.value, kGraderKeys, "in a grader", "a grader");
      if (!check->Mapping(entry.value, field)) continue;
      if (auto it = keys.find("pipeline"); it == keys.end()) {
        check->Error(entry.key, "grader '" + grader.name + "' names no pipeline",
                     "add `pipeline: NAME` with a name from pipelines:");
      } else if (check->NonEmptyString(it->second->value, field + ".pipeline", &grader.pipeline)) {
        grader_pipeline_pos_[grader.name] = check->Pos(it->second->value);
      }
      if (auto it = keys.find("rubric"); it != keys.end()) {
        std::string path;
        if (check->NonEmptyString(it->second->value, field + ".rubric", &path)) {
          grader.rubric_path = ResolveAgainst(DirectoryOf(check->Pos(entry.key).file), path);
          ReadFile(grader.rubric_path, check->Pos(it->second->value), "rubric file",
                   &grader.rubric);
        }
      }
      if (auto it = keys.find("scale"); it != keys.end()) {
        std::string scale;
        if (check->String(it->second->value, field + ".scale", &scale)) {
          if (scale == "pass-fail") {
            grader.scale = GradeScale::kPassFail;
          } else if (scale == "unit") {
            grader.scale = GradeScale::kUnit;
          } else if (scale == "1-5") {
            grader.scale = GradeScale::kOneToFive;
          } else {
            check->Error(it->second->value, "unknown grade scale '" + scale + "'",
                         DidYouMeanHint(scale, {"pass-fail", "unit", "1-5"}, "scales"));
          }
        }
      }
      if (auto it = keys.find("repeat"); it != keys.end()) {
        int64_t repeat = 1;
        if (check->Int(it->second->value, field + ".repeat", &repeat)) {
          if (repeat < 1 || repeat > 20) {
            check->Error(it->second->value, "'" + field + ".repeat' must be 1 to 20",
                         "the grade is the mean of this many calls per answer");
          } else {
            grader.repeat = static_cast<int>(repeat);
          }
        }
      }
      if (auto it = keys.find("same_as_pipeline"); it != keys.end()) {
        std::string value;
        if (check->String(it->second->value, field + ".same_as_pipeline", &value)) {
          if (value == "allowed") {
            grader.same_as_pipeline = true;
          } else if (value != "refused") {
            check->Error(it->second->value,
                         "'" + field + ".same_as_pipeline' is 'allowed' or 'refused'",
                         "a pipeline grading its own answers is a known bias; write "
                         "`same_as_pipeline: allowed` only if you accept it");
          }
        }
      }
      if (auto it = keys.find("verdict_pattern"); it != keys.end()) {
        if (check->NonEmptyString(it->second->value, field + ".verdict_pattern",
                                  &grader.verdict_pattern)) {
          RE2 re(grader.verdict_pattern, RE2::Quiet);
          if (!re.ok()) {
            check->Error(it->second->value, "invalid RE2 pattern: " + re.error(),
                         "see the RE2 syntax; the first group captures the verdict or score");
          } else if (re.NumberOfCapturingGroups() < 1) {
            check->Error(it->second->value, "'verdict_pattern' has no group",
                         "wrap the verdict in parentheses, e.g. 'VERDICT:\\s*(PASS|FAIL)'");
          }
        }
      }
      if (auto it = keys.find("labels"); it != keys.end()) {
        std::string path;
        if (check->NonEmptyString(it->second->value, field + ".labels", &path)) {
          // Read by `plumb calibrate`, not here: a suite loads without its labels file.
          grader.labels_path = ResolveAgainst(DirectoryOf(check->Pos(entry.key).file), path);
        }
      }
      if (auto it = keys.find("min_labels"); it != keys.end()) {
        int64_t min_labels = 0;
        if (check->Int(it->second->value, field + ".min_labels", &min_labels)) {
          if (min_labels < 1 || min_labels > 1000000) {
            check->Error(it->second->value, "'" + field + ".min_labels' must be 1 to 1000000",
                         "the fewest labelled answers a calibration needs before the grade may "
                         "gate (default 50)");
          } else {
            grader.min_labels = min_labels;
          }
        }
      }
      if (auto it = keys.find("min_kappa"); it != keys.end()) {
        double min_kappa = 0;
        if (check->Number(it->second->value, field + ".min_kappa", &min_kappa)) {
          if (!(min_kappa >= -1 && min_kappa <= 1)) {
            check->Error(it->second->value, "'" + field + ".min_kappa' must lie in [-1, 1]",
                         "the lower 95% bound of Cohen's kappa that lets the grade gate "
                         "(default 0.6)");
          } else {
            grader.min_kappa = min_kappa;
          }
        }
      }
      suite_->graders.push_back(std::move(grader));
    }
  }

  // correct_from: a non-empty list of per-case metric ids other than correct itself.
  void ReadCorrectFrom(const SourceNode& node, NodeChecker* check) {
    if (!check->Sequence(node, "correct_from", "metric ids")) return;
    if (node.items.empty()) {
      check->Error(node, "'correct_from' is empty",
                   "list the metrics whose best value makes a case correct, e.g. "
                   "[covers_gold, number_match, pattern_match]");
      return;
    }
    suite_->correct_from.clear();
    for (const SourceNode& item : node.items) {
      std::string id;
      if (!ScalarAsString(item, &id)) {
        check->Error(item, "a metric id must be a name, got " + DescribeNode(item));
        continue;
      }
      if (id == "correct") {
        check->Error(item, "'correct' cannot be made from itself",
                     "list the metrics correct is the best of, e.g. covers_gold");
        continue;
      }
      if (!CheckMetricId(item, id, "correct_from", /*per_case=*/true, check)) continue;
      if (Contains(suite_->correct_from, id)) {
        check->Error(item, "'" + id + "' is listed twice in 'correct_from'");
        continue;
      }
      suite_->correct_from.push_back(id);
    }
  }

  // True when `id` names a metric that `field` accepts; otherwise reports at `at`.
  bool CheckMetricId(const SourceNode& at, const std::string& id, const std::string& field,
                     bool per_case, NodeChecker* check) {
    if (id.rfind("recall@", 0) == 0) {
      std::string k = id.substr(7);
      bool digits =
          !k.empty() && k.size() < 8 && k.find_first_not_of("0123456789") == std::string::npos;
      if (digits && std::find(suite_->retrieval_k.begin(), suite_->retrieval_k.end(),
                              std::stoi(k)) != suite_->retrieval_k.end()) {
        return true;
      }
      if (digits) {
        check->Error(at, "'" + id + "' needs " + k + " in retrieval_k",
                     "retrieval_k is " + FormatKs(suite_->retrieval_k) + "; add " + k + " to it");
        return false;
      }
    }
    if (Contains(kCaseMetrics, id)) return true;
    if (id.rfind("grade.", 0) == 0) {
      for (const GraderConfig& grader : suite_->graders) {
        if (id == "grade." + grader.name) return true;
      }
      check->Error(
          at, "'" + id + "' names no grader of this suite",
          suite_->graders.empty()
              ? "define it under graders:, e.g. graders: {" + id.substr(6) + ": {pipeline: NAME}}"
              : DidYouMeanHint(id, ValidMetricIds(true), "metric ids"));
      return false;
    }
    if (Contains(kRunMetrics, id)) {
      if (!per_case) return true;
      check->Error(
          at,
          "'" + id + "' is a run-level metric; '" + field + "' takes metrics scored on each case",
          "per-case metrics are: " + [&] {
            std::string list;
            for (const std::string& m : ValidMetricIds(true)) {
              list += (list.empty() ? "" : ", ") + m;
            }
            return list;
          }());
      return false;
    }
    check->Error(at, "unknown metric id '" + id + "' in '" + field + "'",
                 DidYouMeanHint(id, ValidMetricIds(per_case), "metric ids"));
    return false;
  }

  std::vector<std::string> ValidMetricIds(bool per_case) const {
    std::vector<std::string> ids = kCaseMetrics;
    for (int k : suite_->retrieval_k) ids.push_back("recall@" + std::to_string(k));
    for (const GraderConfig& grader : suite_->graders) ids.push_back("grade." + grader.name);
    if (!per_case) ids.insert(ids.end(), kRunMetrics.begin(), kRunMetrics.end());
    return ids;
  }

  // `ceilings`: nullptr for case_pass; otherwise the metrics must be ceilings (true) or floors.
  void ReadMetricMap(const SourceNode& node, const std::string& field, bool per_case,
                     NodeChecker* check, std::map<std::string, double>* out,
                     bool allow_tags = false, const bool* ceilings = nullptr) {
    if (!check->Mapping(node, field)) return;
    std::map<std::string, const SourceNode*> seen;
    for (const SourceEntry& entry : node.entries) {
      std::string id;
      if (!ScalarAsString(entry.key, &id)) {
        check->Error(entry.key, "a metric id must be a name, got " + DescribeNode(entry.key));
        continue;
      }
      if (auto [it, inserted] = seen.emplace(id, &entry.key); !inserted) {
        check->Error(entry.key, "duplicate key '" + id + "' in '" + field + "'",
                     "first given at " + FormatPos(check->Pos(*it->second)));
        continue;
      }
      if (allow_tags && id == "tags") continue;
      if (!CheckMetricId(entry.key, id, field, per_case, check)) continue;
      if (ceilings != nullptr && IsCeilingMetricId(id) != *ceilings) {
        const std::string other = *ceilings ? "floors" : "ceilings";
        check->Error(entry.key,
                     "'" + id + "' is " +
                         (*ceilings ? "a floor (the run fails below it)"
                                    : "a ceiling (the run fails above it)") +
                         ", not one of the " + (*ceilings ? "ceilings" : "floors"),
                     "move '" + id + ": " + FlowYaml(entry.value) + "' under '" + other + ":'" +
                         (*ceilings ? "" : "; only error_rate and the latency ids are ceilings"));
        continue;
      }
      double value;
      if (id.rfind("latency_", 0) == 0) {
        if (!check->Number(entry.value, field + "." + id, &value)) continue;
        if (value < 0) {
          check->Error(entry.value, "'" + field + "." + id + "' is negative",
                       "a latency ceiling is a number of milliseconds >= 0");
          continue;
        }
      } else if (!check->Fraction(entry.value, field + "." + id, &value)) {
        continue;
      }
      (*out)[id] = value;
    }
  }

  // error_rate and the latency ids are ceilings (the run fails above them); every other
  // metric is a floor.
  static bool IsCeilingMetricId(const std::string& id) {
    return id == "error_rate" || id.rfind("latency_", 0) == 0;
  }

  // `floors:` or `ceilings:` (`field`), each with an optional `tags:` map of the same shape.
  void ReadLimits(const SourceNode& node, const std::string& field, bool ceilings,
                  NodeChecker* check) {
    ReadMetricMap(node, field, /*per_case=*/false, check, &suite_->thresholds.metrics,
                  /*allow_tags=*/true, &ceilings);
    if (!node.IsMapping()) return;
    for (const SourceEntry& entry : node.entries) {
      if (entry.key.scalar != "tags") continue;
      if (!check->Mapping(entry.value, field + ".tags")) break;
      std::set<std::string> seen;
      for (const SourceEntry& tag_entry : entry.value.entries) {
        std::string tag;
        if (!ScalarAsString(tag_entry.key, &tag) || !IsNameOf(tag, "._-")) {
          check->Error(tag_entry.key, "invalid tag '" + tag_entry.key.scalar + "'",
                       "tags use letters, digits, '.', '_' and '-'");
          continue;
        }
        if (!seen.insert(tag).second) {
          check->Error(tag_entry.key, "duplicate tag '" + tag + "' in '" + field + ".tags'");
          continue;
        }
        threshold_tags_.emplace_back(tag, check->Pos(tag_entry.key));
        ReadMetricMap(tag_entry.value, field + ".tags." + tag, /*per_case=*/false, check,
                      &suite_->thresholds.tags[tag], /*allow_tags=*/false, &ceilings);
      }
      break;
    }
  }

  // `thresholds:` held floors and ceilings in one map. Refused, with the same entries written
  // as `floors:` and `ceilings:`, so the user upgrades by pasting the hint.
  void RefuseThresholds(const SourceEntry& entry, NodeChecker* check) {
    std::string floors, ceilings, floor_tags, ceiling_tags;
    auto add = [](std::string* list, const SourceEntry& e) {
      *list += (list->empty() ? "" : ", ") + FlowYaml(e.key) + ": " + FlowYaml(e.value);
    };
    if (entry.value.IsMapping()) {
      for (const SourceEntry& e : entry.value.entries) {
        if (e.key.scalar != "tags") {
          add(IsCeilingMetricId(e.key.scalar) ? &ceilings : &floors, e);
          continue;
        }
        if (!e.value.IsMapping()) continue;
        for (const SourceEntry& tag : e.value.entries) {
          if (!tag.value.IsMapping()) continue;
          std::string tag_floors, tag_ceilings;
          for (const SourceEntry& m : tag.value.entries) {
            add(IsCeilingMetricId(m.key.scalar) ? &tag_ceilings : &tag_floors, m);
          }
          const std::string name = FlowYaml(tag.key) + ": {";
          if (!tag_floors.empty()) {
            floor_tags += (floor_tags.empty() ? "" : ", ") + name + tag_floors + "}";
          }
          if (!tag_ceilings.empty()) {
            ceiling_tags += (ceiling_tags.empty() ? "" : ", ") + name + tag_ceilings + "}";
          }
        }
      }
    }
    if (!floor_tags.empty())
      floors += (floors.empty() ? "" : ", ") + ("tags: {" + floor_tags + "}");
    if (!ceiling_tags.empty()) {
      ceilings += (ceilings.empty() ? "" : ", ") + ("tags: {" + ceiling_tags + "}");
    }
    std::string replacement;
    if (!floors.empty()) replacement = "'floors: {" + floors + "}'";
    if (!ceilings.empty()) {
      replacement += (replacement.empty() ? "" : " and ") + ("'ceilings: {" + ceilings + "}'");
    }
    if (replacement.empty()) replacement = "'floors: {...}' and 'ceilings: {...}'";
    check->Error(entry.key,
                 "'thresholds' is now two keys: 'floors' (the run fails below them) and "
                 "'ceilings' (error_rate and latency ids; the run fails above them)",
                 "write " + replacement + " in its place");
  }

  void ReadCase(const SourceNode& node, NodeChecker* check) {
    Case gold;
    CaseId id;
    std::vector<Turn> turns;
    if (!ReadCaseFields(node, check, &reported_missing_corpus_, &gold, &id, &turns)) return;
    if (!turns.empty()) {
      for (Turn& turn : turns) {
        suite_->cases.push_back(std::move(turn.gold));
        RegisterId(suite_->cases.size() - 1, turn.id, check);
      }
      return;
    }
    suite_->cases.push_back(std::move(gold));
    RegisterId(suite_->cases.size() - 1, id, check);
  }

  /// Where a case's id was written, when it is well formed (and so checked for duplicates).
  struct CaseId {
    bool register_id = false;
    int line = 0;
    int column = 0;
  };

  /// One turn of a session as read, with where its id counts as written (the session's id).
  struct Turn {
    Case gold;
    CaseId id;
  };

  /// Registers the id of suite_->cases[index], in file order: a repeated id is reported here,
  /// naming where it was first defined.
  void RegisterId(size_t index, const CaseId& id, NodeChecker* check) {
    if (!id.register_id) return;
    if (id_positions_.size() <= index) id_positions_.resize(index + 1);
    id_positions_[index] = {id.line, id.column};
    const size_t first = suite_->case_ids.Insert(suite_->cases, index);
    if (first == CaseIdIndex::kAbsent) return;
    const std::string& name = suite_->cases[index].id;
    const SourcePos where{suite_->cases[first].pos.file, id_positions_[first].first,
                          id_positions_[first].second};
    errors_->push_back({SourcePos{check->file(), id.line, id.column},
                        "duplicate case id '" + name + "'",
                        "first defined at " + FormatPos(where)});
  }

  static bool IsCaseId(std::string_view id) { return IsNameOf(id, "._:-"); }
  static bool IsTag(std::string_view tag) { return IsNameOf(tag, "._-"); }
  static bool IsBlank(std::string_view text) {
    return text.find_first_not_of(" \t\r\n") == std::string_view::npos;
  }

  /// A JSONL line of the plain shape (runner/suite/plain_case_line.h) whose values ReadCaseFields
  /// would take without a word, read without a SourceNode tree. False for any other line, which
  /// the caller reads through ReadJsonLine and ReadCaseFields.
  static bool ReadPlainCase(std::string_view line, const std::string& file, int line_number,
                            Case* gold, CaseId* case_id) {
    PlainCaseColumns columns;
    if (!ReadPlainCaseLine(line, gold, &columns) || !IsCaseId(gold->id) ||
        IsBlank(gold->question)) {
      return false;
    }
    for (const std::string& answer : gold->answers) {
      if (IsBlank(answer)) return false;
    }
    for (const std::string& tag : gold->tags) {
      if (!IsTag(tag)) return false;
    }
    gold->pos = SourcePos{file, line_number, columns.object};
    *case_id = CaseId{true, line_number, columns.id};
    return true;
  }

  /// Reads and checks one case's fields into *gold, reporting through `check`. Touches no loader
  /// state but `*reported_missing_corpus` (so chunks of a JSONL file can be read on several
  /// threads, each with its own flag and checker). False when the node is not a mapping
  /// (nothing to add). A case with `turns:` (a session) leaves *out alone and puts its turns,
  /// in order, in *turns (ids "ID#N"); a session with no usable turn gives none.
  bool ReadCaseFields(const SourceNode& node, NodeChecker* check, bool* reported_missing_corpus,
                      Case* out, CaseId* case_id, std::vector<Turn>* turns) const {
    Case& gold = *out;
    gold.pos = check->Pos(node);
    auto keys = check->Keys(node, kCaseKeys, "in a case", "a case");
    if (!node.IsMapping()) return false;
    auto field = [&](const char* key) -> const SourceNode* {
      auto it = keys.find(key);
      return it == keys.end() ? nullptr : &it->second->value;
    };

    if (const SourceNode* id = field("id"); id == nullptr) {
      check->Error(node, "case has no 'id'",
                   "add 'id: NAME' (letters, digits, '.', '_', ':', '-')");
    } else if (check->String(*id, "id", &gold.id)) {
      if (!IsCaseId(gold.id)) {
        check->Error(*id, "invalid case id '" + gold.id + "'",
                     "use letters, digits, '.', '_', ':' and '-'");
      } else {
        *case_id = CaseId{true, id->line, id->column};
      }
    }
    if (const SourceNode* list = field("turns")) {
      ReadTurns(node, *list, keys, check, reported_missing_corpus, gold, *case_id, turns);
      return true;
    }
    std::string label = gold.id.empty() ? "the case" : "case '" + gold.id + "'";
    ReadGoldFields(node, keys, check, reported_missing_corpus, label, /*need_question=*/true,
                   &gold);
    return true;
  }

  /// A session's `turns:` list (issue 22): each turn is read like a case's gold fields and
  /// becomes a case "SESSION#N" that takes the session's tags (before its own) and, when it gives
  /// no input, the session's input. Gold keys written beside `turns` are refused where written.
  void ReadTurns(const SourceNode& node, const SourceNode& list, const KeyIndex& keys,
                 NodeChecker* check, bool* reported_missing_corpus, const Case& session,
                 const CaseId& session_id, std::vector<Turn>* turns) const {
    const std::string label = session.id.empty() ? "the session" : "session '" + session.id + "'";
    for (const char* key : {"question", "answers", "patterns", "number", "sources"}) {
      if (auto it = keys.find(key); it != keys.end()) {
        check->Error(
            it->second->key,
            "'" + std::string(key) + "' goes in each turn of " + label + ", not beside 'turns'",
            "move it into the turn it belongs to");
      }
    }
    std::vector<std::string> session_tags;
    if (auto it = keys.find("tags"); it != keys.end()) {
      ReadTags(it->second->value, check, &session_tags);
    }
    nlohmann::json session_input;
    if (auto it = keys.find("input"); it != keys.end()) {
      if (check->Mapping(it->second->value, "input")) {
        session_input = SourceNodeToJson(it->second->value);
      }
    }
    if (!check->Sequence(list, "turns", "turns (each a mapping with question and answers)")) {
      return;
    }
    if (list.items.empty()) {
      check->Error(list, label + " has no turns",
                   "list at least one turn: turns: [{question: ..., answers: [...]}]");
      return;
    }
    std::vector<std::string> questions;  // the earlier turns', for each turn's gold hash
    for (size_t i = 0; i < list.items.size(); ++i) {
      const SourceNode& item = list.items[i];
      const int number = static_cast<int>(i) + 1;
      Turn turn;
      turn.gold.pos = check->Pos(item);
      turn.gold.session = session.id;
      turn.gold.turn = number;
      turn.gold.id = TurnId(session.id, number);
      const std::string turn_label = "turn " + std::to_string(number) + " of " + label;
      auto turn_keys = check->Keys(item, kTurnKeys, "in a turn", "a turn");
      if (!item.IsMapping()) continue;
      ReadGoldFields(item, turn_keys, check, reported_missing_corpus, turn_label,
                     /*need_question=*/true, &turn.gold);
      turn.gold.tags.insert(turn.gold.tags.begin(), session_tags.begin(), session_tags.end());
      if (turn.gold.input.is_null()) turn.gold.input = session_input;
      // The turn's id counts as written where the session's id is (a duplicate session id
      // is then reported there, once per turn it repeats).
      turn.id = session_id;
      turn.gold.gold_hash = GoldHash(turn.gold, questions);
      questions.push_back(turn.gold.question);
      turns->push_back(std::move(turn));
    }
    (void)node;
  }

  void ReadTags(const SourceNode& node, NodeChecker* check, std::vector<std::string>* out) const {
    std::vector<const SourceNode*> nodes;
    check->StringList(node, "tags", out, &nodes);
    for (size_t i = 0; i < out->size(); ++i) {
      if (!IsTag((*out)[i])) {
        check->Error(*nodes[i], "invalid tag '" + (*out)[i] + "'",
                     "tags use letters, digits, '.', '_' and '-'");
      }
    }
  }

  /// The gold fields of a case or a turn (question, answers, patterns, number, sources, tags,
  /// input), from the entries `keys` found in `node`.
  void ReadGoldFields(const SourceNode& node, const KeyIndex& keys, NodeChecker* check,
                      bool* reported_missing_corpus, const std::string& label, bool need_question,
                      Case* out) const {
    Case& gold = *out;
    auto field = [&](const char* key) -> const SourceNode* {
      auto it = keys.find(key);
      return it == keys.end() ? nullptr : &it->second->value;
    };
    if (const SourceNode* question = field("question"); question == nullptr) {
      if (need_question) check->Error(node, label + " has no 'question'", "add 'question: ...'");
    } else {
      check->NonEmptyString(*question, "question", &gold.question);
    }
    if (const SourceNode* answers = field("answers"); answers == nullptr) {
      check->Error(node, label + " has no 'answers'",
                   "list the gold answers, or write 'answers: []' when the pipeline must abstain");
    } else {
      std::vector<const SourceNode*> nodes;
      check->StringList(*answers, "answers", &gold.answers, &nodes);
      for (size_t i = 0; i < gold.answers.size(); ++i) {
        if (IsBlank(gold.answers[i])) {
          check->Error(*nodes[i], "an answer is empty",
                       "write 'answers: []' for a case the pipeline must abstain on");
        }
      }
    }

    if (const SourceNode* patterns = field("patterns")) {
      std::vector<const SourceNode*> nodes;
      check->StringList(*patterns, "patterns", &gold.patterns, &nodes);
      RE2::Options re2_options;
      re2_options.set_log_errors(false);
      for (size_t i = 0; i < gold.patterns.size(); ++i) {
        RE2 pattern(gold.patterns[i], re2_options);
        if (!pattern.ok()) {
          check->Error(*nodes[i], "invalid pattern '" + gold.patterns[i] + "'",
                       "RE2 says: " + pattern.error());
        }
      }
    }

    if (const SourceNode* number = field("number")) ReadNumber(*number, check, &gold);
    const SourceNode* stale = field("stale_answers");
    if (const SourceNode* after = field("after")) {
      ReadAfter(*after, check, &gold);
    } else if (stale != nullptr) {
      check->Error(*stale, "'stale_answers' belongs to a case with 'after'",
                   "add 'after: UPDATE' (an id from 'updates:') or remove 'stale_answers'");
    }
    if (stale != nullptr && gold.after >= 0) {
      std::vector<const SourceNode*> nodes;
      check->StringList(*stale, "stale_answers", &gold.stale_answers, &nodes);
      for (size_t i = 0; i < gold.stale_answers.size(); ++i) {
        if (IsBlank(gold.stale_answers[i])) {
          check->Error(*nodes[i], "a stale answer is empty",
                       "write what the corpus said before the update");
        }
      }
    }
    if (const SourceNode* sources = field("sources")) {
      ReadSources(*sources, check, reported_missing_corpus, &gold);
    }

    if (const SourceNode* tags = field("tags")) ReadTags(*tags, check, &gold.tags);

    if (const SourceNode* input = field("input")) {
      if (check->Mapping(*input, "input")) gold.input = SourceNodeToJson(*input);
    }
  }

  void ReadAfter(const SourceNode& node, NodeChecker* check, Case* gold) const {
    std::string id;
    if (!check->NonEmptyString(node, "after", &id)) return;
    std::vector<std::string> ids;
    for (size_t i = 0; i < suite_->updates.size(); ++i) {
      if (suite_->updates[i].id == id) {
        gold->after = int(i);
        return;
      }
      ids.push_back(suite_->updates[i].id);
    }
    check->Error(node, "'after' names update '" + id + "', which 'updates:' does not define",
                 ids.empty() ? "define it under 'updates:' at the top of the suite file"
                             : DidYouMeanHint(id, ids, "updates"));
  }

  /// `updates:` (issue 23): each entry's id, its docs directory (inside the suite file's
  /// directory) and the doc ids it removes; builds update_corpora_ as it goes.
  void ReadUpdates(const SourceNode& list, const std::string& dir, NodeChecker* check) {
    if (!check->Sequence(list, "updates", "updates ({id, docs, remove})")) return;
    std::error_code ec;
    const fs::path suite_dir = fs::weakly_canonical(dir.empty() ? "." : dir, ec);
    bool chain_ok = corpus_state_ == CorpusState::kOpen;
    for (const SourceNode& item : list.items) {
      auto keys = check->Keys(item, kUpdateKeys, "in an update", "an update");
      if (!item.IsMapping()) {
        chain_ok = false;
        continue;
      }
      auto field = [&](const char* key) -> const SourceNode* {
        auto it = keys.find(key);
        return it == keys.end() ? nullptr : &it->second->value;
      };
      CorpusUpdate update;
      update.pos = check->Pos(item);
      bool ok = keys.size() == item.entries.size();
      if (const SourceNode* id = field("id"); id == nullptr) {
        check->Error(item, "update has no 'id'", "add 'id: NAME' (letters, digits, '.', '_', '-')");
        ok = false;
      } else if (check->NonEmptyString(*id, "id", &update.id)) {
        if (!IsCaseId(update.id)) {
          check->Error(*id, "invalid update id '" + update.id + "'",
                       "use letters, digits, '.', '_', ':' and '-'");
          ok = false;
        }
        for (const CorpusUpdate& earlier : suite_->updates) {
          if (earlier.id != update.id) continue;
          check->Error(*id, "update id '" + update.id + "' is used twice",
                       "the first is at " + FormatPos(earlier.pos));
          ok = false;
        }
      } else {
        ok = false;
      }
      const SourceNode* docs = field("docs");
      const SourceNode* remove = field("remove");
      if (docs == nullptr && remove == nullptr) {
        check->Error(item, "update '" + update.id + "' has neither 'docs' nor 'remove'",
                     "give 'docs: DIR' (files that replace or add documents) or 'remove: [DOC]'");
        ok = false;
      }
      if (docs != nullptr) ok = ReadUpdateDocs(*docs, dir, suite_dir, check, &update) && ok;
      std::vector<const SourceNode*> remove_nodes;
      if (remove != nullptr) {
        ok = check->StringList(*remove, "remove", &update.remove, &remove_nodes) && ok;
      }
      if (corpus_state_ == CorpusState::kNone) {
        check->Error(item, "this suite has updates but no corpus",
                     "add 'corpus: DIR' (relative to the suite file) to the suite file");
        chain_ok = false;
      }
      // Each removed doc must be in the corpus as it stands before this update.
      Corpus* before = suite_->updates.empty()   ? corpus_.get()
                       : update_corpora_.empty() ? nullptr
                                                 : update_corpora_.back().get();
      for (size_t i = 0; i < update.remove.size(); ++i) {
        const std::string& doc = update.remove[i];
        if (std::string problem = DocIdProblem(doc); !problem.empty()) {
          check->Error(*remove_nodes[i], "removed doc '" + doc + "' " + problem,
                       "name the document by its path relative to the corpus dir");
          ok = false;
        } else if (chain_ok && before != nullptr && !before->Has(doc)) {
          check->Error(*remove_nodes[i],
                       "update '" + update.id + "' removes '" + doc +
                           "', which the corpus does not have before it",
                       "name a document of the corpus (paths relative to the corpus dir)");
          ok = false;
        }
      }
      chain_ok = chain_ok && ok;
      std::unique_ptr<Corpus> updated;
      if (chain_ok) {
        updated = std::make_unique<Corpus>();
        std::string error;
        bool laid = updated->Open(corpus_->dir(), &error);
        for (size_t i = 0; laid && i <= suite_->updates.size(); ++i) {
          const CorpusUpdate& u = i < suite_->updates.size() ? suite_->updates[i] : update;
          laid = updated->AddUpdate(u.docs_dir, u.remove, &error);
        }
        if (!laid) {
          check->Error(item, error);
          updated.reset();
          chain_ok = false;
        }
      }
      update_corpora_.push_back(std::move(updated));
      suite_->updates.push_back(std::move(update));
    }
  }

  /// Checks an update's `docs:` directory: inside the suite file's directory (symlinks
  /// resolved), a directory, and every file under it a regular file inside it whose relative
  /// path is a valid doc id. Fills update->docs_dir and update->docs.
  bool ReadUpdateDocs(const SourceNode& node, const std::string& dir, const fs::path& suite_dir,
                      NodeChecker* check, CorpusUpdate* update) const {
    std::string value;
    if (!check->NonEmptyString(node, "docs", &value)) return false;
    const std::string hint =
        "an update's files live in a directory under the suite file's directory ('" +
        (dir.empty() ? std::string(".") : dir) + "'), named relative to it";
    const fs::path lexical = fs::path(ResolveAgainst(dir, value)).lexically_normal();
    std::error_code ec;
    const fs::path real = fs::weakly_canonical(lexical, ec);
    auto inside = [&](const fs::path& p) {
      const fs::path rel = p.lexically_relative(suite_dir);
      return !rel.empty() && *rel.begin() != ".." && !rel.is_absolute();
    };
    if (fs::path(value).is_absolute() || ec || !inside(real)) {
      check->Error(node, "update docs '" + value + "' lie outside the suite file's directory",
                   hint);
      return false;
    }
    if (!fs::is_directory(real, ec)) {
      check->Error(node,
                   "update docs '" + value + "' " +
                       (fs::exists(real, ec) ? "is not a directory" : "does not exist"),
                   hint);
      return false;
    }
    update->docs_dir = lexical.string();
    bool ok = true;
    fs::recursive_directory_iterator walk(real, ec), end;
    for (; !ec && walk != end; walk.increment(ec)) {
      const fs::directory_entry& entry = *walk;
      const std::string id = entry.path().lexically_relative(real).generic_string();
      std::error_code entry_ec;
      if (entry.is_symlink(entry_ec)) {
        const fs::path target = fs::weakly_canonical(entry.path(), entry_ec);
        const fs::path rel = target.lexically_relative(real);
        if (entry_ec || rel.empty() || *rel.begin() == "..") {
          check->Error(node,
                       "update docs '" + value + "': '" + id +
                           "' is a symlink that leads outside the update's directory",
                       "copy the file into the update's directory instead");
          ok = false;
          continue;
        }
      }
      if (entry.is_directory(entry_ec)) continue;
      if (!entry.is_regular_file(entry_ec)) {
        check->Error(node, "update docs '" + value + "': '" + id + "' is not a regular file");
        ok = false;
        continue;
      }
      if (std::string problem = DocIdProblem(id); !problem.empty()) {
        check->Error(node, "update docs '" + value + "': file '" + id + "' " + problem);
        ok = false;
        continue;
      }
      update->docs.push_back(id);
      if (update->docs.size() > kMaxUpdateFiles) {
        check->Error(node,
                     "update docs '" + value + "' hold more than " +
                         std::to_string(kMaxUpdateFiles) + " files",
                     "name the directory of the update's files only");
        return false;
      }
    }
    if (ec) {
      check->Error(node, "cannot read update docs '" + value + "': " + ec.message());
      return false;
    }
    std::sort(update->docs.begin(), update->docs.end());
    return ok;
  }

  static void ReadNumber(const SourceNode& node, NodeChecker* check, Case* gold) {
    auto keys = check->Keys(node, kNumberKeys, "in 'number'", "'number'");
    if (!node.IsMapping()) return;
    NumberGold number;
    bool ok = true;
    if (auto it = keys.find("value"); it == keys.end()) {
      check->Error(node, "'number' has no 'value'",
                   "write e.g. number: {value: 10, unit: minutes}");
      ok = false;
    } else {
      ok = check->Number(it->second->value, "number.value", &number.value) && ok;
    }
    if (auto it = keys.find("tolerance"); it != keys.end()) {
      if (!check->Number(it->second->value, "number.tolerance", &number.tolerance)) {
        ok = false;
      } else if (number.tolerance < 0) {
        check->Error(it->second->value, "'number.tolerance' is negative", "expected a number >= 0");
        ok = false;
      }
    }
    if (auto it = keys.find("unit"); it != keys.end()) {
      ok = check->String(it->second->value, "number.unit", &number.unit) && ok;
    }
    if (ok) gold->number = number;
  }

  void ReadSources(const SourceNode& list, NodeChecker* check, bool* reported_missing_corpus,
                   Case* gold) const {
    if (!check->Sequence(list, "sources", "sources ({doc, quote} or {doc, start, end})")) return;
    for (const SourceNode& item : list.items) {
      auto keys = check->Keys(item, kSourceKeys, "in a source", "a source");
      if (!item.IsMapping()) continue;
      auto field = [&](const char* key) -> const SourceNode* {
        auto it = keys.find(key);
        return it == keys.end() ? nullptr : &it->second->value;
      };
      GoldSpan span;
      span.pos = check->Pos(item);
      const SourceNode* doc = field("doc");
      const SourceNode* quote = field("quote");
      const SourceNode* start = field("start");
      const SourceNode* end = field("end");
      bool ok = true;
      if (doc == nullptr) {
        check->Error(item, "source has no 'doc'",
                     "give the document's path relative to the corpus dir");
        ok = false;
      } else {
        ok = check->NonEmptyString(*doc, "doc", &span.doc);
      }
      // A misspelt key was reported already; "needs a 'quote'" would only repeat it.
      if (keys.size() < item.entries.size()) continue;
      if (quote != nullptr && (start != nullptr || end != nullptr)) {
        check->Error(item, "a source gives either 'quote' or 'start' and 'end', not both");
        continue;
      }
      if (quote == nullptr && (start == nullptr || end == nullptr)) {
        check->Error(item, start == nullptr && end == nullptr
                               ? "a source needs a 'quote', or 'start' and 'end'"
                               : std::string("a source with '") + (start ? "start" : "end") +
                                     "' needs '" + (start ? "end" : "start") + "' too");
        continue;
      }
      std::string quote_text;
      int64_t start_cp = 0, end_cp = 0;
      if (quote != nullptr) {
        ok = check->NonEmptyString(*quote, "quote", &quote_text) && ok;
        span.quote = quote_text;
      } else {
        ok = check->Int(*start, "start", &start_cp) && ok;
        ok = check->Int(*end, "end", &end_cp) && ok;
      }
      if (!ok) continue;

      if (corpus_state_ == CorpusState::kNone) {
        if (!*reported_missing_corpus) {
          check->Error(item, kNoCorpusMessage,
                       "add 'corpus: DIR' (relative to the suite file) to the suite file");
          *reported_missing_corpus = true;
        }
        continue;
      }
      if (corpus_state_ == CorpusState::kBroken) continue;
      // A case asked after an update is located in the corpus as it stands after it.
      Corpus* corpus = corpus_.get();
      if (gold->after >= 0) {
        if (size_t(gold->after) >= update_corpora_.size() || !update_corpora_[size_t(gold->after)])
          continue;  // the update itself is broken, and was reported
        corpus = update_corpora_[size_t(gold->after)].get();
      }
      std::string error;
      const Document* document = corpus->Get(span.doc, &error);
      if (document == nullptr) {
        check->Error(*doc, error,
                     gold->after >= 0 ? "this case's sources are located in the corpus after "
                                        "update '" +
                                            suite_->updates[size_t(gold->after)].id + "'"
                                      : "");
        continue;
      }
      if (quote != nullptr) {
        int occurrences = 0;
        if (!FindQuote(*document, quote_text, &start_cp, &end_cp, &occurrences)) {
          if (options_.keep_unlocated_quotes) {
            span.located = false;
            gold->sources.push_back(std::move(span));
            continue;
          }
          check->Error(*quote,
                       "quote not found in '" + span.doc + "'" +
                           (gold->after >= 0
                                ? " after update '" + suite_->updates[size_t(gold->after)].id + "'"
                                : "") +
                           ": \"" + FirstCodePoints(quote_text, 60) + "\"",
                       "the quote must appear in the document as written (runs of whitespace "
                       "may differ)");
          continue;
        }
        if (occurrences > 1) {
          check->Warning(*quote,
                         "quote occurs " + std::to_string(occurrences) + " times in '" + span.doc +
                             "'; the first, at code points [" + std::to_string(start_cp) + ", " +
                             std::to_string(end_cp) + "), is used",
                         "lengthen the quote, or give 'start' and 'end'");
        }
      } else if (start_cp < 0 || start_cp >= end_cp || end_cp > document->length_cp) {
        check->Error(*start,
                     "offsets [" + std::to_string(start_cp) + ", " + std::to_string(end_cp) +
                         ") are out of range for '" + span.doc + "'",
                     "'" + span.doc + "' is " + std::to_string(document->length_cp) +
                         " code points long; offsets need 0 <= start < end <= " +
                         std::to_string(document->length_cp));
        continue;
      }
      span.start = start_cp;
      span.end = end_cp;
      span.text = std::string(CodePointSlice(*document, start_cp, end_cp));
      gold->sources.push_back(std::move(span));
    }
  }

  // The graders' pipelines are started with the ones the command names, so their variables
  // are read too (graders: is read before pipelines:).
  PipelineExpansion Expansion() const {
    std::vector<std::string> names = options_.expand_pipelines;
    if (!names.empty()) {
      for (const GraderConfig& grader : suite_->graders) names.push_back(grader.pipeline);
    }
    return PipelineExpansion{options_.expand_env, names};
  }

  void ReadPipelinesFile(const std::string& path) {
    suite_->pipelines.clear();
    std::string text;
    if (!ReadFile(path, SourcePos{path, 0, 0}, "pipelines file", &text)) return;
    SourceNode root;
    Diagnostic syntax;
    if (!ReadYaml(text, path, &root, &syntax)) {
      errors_->push_back(syntax);
      return;
    }
    NodeChecker check(path, errors_, warnings_);
    if (root.IsNull()) {
      check.Error(root, "the pipelines file is empty", "it holds one key, 'pipelines:'");
      return;
    }
    auto keys = check.Keys(root, {"pipelines"}, "in a pipelines file (it holds only 'pipelines')",
                           "a pipelines file");
    if (!root.IsMapping()) return;
    auto it = keys.find("pipelines");
    if (it == keys.end()) {
      check.Error(root, "the pipelines file has no 'pipelines' key");
      return;
    }
    ReadPipelines(it->second->value, Expansion(), &check, &suite_->pipelines);
    for (PipelineConfig& kept : suite_grader_pipelines_) {
      const bool named =
          std::any_of(suite_->graders.begin(), suite_->graders.end(),
                      [&](const GraderConfig& g) { return g.pipeline == kept.name; });
      const bool replaced =
          std::any_of(suite_->pipelines.begin(), suite_->pipelines.end(),
                      [&](const PipelineConfig& p) { return p.name == kept.name; });
      if (named && !replaced) suite_->pipelines.push_back(std::move(kept));
    }
  }

  /// SHA-256 of "plumb-gold-v1\n" + the case's gold as compact JSON with keys in sorted order
  /// (the layout nlohmann's dump() gives; doubles in its spelling, so hashes stay stable).
  /// A session's turn also hashes its session id, its number and the questions of the turns
  /// before it (`earlier`): a follow-up means something else once an earlier question changed.
  /// A case with `after` adds "after" (the update's id) and "stale_answers" in their sorted
  /// places; a case without keeps the hash it had before updates existed.
  std::string GoldHash(const Case& gold, const std::vector<std::string>& earlier = {}) const {
    thread_local JsonWriter w;  // one buffer per loading thread, reused case after case
    w.Clear();
    w.BeginObject();
    if (gold.after >= 0 && size_t(gold.after) < suite_->updates.size()) {
      w.PlainKey("after").String(suite_->updates[size_t(gold.after)].id);
    }
    w.PlainKey("answers").StringArray(gold.answers);
    if (gold.turn > 0) w.PlainKey("history").StringArray(earlier);
    w.PlainKey("number");
    if (gold.number) {
      w.BeginObject()
          .PlainKey("tolerance")
          .Raw(nlohmann::json(gold.number->tolerance).dump())
          .PlainKey("unit")
          .String(gold.number->unit)
          .PlainKey("value")
          .Raw(nlohmann::json(gold.number->value).dump())
          .EndObject();
    } else {
      w.Null();
    }
    w.PlainKey("patterns").StringArray(gold.patterns).PlainKey("question").String(gold.question);
    if (gold.turn > 0) w.PlainKey("session").String(gold.session);
    w.PlainKey("sources");
    w.BeginArray();
    for (const GoldSpan& span : gold.sources) {
      w.BeginObject()
          .PlainKey("doc")
          .String(span.doc)
          .PlainKey("end")
          .Int(static_cast<int64_t>(span.end))
          .PlainKey("start")
          .Int(static_cast<int64_t>(span.start))
          .PlainKey("text")
          .String(span.text)
          .EndObject();
    }
    w.EndArray();
    if (gold.after >= 0) w.PlainKey("stale_answers").StringArray(gold.stale_answers);
    w.PlainKey("tags").StringArray(gold.tags);
    if (gold.turn > 0) w.PlainKey("turn").Int(gold.turn);
    w.EndObject();
    return Sha256Hex("plumb-gold-v1\n", w.text());
  }

  void Finish() {
    std::vector<Case>& cases = suite_->cases;
    ForEachChunk(cases.size(), kCasesPerChunk, [this, &cases](size_t, size_t begin, size_t end) {
      for (size_t i = begin; i < end; ++i) {
        if (cases[i].gold_hash.empty()) cases[i].gold_hash = GoldHash(cases[i]);
      }
    });
    suite_->suite_hash = suite_hash_.HexDigest();
    // `--case ID` selects a session by its id, so a session may not share one with a case.
    for (const Case& turn : cases) {
      if (turn.turn != 1) continue;
      const size_t other = suite_->case_ids.Find(cases, turn.session);
      if (other == CaseIdIndex::kAbsent) continue;
      errors_->push_back(
          {turn.pos, "session '" + turn.session + "' has the id of a case",
           "the case is at " + FormatPos(cases[other].pos) + "; give one of them another id"});
    }
    for (const GraderConfig& grader : suite_->graders) {
      auto pos = grader_pipeline_pos_.find(grader.name);
      if (pos == grader_pipeline_pos_.end()) continue;
      const bool known =
          std::any_of(suite_->pipelines.begin(), suite_->pipelines.end(),
                      [&](const PipelineConfig& p) { return p.name == grader.pipeline; });
      if (!known) {
        std::vector<std::string> names;
        for (const PipelineConfig& p : suite_->pipelines) names.push_back(p.name);
        errors_->push_back({pos->second,
                            "grader '" + grader.name + "' names pipeline '" + grader.pipeline +
                                "', which pipelines: does not define",
                            DidYouMeanHint(grader.pipeline, names, "pipelines")});
      }
    }

    for (const auto& [tag, pos] : threshold_tags_) {
      bool used = false;
      for (const Case& gold : suite_->cases) {
        used = used || std::find(gold.tags.begin(), gold.tags.end(), tag) != gold.tags.end();
      }
      if (!used) {
        warnings_->push_back({pos,
                              "no case has tag '" + tag + "'; its floors and ceilings never apply",
                              "check the spelling against the cases' tags"});
      }
    }
    SortFrom(errors_, first_error_);
    SortFrom(warnings_, first_warning_);
  }

  // Orders the diagnostics this load added by file (in the order read), line and column.
  void SortFrom(Diagnostics* list, size_t first) {
    auto rank = [&](const Diagnostic& d) {
      auto it = std::find(suite_->files.begin(), suite_->files.end(), d.pos.file);
      return std::make_tuple(size_t(it - suite_->files.begin()), d.pos.line, d.pos.column);
    };
    std::stable_sort(list->begin() + long(first), list->end(),
                     [&](const Diagnostic& a, const Diagnostic& b) { return rank(a) < rank(b); });
  }

  const LoadOptions& options_;
  Suite* suite_;
  Diagnostics* errors_;
  Diagnostics* warnings_;
  size_t first_error_;
  size_t first_warning_;
  std::unique_ptr<Corpus> corpus_;
  CorpusState corpus_state_ = CorpusState::kNone;
  /// Per entry of suite_->updates: the corpus with it and every update before it laid over
  /// corpus_ (null when that update or one before it is broken).
  std::vector<std::unique_ptr<Corpus>> update_corpora_;
  bool reported_missing_corpus_ = false;
  std::vector<std::pair<std::string, std::string>> include_chain_;  // (canonical, as named)
  /// Where each case's id is written (line, column), by case index: its file is the case's.
  std::vector<std::pair<int, int>> id_positions_;
  std::vector<std::pair<std::string, SourcePos>> threshold_tags_;
  /// With --pipelines: the suite's own pipelines, read only to keep those a grader names.
  std::vector<PipelineConfig> suite_grader_pipelines_;
  std::map<std::string, SourcePos> grader_pipeline_pos_;  // grader -> where its pipeline is named
  Sha256 suite_hash_;
};

}  // namespace

bool LoadSuite(const std::string& path, const LoadOptions& options, Suite* suite,
               Diagnostics* errors, Diagnostics* warnings) {
  size_t errors_before = errors->size();
  *suite = Suite();
  try {
    SuiteLoader loader(options, suite, errors, warnings);
    loader.Load(path);
  } catch (const std::exception& e) {
    // Nothing below is meant to throw; this keeps a missed case (bad_alloc, a library
    // surprise) a reported error rather than a crash.
    Diagnostic internal;  // field by field: GCC 12 misreports a braced one as uninitialized
    internal.pos = SourcePos{path, 0, 0};
    internal.message = std::string("internal error while loading: ") + e.what();
    errors->push_back(std::move(internal));
  }
  return errors->size() == errors_before;
}

}  // namespace plumb
