#ifndef PLUMB_RUNNER_REPORT_JUNIT_REPORT_H_
#define PLUMB_RUNNER_REPORT_JUNIT_REPORT_H_

/// JUnit XML for a finished run (SPEC §10, extended by issue 20), the format CI test-result
/// viewers read. The pipeline is in every name, so two pipelines' files do not collide: one
/// <testsuite> named SUITE.PIPELINE, and
///   - one <testcase> per case (classname SUITE.PIPELINE, name = case id, time = mean latency in
///     seconds). A case that failed carries a <failure> whose message gives its cause
///     (runner/run/failure_cause.h) with the reason, then its scores; a case whose call errored
///     carries an <error> with the reason, the scores and the pipeline's output excerpts. With
///     --repeat a case fails when any repeat failed;
///   - one per floor and ceiling (classname SUITE.PIPELINE.floors, name = the rule, "floor
///     correct >= 0.8"); a broken one fails with the value and its 95% interval;
///   - with a drift (`plumb drift --junit`, `run --baseline --junit`): one per gated metric
///     (classname SUITE.PIPELINE.gate, "no regression in correct"), failing when it regressed
///     with the rule, both means, the delta, its interval and p, skipped with too few cases; the
///     candidate's lost cases are typed "plumb.lost" and their message starts "lost (passed in
///     the base run)". Then the gate's reason is the "verdict" property.
/// Written by `--junit FILE` on run, score, report and drift (through run_outputs.h).
///
/// Every string is escaped for XML 1.0: markup characters as entities, characters XML does not
/// allow (C0 controls other than tab and newline, U+FFFE, U+FFFF) and invalid UTF-8 as U+FFFD,
/// so any pipeline output yields a well-formed document.

#include <string>
#include <string_view>

#include "runner/compare/drift.h"
#include "runner/run/run_reader.h"

namespace plumb {

/// `drift`, when not null, compares some base with `run` (its candidate).
std::string FormatJUnitReport(const LoadedRun& run, const DriftReport* drift = nullptr);

/// Writes FormatJUnitReport(run, drift) to `path` atomically; false with a sentence on failure.
bool WriteJUnitReport(const LoadedRun& run, const std::string& path, std::string* error,
                      const DriftReport* drift = nullptr);

/// `text` escaped for XML character data and attribute values (quotes included).
std::string XmlEscape(std::string_view text);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_JUNIT_REPORT_H_
