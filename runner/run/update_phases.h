#ifndef PLUMB_RUNNER_RUN_UPDATE_PHASES_H_
#define PLUMB_RUNNER_RUN_UPDATE_PHASES_H_

/// Runs a suite with corpus updates (issue 23) in phases: the cases asked of the corpus as the
/// suite names it, then for each update in order: the updated corpus is assembled in the run
/// directory (DIR/corpus/<update>/, a copy of the one before with the update applied; the
/// user's corpus is only read), the pipeline's `refresh:` is called with it and timed, and the
/// cases asked after that update run. The scheduler runs each phase; nothing else changes.

#include <atomic>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "runner/run/scheduler.h"
#include "runner/suite/suite.h"

namespace plumb {

/// One refresh of one update in one run (or shard): run.json's freshness.updates[].refreshes.
struct RefreshRecord {
  std::string update;
  bool called = false;  // the pipeline has `refresh:` and it was called
  bool ok = false;      // it exited 0 / answered 2xx in time
  double ms = 0;        // refresh_ms: wall time of the call
  std::string error;    // why it failed (redacted), "" when ok or not called
  std::string shard;    // "I/N" of the run that refreshed ("" unsharded); set by merge
};

/// run.json's form of a record, and back (false when `json` is not one).
nlohmann::json RefreshRecordToJson(const RefreshRecord& record);
bool RefreshRecordFromJson(const nlohmann::json& json, RefreshRecord* record);

/// Copies the corpus at `from_dir` to `to_dir` (replaced if present) with `update` applied:
/// the files it removes left out, its docs copied over. Regular files only; `from_dir` is
/// never written. False with a sentence on failure.
bool AssembleUpdatedCorpus(const std::string& from_dir, const CorpusUpdate& update,
                           const std::string& to_dir, std::string* error);

struct UpdatePhaseInputs {
  ScheduleInputs schedule;  // `items` is ignored: the phases' items are taken from `items`
  const std::vector<WorkItem>* items = nullptr;  // everything still to run, any order
  std::string run_dir;
  /// Refreshes already recorded for this run directory (an interrupted run's, read back for
  /// --resume): an update none of whose items is left keeps its record.
  std::vector<RefreshRecord> recorded;
  /// Appends each refresh record as it is made (DIR/refresh.jsonl), so --resume knows which
  /// refreshes completed; may be empty.
  std::string refresh_log;
};

struct UpdatePhaseResult {
  ScheduleResult schedule;               // the phases' outcomes in phase order
  std::vector<RefreshRecord> refreshes;  // one per update that had cases, in update order
};

/// Runs the phases. An update whose items are all done (or none selected) is neither
/// assembled nor refreshed. A refresh that fails is recorded and its update's cases still run
/// (they measure what the pipeline serves then). An interrupt during a refresh stops the run
/// before that update's cases, leaving them for --resume, which refreshes again.
UpdatePhaseResult RunUpdatePhases(const UpdatePhaseInputs& inputs);

/// DIR/refresh.jsonl read back (records of completed refreshes; unreadable lines skipped).
std::vector<RefreshRecord> ReadRefreshLog(const std::string& path);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_UPDATE_PHASES_H_
