#ifndef PLUMB_RUNNER_RUN_RUN_ORIGIN_H_
#define PLUMB_RUNNER_RUN_RUN_ORIGIN_H_

/// What makes a run directory's journal part of one run (issue 17 item 4): the suite's hash,
/// the corpus fingerprint, and the pipeline's name and config as written (`${VAR}`s as "***",
/// so a rotated token does not block a resume). `plumb run` records it in DIR/run.start.json
/// before the first case, and `--resume` refuses a directory whose recorded origin differs
/// from the run it is asked to continue, the way `plumb merge` refuses foreign shards.

#include <nlohmann/json.hpp>
#include <string>
#include <vector>

namespace plumb {

/// Written at the start of every run, beside the journal; run.json has the same members.
inline constexpr const char kRunStartFile[] = "run.start.json";

struct RunOrigin {
  std::string suite_hash;
  std::string corpus_fingerprint;  // empty without a corpus
  std::string pipeline_name;
  nlohmann::json pipeline_config;  // redacted, as run.json records it
};

/// Writes `origin` to DIR/run.start.json atomically; false with a sentence on failure.
bool WriteRunStart(const std::string& dir, const RunOrigin& origin, std::string* error);

/// The origin of the run recorded in `dir`: from run.start.json, else from a finished run's
/// run.json. *found is false when neither is there (no run yet, or a journal written before
/// plumb recorded run.start.json). False with a sentence when a file is there but unreadable.
bool ReadRecordedOrigin(const std::string& dir, RunOrigin* origin, bool* found, std::string* error);

/// One phrase per member that differs, naming the recorded value and this run's, e.g.
/// "pipeline 'retrieve' (this run: 'preload')". Empty when the two are one run.
std::vector<std::string> OriginDifferences(const RunOrigin& recorded, const RunOrigin& now);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_RUN_ORIGIN_H_
