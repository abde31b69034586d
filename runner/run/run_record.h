#ifndef PLUMB_RUNNER_RUN_RUN_RECORD_H_
#define PLUMB_RUNNER_RUN_RUN_RECORD_H_

/// The run record, DIR/run.json (SPEC §9): everything needed to read, compare and trust a run
/// later without the pipeline: tool version, suite name and hash, per-case gold hashes and gold
/// span fingerprints, corpus fingerprint, pipeline config with secrets as "***", labels, times,
/// shard, aggregates, thresholds and the verdict. It is also what `--json` prints.

#include <functional>
#include <map>
#include <nlohmann/json.hpp>
#include <string>
#include <string_view>
#include <vector>

#include "runner/run/exit_code.h"
#include "runner/run/run_aggregates.h"
#include "runner/suite/case_selection.h"
#include "runner/suite/suite.h"

namespace plumb {

struct RunContext {
  const Suite* suite = nullptr;
  std::vector<size_t> selected;  // indices into suite->cases
  std::string pipeline_name;     // "predictions" for `plumb score`
  nlohmann::json pipeline_config;
  std::string corpus_fingerprint;  // empty without a corpus
  std::map<std::string, std::string> labels;
  std::string started_at;   // ISO 8601 UTC
  std::string finished_at;  // empty: FinishRun takes the time it is called
  Shard shard;
  int repeat = 1;
  int jobs = 1;
  bool resumed = false;
  std::vector<WorkerWarmup> warmups;     // this invocation's worker start-ups (issue 21)
  std::vector<RefreshRecord> refreshes;  // the refreshes for corpus updates (issue 23)
  /// run.json's "grading" (GradingRecord): cache, counts, graders; null without graders.
  nlohmann::json grading;
};

/// run.json comes in three parts: RunRecordHead, the case entries of WriteRunRecordCases, and
/// RunRecordTail; together, JSON indented by two spaces with members in a fixed order and one
/// trailing newline. The case entries are most of the file and depend on the suite alone, so
/// FinishRun writes them on a second thread while the aggregates are computed, straight to the
/// file instead of holding them.
std::string RunRecordHead(const RunContext& context);
/// The case entries: each selected case with its gold, so reports and drift need no suite file.
/// They are handed to `sink` in pieces of about 256 KiB; false as soon as `sink` returns false.
bool WriteRunRecordCases(const RunContext& context,
                         const std::function<bool(std::string_view)>& sink);
std::string RunRecordTail(const RunContext& context, const RunAggregates& aggregates,
                          const std::vector<ThresholdOutcome>& thresholds,
                          const RunVerdict& verdict);
/// run.json's "baseline" member after `run --baseline`: the baseline's absolute directory, the
/// drift file beside run.json, and the gate's exit code and reason.
nlohmann::json BaselineRecord(const std::string& baseline_dir, int gate_code,
                              const std::string& gate_reason);

/// Rewrites `run_dir`/run.json with `baseline` (BaselineRecord) before its verdict and with
/// `verdict` (the process's exit code and reason, gate included) as the verdict, so `plumb
/// report` and a CI step reading run.json see what the command's exit code said. The rest of
/// the file is kept byte for byte; replaced atomically. False with a sentence on any failure.
bool RecordBaselineVerdict(const std::string& run_dir, const nlohmann::json& baseline,
                           const RunVerdict& verdict, std::string* error);

/// Writes `contents` to `path` through a temporary file in the same directory and rename(2),
/// so readers see the old file or the new one, never half of one (runner/base/atomic_file.h).
/// Missing parent folders are created first. The path "-" writes to standard output
/// (runner/base/report_stdout.h), the report flags' convention.
bool WriteFileAtomically(const std::string& path, const std::string& contents, std::string* error);

/// The current time as "2026-12-01T22:03:56Z".
std::string NowIso8601();
/// Seconds between two times in that form; 0 when either does not parse.
double SecondsBetween(const std::string& start, const std::string& end);

/// Parses "key=value" (the key non-empty); false with a sentence otherwise.
bool ParseLabel(const std::string& text, std::string* key, std::string* value, std::string* error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_RUN_RECORD_H_
