#include "runner/cli/score_command.h"

#include <unistd.h>

#include <cerrno>
#include <chrono>
#include <cstdio>
#include <cstring>
#include <memory>

#include "runner/base/interrupt.h"
#include "runner/base/keep_until_exit.h"
#include "runner/cli/grader_session.h"
#include "runner/cli/run_command.h"
#include "runner/cli/run_summary.h"
#include "runner/run/prediction_reader.h"
#include "runner/run/prepared_suite.h"
#include "runner/run/run_journal.h"
#include "runner/run/run_reader.h"
#include "runner/run/scheduler.h"

namespace plumb {

// The pending journal is written in pieces of about this size.
constexpr size_t kJournalBuffer = 1 << 20;

int ScoreCommand(const ScoreOptions& options) {
  auto owned = std::make_unique<PreparedSuite>();
  PreparedSuite& prepared = *owned;
  if (!PrepareSuite(options.suite_path, "", /*expand_env=*/false, &prepared)) return 2;
  const Suite& suite = prepared.suite;
  if (!RefuseUncalibratedGates(suite)) return 2;

  const auto start = std::chrono::steady_clock::now();
  const std::string run_dir = RunDirectory(options.out_dir, suite.name, "predictions", false);
  std::string error;
  if (!MakeDirectories(run_dir, &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return 2;
  }
  // Records are scored as the predictions are read, into a journal beside the real one: a bad
  // predictions file leaves an earlier run in this directory as it was.
  ReportStaleTempFiles(run_dir);
  const std::string journal_path = run_dir + "/cases.jsonl";
  const std::string pending_path = journal_path + ".pending." + std::to_string(getpid());
  RemoveOnInterrupt(pending_path);
  auto owned_outcomes = std::make_unique<std::vector<CaseOutcome>>();
  std::vector<CaseOutcome>& outcomes = *owned_outcomes;
  outcomes.reserve(suite.cases.size());
  int max_repeat = 0;
  {
    std::unique_ptr<RunJournal> journal =
        RunJournal::Open(pending_path, -1, &error, kJournalBuffer);
    if (journal == nullptr) {
      std::fprintf(stderr, "plumb: %s\n", error.c_str());
      return 2;
    }
    PredictionReader reader(options.predictions_path, prepared, journal.get());
    if (!reader.ReadAll(&outcomes, &max_repeat, &error) || !journal->Flush(&error)) {
      std::remove(pending_path.c_str());
      KeepOnInterrupt(pending_path);
      std::fprintf(stderr, "plumb: %s\n", error.c_str());
      return 2;
    }
  }
  const bool renamed = std::rename(pending_path.c_str(), journal_path.c_str()) == 0;
  KeepOnInterrupt(pending_path);
  if (!renamed) {
    std::fprintf(stderr, "plumb: cannot write %s: %s\n", journal_path.c_str(),
                 std::strerror(errno));
    std::remove(pending_path.c_str());
    return 2;
  }

  RunContext context;
  context.suite = &suite;
  context.selected.resize(suite.cases.size());
  for (size_t i = 0; i < suite.cases.size(); ++i) context.selected[i] = i;
  context.pipeline_name = "predictions";
  context.pipeline_config = {{"predictions", options.predictions_path}};
  context.corpus_fingerprint = prepared.corpus_fingerprint;
  context.labels = options.labels;
  context.started_at = NowIso8601();
  context.repeat = max_repeat + 1;
  const double seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  FinishedRun finished;
  if (!FinishRun(context, outcomes, false, run_dir, options.json, seconds, &finished, &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return 2;
  }
  if (!options.outputs.empty()) {
    LoadedRun run;
    if (!LoadRun(run_dir, &run, &error) || !WriteRunOutputs(run, options.outputs, &error)) {
      std::fprintf(stderr, "plumb: %s\n", error.c_str());
      return 2;
    }
  }
  if (options.json) std::fputs(finished.record.c_str(), stdout);
  KeepUntilExit(std::move(owned));
  KeepUntilExit(std::move(owned_outcomes));
  return finished.verdict.code;
}

}  // namespace plumb
