#include "runner/run/prepared_suite.h"

#include <cstdio>

#include "runner/suite/suite_loader.h"

namespace plumb {

bool PrepareSuite(const std::string& path, const std::string& pipelines_file, bool expand_env,
                  PreparedSuite* out, const std::vector<std::string>& expand_pipelines,
                  bool keep_unlocated_quotes) {
  LoadOptions options;
  options.pipelines_file = pipelines_file;
  options.expand_env = expand_env;
  options.expand_pipelines = expand_pipelines;
  options.keep_unlocated_quotes = keep_unlocated_quotes;
  Diagnostics errors;
  Diagnostics warnings;
  const bool loaded = LoadSuite(path, options, &out->suite, &errors, &warnings);
  for (const Diagnostic& w : warnings) {
    std::fprintf(stderr, "%s\n", w.Format("warning").c_str());
  }
  if (!loaded) {
    std::fputs(FormatDiagnostics(errors).c_str(), stderr);
    std::fprintf(stderr, "plumb: %zu problem%s in %s; nothing was run\n", errors.size(),
                 errors.size() == 1 ? "" : "s", path.c_str());
    return false;
  }
  if (out->suite.corpus_dir) {
    out->corpus = std::make_unique<Corpus>();
    std::string error;
    if (!out->corpus->Open(*out->suite.corpus_dir, &error)) {
      std::fprintf(stderr, "%s: error: %s\n", path.c_str(), error.c_str());
      return false;
    }
    FingerprintSkips skips;
    out->corpus_fingerprint = out->corpus->Fingerprint(FingerprintLimits{}, &skips);
    const std::string skipped = skips.Describe(*out->suite.corpus_dir);
    if (!skipped.empty()) std::fprintf(stderr, "%s: warning: %s\n", path.c_str(), skipped.c_str());
  }
  std::string error;
  out->scorer = CaseScorer::Create(out->suite, out->corpus.get(), &error);
  if (out->scorer == nullptr) {
    std::fprintf(stderr, "%s: error: %s\n", path.c_str(), error.c_str());
    return false;
  }
  return true;
}

}  // namespace plumb
