#ifndef PLUMB_RUNNER_CLI_LABEL_COMMAND_H_
#define PLUMB_RUNNER_CLI_LABEL_COMMAND_H_

/// `plumb label RUN_DIR --out FILE [--sample N --seed S]`: writes a blind labelling sheet from a
/// stored run, for grader calibration. One JSONL line per answer: {"id", "answer", "label": "",
/// "by": "", "note": "", "question", "gold", "cited", "tags"}, where a person fills in `label`
/// (and `by`, `note`) by reading the answer against the documents. No grade is shown, and the
/// lines come in a seeded random order, so the sheet does not tell what the grader said. With
/// --sample N, N answers are drawn stratified by the grader's verdict and the case's first tag
/// (proportional allocation, every stratum at least one answer while N allows).

#include <cstdint>
#include <string>

namespace plumb {

struct LabelOptions {
  std::string run_dir;
  std::string out_path;    // --out FILE; an existing file is refused (it may hold labels)
  std::string suite_path;  // --suite; empty: the path run.json records
  std::string grader;      // --grader NAME: whose verdicts stratify; empty: the first graded
  int64_t sample = 0;      // --sample N; 0: every answer
  uint64_t seed = 1;       // --seed S
};

int LabelCommand(const LabelOptions& options);

}  // namespace plumb

#endif  // PLUMB_RUNNER_CLI_LABEL_COMMAND_H_
