#include "runner/run/exit_code.h"

#include <fmt/format.h>

#include "runner/base/terminal_palette.h"

namespace plumb {

RunVerdict DecideRunVerdict(const RunAggregates& run,
                            const std::vector<ThresholdOutcome>& thresholds, double max_error_rate,
                            bool interrupted) {
  if (interrupted) {
    return {kExitInterrupted,
            fmt::format("interrupted after {} of the work items; the journal is kept, rerun with "
                        "--resume to continue",
                        run.items)};
  }
  if (run.items > 0 && run.errored == run.items) {
    return {kExitCaseErrors, fmt::format("every one of the {} items errored; see the error "
                                         "column of cases.jsonl for the pipeline's output",
                                         run.items)};
  }
  if (run.ErrorRate() > max_error_rate) {
    return {kExitCaseErrors,
            fmt::format("{} of {} items errored ({:.1f}%), above max_error_rate {:.1f}%",
                        run.errored, run.items, 100 * run.ErrorRate(), 100 * max_error_rate)};
  }
  int floors = 0, ceilings = 0, broken_floors = 0, broken_ceilings = 0;
  std::string broken;  // every broken floor and ceiling, in full: a reason is never cut short
  for (const ThresholdOutcome& t : thresholds) {
    ++(t.ceiling ? ceilings : floors);
    if (t.held) continue;
    const std::string scope = t.tag.empty() ? t.metric : "tag " + t.tag + " " + t.metric;
    broken += broken.empty() ? "" : ", ";
    broken += t.value ? fmt::format("{} {:.4g} {} {:.4g}", scope, *t.value, t.ceiling ? ">" : "<",
                                    t.limit)
                      : fmt::format("{} was not measured by any case", scope);
    ++(t.ceiling ? broken_ceilings : broken_floors);
  }
  if (broken_floors + broken_ceilings > 0) {
    return {kExitFloorBroken,
            fmt::format("{} broken: {}", CountFloorsAndCeilings(broken_floors, broken_ceilings),
                        broken)};
  }
  if (thresholds.empty()) return {kExitOk, "no floors or ceilings set"};
  return {kExitOk, fmt::format("all {} held", CountFloorsAndCeilings(floors, ceilings))};
}

std::string FormatExitLine(const RunVerdict& verdict, bool colour) {
  const Palette p = MakePalette(colour);
  return fmt::format("{}exit {}{}: {}\n", verdict.code == kExitOk ? p.good : p.bad, verdict.code,
                     p.reset, verdict.reason);
}

}  // namespace plumb
