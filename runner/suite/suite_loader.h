#ifndef PLUMB_RUNNER_SUITE_SUITE_LOADER_H_
#define PLUMB_RUNNER_SUITE_SUITE_LOADER_H_

/// Loads a suite file (SPEC §4) and its includes, corpus and pipelines (§5) into a Suite,
/// validating everything and reporting every problem at file:line:column. Every command that
/// reads a suite (run, score, check) starts here.
///
/// Decisions the SPEC leaves open:
/// - `include` and `cases` are concatenated in the order the two keys appear in the file, so
///   included cases come first when `include` is written above `cases`.
/// - An included .yaml/.yml file holds `cases` and optionally `include` (for further files),
///   nothing else. A .jsonl file holds one case object per line; blank lines are skipped.
/// - `floors:` take every metric id but error_rate and the latency ids: exact_match, token_f1,
///   correct, pattern_match, number_match, citation_precision, citation_recall, citation_f1,
///   mrr, recall@K (K listed in retrieval_k), abstain_precision, abstain_recall, pass_rate (a
///   run below one fails). `ceilings:` take error_rate, latency_p50_ms and latency_p95_ms (a
///   run above one fails). An id under the other key is an error saying where it goes. Latency
///   values are milliseconds >= 0, all others lie in [0, 1]. case_pass takes only the per-case
///   ids (the first nine above and recall@K). The retired `thresholds:` is an error whose hint
///   is the same entries written as `floors:` and `ceilings:`.
/// - With LoadOptions::pipelines_file the suite's own `pipelines` block is not read at all, so
///   its variables need not be set.
/// - suite_hash is SHA-256 over each file read, in order, as "<byte count>\n<bytes>".
/// - gold_hash is SHA-256 over "plumb-gold-v1\n" and a JSON object (keys sorted, nlohmann
///   dump) of question, answers, patterns, number {value, tolerance, unit} or null, sources
///   [{doc, start, end, text}] and tags.
/// - corpus_dir is the suite file's directory joined with `corpus` and lexically normalized
///   (an absolute `corpus` is kept as written).

#include <cstdint>
#include <string>
#include <vector>

#include "runner/suite/diagnostic.h"
#include "runner/suite/suite.h"

namespace plumb {

/// A suite or include file larger than this is refused before it is parsed.
constexpr int64_t kMaxSuiteFileBytes = int64_t{64} << 20;

struct LoadOptions {
  std::string pipelines_file;  // --pipelines FILE: replaces the suite's pipelines; empty = none
  bool expand_env = true;      // false: leave ${VAR} unexpanded (commands that run no pipeline)
  /// With expand_env, the pipelines the command will start, by name: only their `${VAR}`s are
  /// expanded, and an unset variable is an error only there; every other pipeline is read as
  /// with expand_env false (syntax checked, nothing read from the environment). The name ""
  /// stands for the first pipeline, the one `plumb run` takes without --pipeline. Empty: all.
  std::vector<std::string> expand_pipelines;
  /// A quote not found in its document is kept as a span with `located` false instead of being
  /// an error, for `plumb check --since`, which tells the user where the recorded text went.
  bool keep_unlocated_quotes = false;
};

/// Loads, validates and resolves the suite at `path`. Returns true when usable. Every problem
/// found goes into *errors (all of them, not just the first), sorted by file (in the order read)
/// then position; non-fatal findings (e.g. a quote that occurs more than once in its document:
/// the first occurrence is used) go into *warnings. *suite is filled as far as loading got even
/// when it returns false. Never throws.
bool LoadSuite(const std::string& path, const LoadOptions& options, Suite* suite,
               Diagnostics* errors, Diagnostics* warnings);

}  // namespace plumb

#endif  // PLUMB_RUNNER_SUITE_SUITE_LOADER_H_
