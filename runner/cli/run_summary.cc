#include "runner/cli/run_summary.h"

#include <fmt/format.h>

#include <cstdio>
#include <memory>
#include <thread>

#include "runner/base/atomic_file.h"
#include "runner/base/terminal_palette.h"
#include "runner/report/summary_table.h"
#include "runner/run/calibration.h"
#include "runner/run/error_reasons.h"

namespace plumb {

bool FinishRun(RunContext context, const std::vector<CaseOutcome>& outcomes, bool interrupted,
               const std::string& run_dir, bool json, double seconds, FinishedRun* finished,
               std::string* error, bool exit_line) {
  const Suite& suite = *context.suite;
  if (context.finished_at.empty()) context.finished_at = NowIso8601();
  // An interrupted run keeps its journal but gets no run.json: it is not a finished run, and
  // --resume writes the record once the work is complete.
  std::unique_ptr<AtomicFile> file;
  if (!run_dir.empty() && !interrupted) {
    file = AtomicFile::Open(run_dir + "/run.json", error);
    if (file == nullptr) return false;
  }
  // The head and the case entries depend on the suite alone: written meanwhile on a second
  // thread, straight to the file (and kept only for --json, which prints the record).
  const std::string head = RunRecordHead(context);
  std::string cases;
  std::thread case_writer([&] {
    if (file != nullptr) file->Write(head);
    WriteRunRecordCases(context, [&](std::string_view piece) {
      if (json) cases.append(piece);
      return file == nullptr || file->Write(piece);
    });
  });
  RunAggregates aggregates = AggregateRun(suite, outcomes);
  aggregates.warmups = context.warmups;
  aggregates.price = PriceFromConfig(context.pipeline_config);
  aggregates.freshness = SummarizeFreshness(suite, outcomes, context.refreshes);
  const std::vector<ThresholdOutcome> thresholds = EvaluateThresholds(suite.thresholds, aggregates);
  finished->verdict = DecideRunVerdict(aggregates, thresholds, suite.max_error_rate, interrupted);
  case_writer.join();
  const std::string tail = RunRecordTail(context, aggregates, thresholds, finished->verdict);
  if (file != nullptr) {
    file->Write(tail);
    if (!file->Commit(error)) return false;
  }
  if (json) finished->record = head + cases + tail;
  if (!json) {
    SummaryHeader header{suite.name, context.pipeline_name, seconds, context.repeat, {}};
    header.grade_notes = GradeCalibrationNotes({{"grading", context.grading}});
    const bool colour = UseColour(stdout);
    // The error reasons go under the errored cause, near the top.
    std::string reasons;
    if (aggregates.errored > 0 && !run_dir.empty()) {
      reasons =
          FormatErrorReasons(CountErrorReasons(run_dir + "/cases.jsonl", 5), aggregates.errored);
    }
    std::string text = FormatSummary(header, aggregates, thresholds, finished->verdict, colour,
                                     /*exit_line=*/false, reasons);
    if (!run_dir.empty() && !interrupted) text += "\nrun written to " + run_dir + "\n";
    if (exit_line) {
      text += FormatExitLine(finished->verdict, colour);
    } else {
      text += fmt::format("this run's own verdict: exit code {} ({})\n", finished->verdict.code,
                          finished->verdict.reason);
    }
    std::fputs(text.c_str(), stdout);
    std::fflush(stdout);
  }
  return true;
}

}  // namespace plumb
