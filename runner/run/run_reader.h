#ifndef PLUMB_RUNNER_RUN_RUN_READER_H_
#define PLUMB_RUNNER_RUN_RUN_READER_H_

/// LoadedRun is a finished run read back from its directory (SPEC §9): run.json and every
/// record of cases.jsonl. Reports (`plumb report`, --html/--junit/--markdown) and drift read
/// runs only through it, never through the suite or a pipeline. Records hold bounded replies,
/// so a loaded run costs memory in proportion to its cases.

#include <map>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "runner/run/case_record.h"

namespace plumb {

struct LoadedRun {
  std::string dir;
  nlohmann::json record;              // run.json as FinishRun writes it (runner/run/run_record.h)
  std::vector<CaseRecord> records;    // journal order
  std::vector<std::string> warnings;  // e.g. a torn last journal line

  /// run.json's per-case gold ("question", "answers", "sources", "tags", ...), or null.
  const nlohmann::json* Gold(const std::string& id) const;
  /// The suite's case_pass minimums as run.json records them ({correct: 1} when absent).
  std::map<std::string, double> CasePass() const;
  /// Records of case `id`, by repeat; empty when the run has none.
  std::vector<const CaseRecord*> RecordsOf(const std::string& id) const;
};

/// The suite's case_pass minimums as run.json `record` holds them ({correct: 1} when absent).
std::map<std::string, double> CasePassOf(const nlohmann::json& record);

/// Reads `dir`/run.json and `dir`/cases.jsonl. False with a sentence naming the file when
/// either is missing or malformed (an interrupted run has no run.json: say so).
bool LoadRun(const std::string& dir, LoadedRun* run, std::string* error);
/// Reads `dir`/run.json alone, as LoadRun does; false with the same sentences.
bool LoadRunRecord(const std::string& dir, nlohmann::json* record, std::string* error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_RUN_READER_H_
