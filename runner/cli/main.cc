// plumb: the command-line entry point. Parses arguments with CLI11 and hands each command its
// plain options struct; every command returns the process exit code (SPEC §8).

#include <malloc.h>

#include <CLI/CLI.hpp>
#include <cstdio>
#include <string>
#include <vector>

#include "runner/base/interrupt.h"
#include "runner/cli/check_command.h"
#include "runner/cli/drift_command.h"
#include "runner/cli/merge_command.h"
#include "runner/cli/report_command.h"
#include "runner/cli/run_command.h"
#include "runner/cli/run_outputs.h"
#include "runner/cli/score_command.h"
#include "runner/report/summary_table.h"
#include "runner/run/exit_code.h"
#include "runner/run/run_record.h"

namespace {

bool ParseLabels(const std::vector<std::string>& raw, std::map<std::string, std::string>* out) {
  for (const std::string& text : raw) {
    std::string key, value, error;
    if (!plumb::ParseLabel(text, &key, &value, &error)) {
      std::fprintf(stderr, "plumb: %s\n", error.c_str());
      return false;
    }
    (*out)[key] = value;
  }
  return true;
}

/// --html, --junit and --markdown, the report files of SPEC §10 (run_outputs.h).
void AddOutputOptions(CLI::App* command, plumb::OutputOptions* outputs, bool junit) {
  command->add_option("--html", outputs->html, "Write the self-contained HTML report to FILE");
  if (junit) {
    command->add_option("--junit", outputs->junit,
                        "Write JUnit XML (one testcase per case) to FILE");
  }
  command->add_option("--markdown", outputs->markdown,
                      "Write a Markdown summary for a pull-request comment to FILE");
}

}  // namespace

