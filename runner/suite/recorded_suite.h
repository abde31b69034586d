#ifndef PLUMB_RUNNER_SUITE_RECORDED_SUITE_H_
#define PLUMB_RUNNER_SUITE_RECORDED_SUITE_H_

/// The parts of a Suite that a run record (run.json, runner/run/run_record.h) keeps, read back into
/// a Suite: the settings of its "suite" object and thresholds, and each case's gold. `plumb
/// merge` rebuilds the suite of sharded runs from them, so aggregates, thresholds and run.json
/// are computed by the same code as for a run of the suite file itself. Pipelines, quotes and
/// case inputs are not recorded and stay empty.

#include <cstddef>
#include <nlohmann/json.hpp>
#include <string>

#include "runner/suite/suite.h"

namespace plumb {

/// Fills suite->name, path, suite_hash, normalize, lang, retrieval_k, case_pass, min_overlap,
/// max_error_rate, corpus_dir and thresholds from `record`. False with a sentence naming the
/// member that is missing or malformed.
bool ReadRecordedSuiteSettings(const nlohmann::json& record, Suite* suite, std::string* error);

/// The most cases a rebuilt suite may hold. A rebuilt Suite keeps each case at its recorded
/// place, so a place is bounded before anything is sized by it; 16,777,216 cases is far beyond
/// what plumb loads (a Case is about 300 bytes before its text).
inline constexpr size_t kMaxRecordedCases = size_t{1} << 24;

/// One entry of run.json's "cases": the case's gold and its place in the suite ("index", below
/// kMaxRecordedCases). False with a sentence naming the member that is missing or malformed.
bool ReadRecordedCase(const std::string& id, const nlohmann::json& entry, Case* gold, size_t* index,
                      std::string* error);

/// A run.json case entry's "after" and "stale_answers" (issue 23) into *gold, by the update
/// ids `suite` read back (ReadRecordedSuiteSettings). False with a sentence when "after" names
/// an update the run does not list.
bool ResolveRecordedAfter(const nlohmann::json& entry, const Suite& suite, Case* gold,
                          std::string* error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_SUITE_RECORDED_SUITE_H_
