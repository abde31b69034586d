#ifndef PLUMB_RUNNER_CLI_GRADE_COMMAND_H_
#define PLUMB_RUNNER_CLI_GRADE_COMMAND_H_

/// `plumb grade RUN_DIR [--grader NAME]...`: grades (or re-grades) a stored run with the
/// suite's graders, with no call to the pipeline under test. The graders come from the suite
/// file the run recorded (or --suite); every journal record gains the grade metrics, and the
/// journal and run.json are rewritten atomically (each old file stays until its new one is
/// complete). Grades come from the verdict cache when it has them, so an interrupted grade
/// resumes where it stopped, and a warm cache makes no grader call at all.

#include <string>
#include <vector>

#include "runner/cli/grader_session.h"

namespace plumb {

struct GradeOptions {
  std::string run_dir;
  std::string suite_path;            // --suite; empty: the path run.json records
  std::string pipelines_file;        // --pipelines
  std::vector<std::string> graders;  // --grader NAME...; empty: all of the suite's
  GradeCacheOptions cache;           // --grade-cache / --no-grade-cache
  bool json = false;
};

int GradeCommand(const GradeOptions& options);

}  // namespace plumb

#endif  // PLUMB_RUNNER_CLI_GRADE_COMMAND_H_