int main(int argc, char** argv) {
  // First of all: a SIGINT or SIGTERM at any moment ends plumb with 130 or 143, not by the signal.
  plumb::InstallInterruptHandlers();
  // Loading and scoring a large suite allocates steadily on several threads; with glibc's
  // default padding each thread's heap grows by a system call every 128 KiB (about 2,000 of
  // them for 20,000 cases). Growing by 32 MiB at a time costs address space, not memory.
  mallopt(M_TOP_PAD, 32 << 20);
  CLI::App app{"plumb: offline evaluation and regression runner for document-grounded QA"};
  app.set_version_flag("--version", std::string("plumb ") + PLUMB_VERSION);
  app.require_subcommand(1);

  plumb::RunOptions run;
  std::vector<std::string> run_labels;
  std::string shard;
  CLI::App* run_cmd = app.add_subcommand("run", "Run a suite against one or more pipelines");
  run_cmd->add_option("SUITE", run.suite_path, "Suite file (YAML)")->required();
  run_cmd->add_option("--pipeline", run.pipelines,
                      "Pipeline to run (repeatable; default: the suite's first)");
  run_cmd->add_option("--pipelines", run.pipelines_file,
                      "YAML file whose `pipelines:` replace the suite's");
  run_cmd->add_option("--out", run.out_dir,
                      "Run directory (with several pipelines: one subdirectory each)");
  run_cmd->add_option("--jobs", run.jobs, "Concurrent calls (default: the pipeline's jobs, or 1)")
      ->check(CLI::PositiveNumber);
  run_cmd->add_option("--repeat", run.repeat, "Send each case K times")->check(CLI::PositiveNumber);
  run_cmd->add_flag("--resume", run.resume, "Continue an interrupted run in the same directory");
  run_cmd->add_option("--tag", run.selection.tags, "Only cases with this tag (repeatable)");
  run_cmd->add_option("--case", run.selection.id_globs, "Only cases whose id matches (glob)");
  run_cmd->add_option("--limit", run.selection.limit, "At most N cases")
      ->check(CLI::NonNegativeNumber);
  run_cmd->add_option("--shard", shard, "Shard I of N (I/N), by a stable hash of the case id");
  run_cmd->add_option("--label", run_labels, "Label the run, KEY=VALUE (repeatable)");
  run_cmd->add_flag("--json", run.json, "Print the run record as JSON on stdout");
  run_cmd->add_option("--baseline", run.baseline_dir,
                      "Compare with this run directory (drift) and exit 1 on a regression");
  AddOutputOptions(run_cmd, &run.outputs, /*junit=*/true);

  plumb::ScoreOptions score;
  std::vector<std::string> score_labels;
  CLI::App* score_cmd =
      app.add_subcommand("score", "Score recorded replies (JSON lines) without a pipeline");
  score_cmd->add_option("SUITE", score.suite_path, "Suite file (YAML)")->required();
  score_cmd->add_option("PREDICTIONS", score.predictions_path, "Replies, one JSON object a line")
      ->required();
  score_cmd->add_option("--out", score.out_dir,
                        "Run directory (default: plumb-out/<suite>/predictions)");
  score_cmd->add_option("--label", score_labels, "Label the run, KEY=VALUE (repeatable)");
  score_cmd->add_flag("--json", score.json, "Print the run record as JSON on stdout");
  AddOutputOptions(score_cmd, &score.outputs, /*junit=*/true);

  plumb::DriftCommandOptions drift;
  std::string gate;
  CLI::App* drift_cmd = app.add_subcommand(
      "drift", "Compare a candidate run with a base run; exit 1 when a gated metric regressed");
  drift_cmd->add_option("BASE_DIR", drift.base_dir, "Run directory of the base (e.g. main)")
      ->required();
  drift_cmd->add_option("CAND_DIR", drift.cand_dir, "Run directory of the candidate")->required();
  drift_cmd->add_option("--gate", gate,
                        "Metrics whose regression fails the command, comma-separated (default: "
                        "correct,token_f1,citation_recall)");
  drift_cmd->add_option("--min-effect", drift.drift.min_effect,
                        "Smallest |delta| a verdict may call a change (default 0.005)");
  drift_cmd->add_option("--seed", drift.drift.seed, "Bootstrap seed (default 20261201)");
  drift_cmd->add_option("--resamples", drift.drift.resamples,
                        "Bootstrap resamples (default 10000)");
  drift_cmd->add_flag("--json", drift.json, "Print the drift report as JSON on stdout");
  AddOutputOptions(drift_cmd, &drift.outputs, /*junit=*/false);

  plumb::ReportOptions report;
  CLI::App* report_cmd =
      app.add_subcommand("report", "Re-render a stored run's summary and report files");
  report_cmd->add_option("RUN_DIR", report.run_dir, "Run directory")->required();
  report_cmd->add_flag("--json", report.json, "Print the run record as JSON on stdout");
  AddOutputOptions(report_cmd, &report.outputs, /*junit=*/true);

  plumb::CheckOptions check;
  CLI::App* check_cmd =
      app.add_subcommand("check", "Validate a suite: keys, quotes, offsets; runs nothing");
  check_cmd->add_option("SUITE", check.suite_path, "Suite file (YAML)")->required();
  check_cmd->add_option("--pipelines", check.pipelines_file,
                        "YAML file whose `pipelines:` replace the suite's");
  check_cmd->add_option("--since", check.since_run_dir,
                        "Run directory whose recorded gold spans to compare (stale gold)");
  check_cmd->add_flag("--json", check.json, "Print the result as JSON on stdout");

  plumb::MergeOptions merge;
  std::vector<std::string> merge_labels;
  CLI::App* merge_cmd = app.add_subcommand(
      "merge", "Merge the run directories of one run's shards (--shard I/N) into one run");
  merge_cmd->add_option("RUN_DIR", merge.run_dirs, "Every shard's run directory")->required();
  merge_cmd->add_option("--out", merge.out_dir, "Directory of the merged run")->required();
  merge_cmd->add_option("--label", merge_labels,
                        "Label the merged run, KEY=VALUE (repeatable; over the shards' labels)");
  merge_cmd->add_flag("--json", merge.json, "Print the merged run record as JSON on stdout");

  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    const int code = app.exit(e);
    return code == 0 ? 0 : plumb::kExitUsage;
  }

  if (*run_cmd) {
    if (!shard.empty()) {
      std::string error;
      if (!plumb::ParseShard(shard, &run.selection.shard, &error)) {
        std::fprintf(stderr, "plumb: %s\n", error.c_str());
        return plumb::kExitUsage;
      }
    }
    if (!ParseLabels(run_labels, &run.labels)) return plumb::kExitUsage;
    return plumb::RunCommand(run);
  }
  if (*score_cmd) {
    if (!ParseLabels(score_labels, &score.labels)) return plumb::kExitUsage;
    return plumb::ScoreCommand(score);
  }
  if (*check_cmd) return plumb::CheckCommand(check);
  if (*drift_cmd) {
    std::string error;
    if (!gate.empty() && !plumb::ParseGate(gate, &drift.drift.gate, &error)) {
      std::fprintf(stderr, "plumb: %s\n", error.c_str());
      return plumb::kExitUsage;
    }
    drift.colour = plumb::UseColour(stdout);
    return plumb::DriftCommand(drift);
  }
  if (*report_cmd) return plumb::ReportCommand(report);
  if (*merge_cmd) {
    if (!ParseLabels(merge_labels, &merge.labels)) return plumb::kExitUsage;
    return plumb::MergeCommand(merge);
  }
  return plumb::kExitUsage;
}
