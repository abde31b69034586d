#ifndef PLUMB_RUNNER_RUN_HUMAN_LABELS_H_
#define PLUMB_RUNNER_RUN_HUMAN_LABELS_H_

/// A human labels file for grader calibration (`plumb calibrate`): JSONL, one labelled answer a
/// line, `{"id", "answer", "label", "by", "note"}` (the sheet `plumb label` writes has more
/// members, which are kept for the reader and ignored here, except "cited", the answer's cited
/// spans as the grader request carries them). `label` is "pass" or "fail" for a pass-fail
/// grader and a number on the grader's scale otherwise; an empty or null label is a line not
/// labelled yet and is skipped (counted). `answer` is a string, or null for an abstention.
/// Blank lines and lines starting with '#' (a header saying who labelled what) are skipped.

#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "runner/suite/suite.h"

namespace plumb {

struct HumanLabel {
  int line = 0;  // 1-based line in the file
  std::string id;
  nlohmann::json answer;  // string, or null: the pipeline abstained
  nlohmann::json cited = nlohmann::json::array();
  /// The person's label on the 0..1 grade scale (pass 1, fail 0; 1-5 mapped to (x - 1) / 4).
  double grade = 0;
  /// The label as written ("pass", "fail", or the number on the grader's scale).
  nlohmann::json written;
  std::string by;
  std::string note;
};

struct HumanLabels {
  std::string path;
  std::string sha256;  // of the file's bytes
  std::vector<HumanLabel> labelled;
  int64_t unlabelled = 0;  // lines whose label is still empty
  std::vector<std::string> warnings;
};

/// Reads `path` for a grader of `scale`. False with every problem, one a line as
/// "FILE:LINE:COLUMN: error: ..." (a bad JSON line, a missing id or answer, an id the suite does
/// not have, a label off the scale, the same id and answer labelled twice) in *errors.
bool ReadHumanLabels(const std::string& path, const Suite& suite, GradeScale scale,
                     HumanLabels* out, std::vector<std::string>* errors);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_HUMAN_LABELS_H_
