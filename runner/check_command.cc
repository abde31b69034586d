#include "runner/check_command.h"

#include <cstdio>

#include <nlohmann/json.hpp>

#include "runner/prepared_suite.h"

namespace plumb {

int CheckCommand(const CheckOptions& options) {
  PreparedSuite prepared;
  // ${VAR} is not expanded: checking a suite must not need the pipeline's secrets.
  if (!PrepareSuite(options.suite_path, options.pipelines_file, /*expand_env=*/false,
                    &prepared)) {
    return 2;
  }
  const Suite& suite = prepared.suite;
  size_t spans = 0, quotes = 0, abstention = 0;
  for (const Case& c : suite.cases) {
    spans += c.sources.size();
    for (const GoldSpan& s : c.sources) quotes += s.quote ? 1 : 0;
    abstention += c.answers.empty() ? 1 : 0;
  }
  if (options.json) {
    const nlohmann::json out = {{"suite", suite.name},
                                {"ok", true},
                                {"cases", suite.cases.size()},
                                {"abstention_cases", abstention},
                                {"gold_spans", spans},
                                {"quotes_located", quotes},
                                {"pipelines", suite.pipelines.size()},
                                {"corpus_fingerprint", prepared.corpus_fingerprint}};
    std::printf("%s\n", out.dump(2).c_str());
  } else {
    std::printf("%s: ok: %zu cases (%zu abstention), %zu gold spans (%zu quotes located), %zu "
                "pipelines\n",
                suite.path.c_str(), suite.cases.size(), abstention, spans, quotes,
                suite.pipelines.size());
  }
  return 0;
}

}  // namespace plumb
