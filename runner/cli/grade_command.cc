#include "runner/cli/grade_command.h"

#include <chrono>
#include <cstdio>

#include "runner/base/interrupt.h"
#include "runner/cli/run_summary.h"
#include "runner/run/exit_code.h"
#include "runner/run/run_reader.h"

namespace plumb {
namespace {

int Fail(const std::string& message, int code = kExitUsage) {
  std::fprintf(stderr, "plumb grade: %s\n", message.c_str());
  return code;
}

}  // namespace

int GradeCommand(const GradeOptions& options) {
  const auto start = std::chrono::steady_clock::now();
  nlohmann::json record;
  std::string error;
  if (!LoadRunRecord(options.run_dir, &record, &error)) return Fail(error);
  const nlohmann::json settings = record.value("suite", nlohmann::json::object());
  const std::string suite_path =
      !options.suite_path.empty() ? options.suite_path : settings.value("path", std::string());
  if (suite_path.empty()) {
    return Fail(options.run_dir + "/run.json records no suite path; pass --suite SUITE");
  }
  PreparedSuite prepared;
  if (!PrepareSuite(suite_path, options.pipelines_file, /*expand_env=*/true, &prepared)) {
    return kExitUsage;
  }
  const Suite& suite = prepared.suite;
  if (!RefuseUncalibratedGates(suite)) return kExitUsage;
  if (suite.graders.empty()) {
    return Fail(suite.path + " defines no graders; add a graders: block (README, \"Graders\")");
  }
  if (settings.value("hash", std::string()) != suite.suite_hash) {
    std::fprintf(stderr,
                 "plumb grade: warning: %s changed since the run; its current gold, graders and "
                 "settings are used\n",
                 suite.path.c_str());
  }
  // The run's cases, as far as the suite still has them.
  std::vector<bool> selected(suite.cases.size(), false);
  RunContext context;
  context.suite = &suite;
  const nlohmann::json cases = record.value("cases", nlohmann::json::object());
  for (auto it = cases.begin(); it != cases.end(); ++it) {
    const size_t index = suite.case_ids.Find(suite.cases, it.key());
    if (index == CaseIdIndex::kAbsent) {
      std::fprintf(stderr, "plumb grade: warning: case '%s' is no longer in %s; left out\n",
                   it.key().c_str(), suite.path.c_str());
      continue;
    }
    if (!selected[index]) context.selected.push_back(index);
    selected[index] = true;
  }
  std::sort(context.selected.begin(), context.selected.end());
  const nlohmann::json pipeline = record.value("pipeline", nlohmann::json::object());
  context.pipeline_name = pipeline.value("name", "");
  context.pipeline_config = pipeline.value("config", nlohmann::json::object());
  context.corpus_fingerprint = record.value("corpus_fingerprint", "");
  const nlohmann::json labels = record.value("labels", nlohmann::json::object());
  for (const auto& [key, value] : labels.items()) {
    if (value.is_string()) context.labels[key] = value.get<std::string>();
  }
  context.started_at = record.value("started_at", "");
  context.finished_at = record.value("finished_at", "");
  const nlohmann::json shard = record.value("shard", nlohmann::json::object());
  context.shard.index = shard.value("index", 1);
  context.shard.count = shard.value("count", 1);
  context.repeat = record.value("repeat", 1);
  context.jobs = record.value("jobs", 1);
  context.resumed = record.value("resumed", false);

  GraderSession session;
  if (!StartGraders(prepared, options.graders, options.cache, context.pipeline_name,
                    context.pipeline_config, &session, &error)) {
    return Fail(error);
  }
  GradedJournal graded;
  {
    InterruptWatch watch([&session] { session.Shutdown(); });
    session.inputs.stop = &watch.interrupted();
    GradingPass pass(session.inputs);
    const bool ok = GradeJournal(options.run_dir + "/cases.jsonl", session.inputs, selected, &pass,
                                 &graded, &error);
    session.Shutdown();
    if (!ok) return Fail(error);
  }
  for (const std::string& w : graded.warnings) std::fprintf(stderr, "warning: %s\n", w.c_str());
  std::fprintf(stderr, "%s\n", GradingSummaryLine(graded.counts).c_str());
  if (graded.interrupted) {
    return Fail(
        "interrupted; the run is as it was. Grades already given are in the cache, so running "
        "plumb grade again continues from there",
        kExitInterrupted);
  }
  context.grading = GradingRecord(session.inputs, graded.counts);
  const double seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  FinishedRun finished;
  if (!FinishRun(context, graded.outcomes, false, options.run_dir, options.json, seconds, &finished,
                 &error)) {
    return Fail(error);
  }
  if (options.json) std::fputs(finished.record.c_str(), stdout);
  return finished.verdict.code;
}

}  // namespace plumb
