#ifndef PLUMB_RUNNER_RUN_CALIBRATION_H_
#define PLUMB_RUNNER_RUN_CALIBRATION_H_

/// Grader calibration: how a grader's verdicts agree with a person's labels on the same answers
/// (`plumb calibrate`), kept as a record `calibration/NAME.json` beside the suite, bound to the
/// grader's identity (GraderIdentity: its config without secrets and its rubric text). A grade
/// may gate (floors, case_pass, correct_from, drift --gate) only when that record is fresh (same
/// identity), holds at least `min_labels` labelled answers, and puts the lower 95% bound of
/// Cohen's kappa at or above `min_kappa`: the gate fails closed. Everything else about a grade
/// (computing it, showing it) works without a record, marked "uncalibrated".

#include <cstdint>
#include <map>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "runner/run/human_labels.h"
#include "runner/suite/suite.h"

namespace plumb {

/// Bootstrap settings of every calibration record (recorded in it).
inline constexpr int kCalibrationResamples = 10000;
inline constexpr uint64_t kCalibrationSeed = 20261201;

/// DIR/calibration/NAME.json, DIR the suite file's directory.
std::string CalibrationRecordPath(const std::string& suite_path, const std::string& grader);

/// "plumb calibrate SUITE --grader NAME", the command a refusal names.
std::string CalibrateCommandLine(const std::string& suite_path, const std::string& grader);

/// The grade at or above which an answer passes, on the 0..1 grade scale: the grade's case_pass
/// minimum when case_pass names it, else 0.5.
double CalibrationPassAt(const Suite& suite, const GraderConfig& grader);

/// One labelled answer with the grader's grades on it.
struct GradedLabel {
  const HumanLabel* label = nullptr;
  /// The grade of each calibration repeat (0..1), round 0 first; empty when the grader failed.
  std::vector<double> rounds;
  std::string reason;  // the grader's reason in round 0, or why it failed
};

struct CalibrationInputs {
  const Suite* suite = nullptr;
  const GraderConfig* grader = nullptr;
  std::string identity;
  const HumanLabels* labels = nullptr;
  std::vector<GradedLabel> graded;  // one per labelled answer, in file order
  int repeat = 1;                   // --repeat K
  std::string created_at;           // UTC, ISO 8601
};

/// The calibration record (calibration/NAME.json) for `in`: n, base rate, grader pass rate,
/// agreement and kappa with bootstrap intervals, sensitivity and specificity with Wilson
/// intervals, the 2x2 table, Spearman's rho and the mean absolute difference for numeric
/// scales, self-consistency with repeat >= 2, and every disagreement, worst first (the largest
/// |grade - label|; of equals, answers the grader passed and the person failed first, then by
/// line). Answers the grader failed on are listed apart and left out of the statistics.
nlohmann::json CalibrationRecordJson(const CalibrationInputs& in);

/// Whether a grader's grade may gate, from its record.
struct CalibrationStatus {
  enum class State { kMissing, kUnreadable, kStale, kTooFewLabels, kKappaTooLow, kCalibrated };
  State state = State::kMissing;
  std::string record_path;
  nlohmann::json record;  // null unless read
  /// Why the grade may not gate, in a few words after the grade's name ("has no calibration
  /// record (suites/calibration/correctness.json)"); empty when it may.
  std::string why_not;
  bool AllowsGate() const { return state == State::kCalibrated; }
  /// "calibrated", "uncalibrated" (missing or unreadable), "stale" or "below the bar".
  std::string Word() const;
};

/// Reads the record for `grader` of the suite at `suite_path` and judges it against the grader's
/// current `identity` and its min_labels and min_kappa.
CalibrationStatus AssessCalibration(const std::string& suite_path, const GraderConfig& grader,
                                    const std::string& identity);

/// Every grader's status (identities from the suite's pipelines), by grader name.
std::map<std::string, CalibrationStatus> AssessSuiteCalibrations(const Suite& suite);

/// run.json's grading.graders.NAME.calibration: {"status", "gate", "record", "n", "base_rate",
/// "kappa", "kappa_interval", "min_labels", "min_kappa", "why_not"}.
nlohmann::json CalibrationSummary(const CalibrationStatus& status, const GraderConfig& grader);

/// One sentence per grade metric that the suite (floors, tag floors, case_pass, correct_from) or
/// `extra_gates` (drift --gate ids) gates on while its grader's status does not allow it, each
/// naming where it stands and the command that calibrates it. Empty: every gate is allowed.
std::vector<std::string> UncalibratedGates(const Suite& suite,
                                           const std::map<std::string, CalibrationStatus>& statuses,
                                           const std::vector<std::string>& extra_gates = {});

/// The words shown beside a grade metric in the summary and the reports, from run.json's
/// grading member: "kappa 0.72 [0.61, 0.83], base rate 0.45 (n 88)", or "uncalibrated", "stale"
/// or "below the bar: kappa ..." with kappa and base rate when known. By metric id
/// ("grade.NAME"); empty when the run has no graders.
std::map<std::string, std::string> GradeCalibrationNotes(const nlohmann::json& run_record);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_CALIBRATION_H_
