#ifndef PLUMB_RUNNER_CLI_GRADER_SESSION_H_
#define PLUMB_RUNNER_CLI_GRADER_SESSION_H_

/// What `plumb run` and `plumb grade` share to grade answers: the verdict cache opened (or not,
/// with --no-grade-cache), an adapter started for each grader, each grader's identity, and the
/// refusal of a grader that is the pipeline under test.

#include <memory>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "runner/pipeline/adapter.h"
#include "runner/pipeline/reply_mapping.h"
#include "runner/run/grading.h"
#include "runner/run/prepared_suite.h"
#include "runner/run/verdict_cache.h"

namespace plumb {

struct GradeCacheOptions {
  std::string path;       // --grade-cache FILE; empty: .plumb/grades.sqlite beside the suite
  bool disabled = false;  // --no-grade-cache
};

/// Owns the adapters and the cache that `inputs` points into. Not copyable.
struct GraderSession {
  std::vector<std::unique_ptr<Adapter>> adapters;
  std::vector<std::unique_ptr<ReplyMapping>> replies;  // for the graders with a `reply:` block
  std::unique_ptr<VerdictCache> cache;
  GradingInputs inputs;

  GraderSession() = default;
  GraderSession(const GraderSession&) = delete;
  GraderSession& operator=(const GraderSession&) = delete;
  /// Stops every grader adapter (from a signal watcher too).
  void Shutdown();
};

/// The default cache file for `suite_path`: DIR/.plumb/grades.sqlite, DIR the suite's directory.
std::string DefaultGradeCachePath(const std::string& suite_path);

/// Starts the graders `names` of the suite (all when empty; an unknown name is an error), opens
/// the cache, and checks that no grader is the pipeline under test (`tested_name`,
/// `tested_config`: redacted, as run.json records it) unless it says
/// `same_as_pipeline: allowed`. False with a sentence to print (exit 2): nothing was graded.
bool StartGraders(const PreparedSuite& prepared, const std::vector<std::string>& names,
                  const GradeCacheOptions& cache, const std::string& tested_name,
                  const nlohmann::json& tested_config, GraderSession* session, std::string* error);

/// One line for stderr after grading: "graded: 120 grades, 100 from the cache, 20 requested;
/// grade.correctness failed on 2 answers (see cases.jsonl)".
std::string GradingSummaryLine(const GradingCounts& counts);

/// The fail-closed gate on grades: prints, for every grade metric the suite gates on (floors,
/// case_pass, correct_from) or `extra_gates` names, whose grader is not calibrated (no fresh
/// record with enough labels and kappa's lower bound at min_kappa), a sentence naming the
/// command that calibrates it. False when it printed any: the command exits 2, nothing run.
bool RefuseUncalibratedGates(const Suite& suite, const std::vector<std::string>& extra_gates = {});

}  // namespace plumb

#endif  // PLUMB_RUNNER_CLI_GRADER_SESSION_H_
