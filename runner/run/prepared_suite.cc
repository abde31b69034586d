#include "runner/run/prepared_suite.h"

#include <cstdio>

#include "runner/base/sha256.h"
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
  if (!out->suite.updates.empty() && out->corpus != nullptr) {
    Sha256 fingerprint;
    fingerprint.Update("plumb-updated-corpus-v1\n" + out->corpus_fingerprint + "\n");
    for (size_t k = 0; k < out->suite.updates.size(); ++k) {
      const CorpusUpdate& update = out->suite.updates[k];
      auto corpus = std::make_unique<Corpus>();
      bool ok = corpus->Open(*out->suite.corpus_dir, &error);
      for (size_t i = 0; ok && i <= k; ++i) {
        ok =
            corpus->AddUpdate(out->suite.updates[i].docs_dir, out->suite.updates[i].remove, &error);
      }
      if (!ok) {
        std::fprintf(stderr, "%s: error: update '%s': %s\n", path.c_str(), update.id.c_str(),
                     error.c_str());
        return false;
      }
      out->update_corpora.push_back(std::move(corpus));
      fingerprint.Update(update.id + "\n");
      for (const std::string& doc : update.remove) fingerprint.Update("-" + doc + "\n");
      if (!update.docs_dir.empty()) {
        Corpus docs;
        if (docs.Open(update.docs_dir, &error)) fingerprint.Update(docs.Fingerprint() + "\n");
      }
    }
    out->corpus_fingerprint = fingerprint.HexDigest();
  }
  out->scorer = CaseScorer::Create(out->suite, out->corpus.get(), &error);
  if (out->scorer == nullptr) {
    std::fprintf(stderr, "%s: error: %s\n", path.c_str(), error.c_str());
    return false;
  }
  std::vector<Corpus*> updated;
  for (const auto& corpus : out->update_corpora) updated.push_back(corpus.get());
  out->scorer->UseUpdateCorpora(std::move(updated));
  return true;
}

}  // namespace plumb
