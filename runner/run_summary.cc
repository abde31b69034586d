#include "runner/run_summary.h"

#include <cstdio>
#include <thread>

#include "runner/summary_table.h"

namespace plumb {

bool FinishRun(RunContext context, const std::vector<CaseOutcome>& outcomes, bool interrupted,
               const std::string& run_dir, bool json, double seconds, FinishedRun* finished,
               std::string* error) {
  const Suite& suite = *context.suite;
  // The record's case block depends on the suite alone: written meanwhile on a second thread.
  std::string case_members;
  std::thread case_writer([&] { case_members = RunRecordCaseMembers(context); });
  const RunAggregates aggregates = AggregateRun(suite, outcomes);
  const std::vector<ThresholdOutcome> thresholds = EvaluateThresholds(suite.thresholds, aggregates);
  finished->verdict = DecideRunVerdict(aggregates, thresholds, suite.max_error_rate, interrupted);
  context.finished_at = NowIso8601();
  case_writer.join();
  finished->record =
      BuildRunRecord(context, aggregates, thresholds, finished->verdict, case_members);
  // An interrupted run keeps its journal but gets no run.json: it is not a finished run, and
  // --resume writes the record once the work is complete.
  if (!run_dir.empty() && !interrupted) {
    if (!WriteFileAtomically(run_dir + "/run.json", finished->record, error)) {
      return false;
    }
  }
  if (!json) {
    SummaryHeader header{suite.name, context.pipeline_name, seconds, context.repeat};
    const std::string table =
        FormatSummary(header, aggregates, thresholds, finished->verdict, UseColour(stdout));
    std::fputs(table.c_str(), stdout);
    if (!run_dir.empty() && !interrupted) std::printf("run written to %s\n", run_dir.c_str());
    std::fflush(stdout);
  }
  return true;
}

}  // namespace plumb
