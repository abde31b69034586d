#ifndef PLUMB_RUNNER_RUN_PREPARED_SUITE_H_
#define PLUMB_RUNNER_RUN_PREPARED_SUITE_H_

/// A loaded suite with what every command needs beside it: its corpus (opened, fingerprinted)
/// and a CaseScorer. PrepareSuite prints every load error and warning to stderr, so a caller
/// only maps failure to exit code 2.

#include <memory>
#include <string>
#include <vector>

#include "runner/run/case_scorer.h"
#include "runner/suite/corpus.h"
#include "runner/suite/suite.h"

namespace plumb {

struct PreparedSuite {
  Suite suite;
  std::unique_ptr<Corpus> corpus;  // null when the suite names no corpus
  /// With `updates:`, SHA-256 of the corpus's fingerprint and each update's (its id, removed
  /// docs and the fingerprint of its docs), so a changed update counts as a changed corpus.
  std::string corpus_fingerprint;
  /// The corpus after each update (corpus with the updates up to it laid over), by update
  /// index; the scorer reads the citations of `after` cases from them.
  std::vector<std::unique_ptr<Corpus>> update_corpora;
  std::unique_ptr<CaseScorer> scorer;
};

/// `expand_env` false skips `${VAR}` expansion (for commands that never start a pipeline);
/// with it, `expand_pipelines` names the pipelines the command starts, as in LoadOptions
/// (runner/suite/suite_loader.h): only their variables are read and required.
/// `keep_unlocated_quotes` is LoadOptions' (for `plumb check --since`).
bool PrepareSuite(const std::string& path, const std::string& pipelines_file, bool expand_env,
                  PreparedSuite* out, const std::vector<std::string>& expand_pipelines = {},
                  bool keep_unlocated_quotes = false);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_PREPARED_SUITE_H_
