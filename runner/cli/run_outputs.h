#ifndef PLUMB_RUNNER_CLI_RUN_OUTPUTS_H_
#define PLUMB_RUNNER_CLI_RUN_OUTPUTS_H_

/// The report files a command writes besides its terminal summary (SPEC §10): `--html`,
/// `--junit` and `--markdown` on run, score, report and drift all fill one OutputOptions and
/// hand it here with the finished run(s), so every command writes the same files the same way.

#include <string>

#include "runner/compare/drift.h"
#include "runner/run/run_reader.h"

namespace plumb {

/// Paths to write; an empty path writes nothing, "-" writes to standard output.
struct OutputOptions {
  std::string html;
  std::string junit;
  std::string markdown;

  bool empty() const { return html.empty() && junit.empty() && markdown.empty(); }
};

/// The run's HTML report, JUnit XML and Markdown summary. Stops at the first file that cannot
/// be written: false with a sentence naming it.
bool WriteRunOutputs(const LoadedRun& run, const OutputOptions& options, std::string* error);

/// The drift's HTML report and Markdown summary; `--junit` describes the candidate run's cases,
/// floors and gated metrics, its lost cases marked (junit_report.h). False with a sentence, as
/// above.
bool WriteDriftOutputs(const DriftReport& report, const LoadedRun& base, const LoadedRun& cand,
                       const OutputOptions& options, std::string* error);

/// The paths for one of several pipelines run by one command: ".<pipeline>" goes before each
/// path's extension ("report.html" -> "report.retrieve.html"), so the runs do not overwrite
/// each other's files. "-" stays "-": the runs' files follow each other on standard output.
OutputOptions OutputsForPipeline(const OutputOptions& options, const std::string& pipeline);

}  // namespace plumb

#endif  // PLUMB_RUNNER_CLI_RUN_OUTPUTS_H_
