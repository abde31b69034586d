#include "runner/cli/compare_command.h"

#include <cstdio>

#include "runner/cli/drift_command.h"
#include "runner/compare/comparison.h"
#include "runner/compare/comparison_json.h"
#include "runner/compare/comparison_table.h"
#include "runner/report/html_compare_report.h"
#include "runner/report/markdown_compare.h"
#include "runner/run/exit_code.h"

namespace plumb {

int CompareCommand(const CompareOptions& options) {
  std::string error;
  if (options.run_dirs.size() < 2) {
    std::fprintf(stderr,
                 "plumb: compare needs two or more run directories, e.g. plumb compare "
                 "plumb-out/demo/retrieve plumb-out/demo/preload\n");
    return kExitUsage;
  }
  if (!CheckDriftOptions(options.drift, &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return kExitUsage;
  }
  std::vector<RunValues> runs(options.run_dirs.size());
  std::vector<const RunValues*> pointers;
  for (size_t i = 0; i < runs.size(); ++i) {
    if (!LoadRunValues(options.run_dirs[i], &runs[i], &error)) {
      std::fprintf(stderr, "plumb: %s\n", error.c_str());
      return kExitUsage;
    }
    for (const std::string& w : runs[i].warnings) {
      std::fprintf(stderr, "%s: warning: %s\n", options.run_dirs[i].c_str(), w.c_str());
    }
    pointers.push_back(&runs[i]);
  }
  Comparison comparison;
  if (!ComputeComparison(pointers, options.drift, &comparison, &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return kExitUsage;
  }
  if (!options.html.empty() && !WriteHtmlCompareReport(comparison, options.html, &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return kExitUsage;
  }
  if (!options.markdown.empty() && !WriteCompareMarkdown(comparison, options.markdown, &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return kExitUsage;
  }
  if (options.json) {
    std::printf("%s\n", ComparisonToJson(comparison).dump(2).c_str());
  } else {
    std::fputs(FormatComparisonTable(comparison, options.colour).c_str(), stdout);
  }
  std::fflush(stdout);
  return comparison.exit_code;
}

}  // namespace plumb
