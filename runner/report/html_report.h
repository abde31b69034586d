#ifndef PLUMB_RUNNER_REPORT_HTML_REPORT_H_
#define PLUMB_RUNNER_REPORT_HTML_REPORT_H_

/// The HTML report (SPEC §10): one self-contained page a reviewer opens from a CI artifact to see
/// why cases fail. `--html FILE` on run, score, report and drift writes it through these two
/// functions. The page holds every case and score as HTML (readable with scripting off); its one
/// inline script only filters, sorts and folds; a Content-Security-Policy admits nothing but that
/// script and the page's style sheet, and every string from the suite, corpus or pipeline is
/// escaped. Citations are drawn on the documents of the run's corpus_dir when it is readable,
/// else on the gold span texts recorded in run.json.

#include <nlohmann/json.hpp>
#include <string>

#include "runner/run/run_reader.h"

namespace plumb {

/// Writes the report of one finished run to `path` (atomically: readers see the old file or the
/// new one). The verdict, floors, metric table with intervals and per-tag rows come first; then
/// the failed cases, errored ones, and the passed ones folded. False with a sentence naming the
/// path when the file cannot be written.
bool WriteHtmlRunReport(const LoadedRun& run, const std::string& path, std::string* error);

/// Writes the drift report between `base` and `cand` to `path`. `drift_json` is the drift
/// computation's result (its "metrics", "lost", "gained", "gate", ... keys); the runs supply the
/// answers, citations and gold shown side by side. Lost cases come first, then gained ones, then
/// the cases whose outcome did not change, folded. False with a sentence when the file cannot be
/// written.
bool WriteHtmlDriftReport(const nlohmann::json& drift_json, const LoadedRun& base,
                          const LoadedRun& cand, const std::string& path, std::string* error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_HTML_REPORT_H_
