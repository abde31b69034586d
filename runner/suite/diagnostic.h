#ifndef PLUMB_RUNNER_SUITE_DIAGNOSTIC_H_
#define PLUMB_RUNNER_SUITE_DIAGNOSTIC_H_

/// A Diagnostic is one problem found in a user's file, pinned to file:line:column, with what to
/// do about it. The suite loader collects every problem into a Diagnostics list before it gives
/// up, so a user fixes them all in one pass.

#include <string>
#include <vector>

namespace plumb {

/// A position in a user's file. `line` and `column` are 1-based; 0 means unknown.
struct SourcePos {
  std::string file;
  int line = 0;
  int column = 0;
};

struct Diagnostic {
  SourcePos pos;
  std::string message;  // what is wrong, e.g. "unknown key 'anwsers'"
  std::string hint;     // what to do, e.g. "did you mean 'answers'?"; may be empty

  /// "file:line:column: error: message; hint" (the gcc convention editors understand);
  /// `severity` replaces "error" for warnings.
  std::string Format(const char* severity = "error") const;
};

using Diagnostics = std::vector<Diagnostic>;

/// All diagnostics, one Format()ted line each, in order.
std::string FormatDiagnostics(const Diagnostics& diagnostics);

}  // namespace plumb

#endif  // PLUMB_RUNNER_SUITE_DIAGNOSTIC_H_
