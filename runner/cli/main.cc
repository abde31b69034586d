// plumb: the command-line entry point. Parses arguments with CLI11 and hands each command its
// plain options struct; every command returns the process exit code (SPEC §8).

#include <malloc.h>

#include <CLI/CLI.hpp>
#include <cstdio>
#include <string>
#include <vector>

#include "runner/base/interrupt.h"
#include "runner/base/report_stdout.h"
#include "runner/base/terminal_palette.h"
#include "runner/cli/calibrate_command.h"
#include "runner/cli/check_command.h"
#include "runner/cli/compare_command.h"
#include "runner/cli/drift_command.h"
#include "runner/cli/grade_command.h"
#include "runner/cli/help_text.h"
#include "runner/cli/label_command.h"
#include "runner/cli/merge_command.h"
#include "runner/cli/parse_failure.h"
#include "runner/cli/report_command.h"
#include "runner/cli/run_command.h"
#include "runner/cli/run_outputs.h"
#include "runner/cli/score_command.h"
#include "runner/cli/shell_completion.h"
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
void AddOutputOptions(CLI::App* command, plumb::OutputOptions* outputs) {
  command->add_option("--html", outputs->html, "Write the self-contained HTML report to FILE");
  command->add_option("--junit", outputs->junit,
                      "Write JUnit XML (a testcase per case, floor and gated metric) to FILE");
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
  CLI::App app{"plumb: offline evaluation and regression runner for document-grounded QA", "plumb"};
  app.set_version_flag("--version", std::string("plumb ") + PLUMB_VERSION);
  app.require_subcommand(1);
  // Options of plumb itself (--color) may also follow the command: `plumb run --color never`.
  app.fallthrough();
  std::string colour = "auto";
  app.add_option("--color", colour,
                 "Colour in terminal output: auto (a terminal, no NO_COLOR, "
                 "TERM not dumb), always or never")
      ->check(plumb::OneOf({"auto", "always", "never"}));

  plumb::RunOptions run;
  std::vector<std::string> run_labels;
  std::string shard;
  CLI::App* run_cmd = app.add_subcommand("run", "Run a suite against one or more pipelines");
  run_cmd->add_option("SUITE", run.suite_path, "Suite file (YAML)")->required();
  run_cmd->add_option("--pipeline", run.pipelines,
                      "Pipeline to run (repeatable; default: the suite's first)");
  run_cmd->add_option("--pipelines", run.pipelines_file,
                      "YAML file whose `pipelines:` replace the suite's");
  run_cmd->add_option("-o,--out", run.out_dir,
                      "Run directory (with several pipelines: one subdirectory each)");
  run_cmd
      ->add_option("-j,--jobs", run.jobs, "Concurrent calls (default: the pipeline's jobs, or 1)")
      ->check(plumb::AtLeast(1));
  run_cmd->add_option("--repeat", run.repeat, "Send each case K times")->check(plumb::AtLeast(1));
  CLI::Option* resume = run_cmd->add_flag("--resume", run.resume,
                                          "Continue an interrupted run in the same directory");
  run_cmd
      ->add_flag("--overwrite", run.overwrite,
                 "Replace a finished run in --out (refused without it)")
      ->excludes(resume);
  run_cmd->add_option("--tag", run.selection.tags, "Only cases with this tag (repeatable)");
  run_cmd->add_option("--case", run.selection.id_globs, "Only cases whose id matches (glob)");
  run_cmd->add_option("--limit", run.selection.limit, "At most N cases")->check(plumb::AtLeast(0));
  run_cmd->add_option("--shard", shard, "Shard I of N (I/N), by a stable hash of the case id");
  run_cmd->add_option("--label", run_labels, "Label the run, KEY=VALUE (repeatable)");
  run_cmd->add_flag("--json", run.json, "Print the run record as JSON on stdout");
  run_cmd->add_option("--baseline", run.baseline_dir,
                      "Compare with this run directory (drift) and exit 1 on a regression");
  std::string run_gate;
  run_cmd->add_option("--gate", run_gate,
                      "With --baseline: metrics whose regression fails the run (as for drift)");
  run_cmd->add_option("--max-slowdown", run.max_slowdown,
                      "With --baseline and --gate latency_p95: the p95 growth allowed (0.10)");
  run_cmd->add_flag("--allow-missing", run.allow_missing,
                    "With --baseline: leave out baseline cases this run lacks instead of counting "
                    "them as lost (implied by --tag, --case, --limit and --shard)");
  run_cmd->add_option("--grade-cache", run.grade_cache.path,
                      "Verdict cache file (default: .plumb/grades.sqlite beside the suite)");
  run_cmd->add_flag("--no-grade-cache", run.grade_cache.disabled,
                    "Grade without the verdict cache (every grade is requested)");
  AddOutputOptions(run_cmd, &run.outputs);

  plumb::ScoreOptions score;
  std::vector<std::string> score_labels;
  CLI::App* score_cmd =
      app.add_subcommand("score", "Score recorded replies (JSON lines) without a pipeline");
  score_cmd->add_option("SUITE", score.suite_path, "Suite file (YAML)")->required();
  score_cmd->add_option("PREDICTIONS", score.predictions_path, "Replies, one JSON object a line")
      ->required();
  score_cmd->add_option("-o,--out", score.out_dir,
                        "Run directory (default: plumb-out/<suite>/predictions)");
  score_cmd->add_option("--label", score_labels, "Label the run, KEY=VALUE (repeatable)");
  score_cmd->add_flag("--json", score.json, "Print the run record as JSON on stdout");
  AddOutputOptions(score_cmd, &score.outputs);

  plumb::DriftCommandOptions drift;
  std::string gate;
  CLI::App* drift_cmd = app.add_subcommand(
      "drift", "Compare a candidate run with a base run; exit 1 when a gated metric regressed");
  drift_cmd->add_option("BASE_DIR", drift.base_dir, "Run directory of the base (e.g. main)")
      ->required();
  drift_cmd->add_option("CAND_DIR", drift.cand_dir, "Run directory of the candidate")->required();
  drift_cmd->add_option("--gate", gate,
                        "Metrics whose regression fails the command, comma-separated (default: "
                        "correct,token_f1,citation_recall; latency_p95 gates the p95 latency)");
  drift_cmd->add_option("--max-slowdown", drift.drift.max_slowdown,
                        "With --gate latency_p95: the p95 may grow by this fraction before its "
                        "interval counts as a regression (default 0.10)");
  drift_cmd->add_option("--min-effect", drift.drift.min_effect,
                        "Smallest |delta| a verdict may call a change (default 0.005)");
  drift_cmd->add_option("--seed", drift.drift.seed, "Bootstrap seed (default 20261201)");
  drift_cmd->add_option("--resamples", drift.drift.resamples,
                        "Bootstrap resamples (default 10000)");
  drift_cmd->add_flag("--allow-missing", drift.drift.allow_missing,
                      "Leave out base cases the candidate lacks instead of counting them as lost");
  drift_cmd->add_flag("--json", drift.json, "Print the drift report as JSON on stdout");
  AddOutputOptions(drift_cmd, &drift.outputs);

  plumb::CompareOptions compare;
  std::string compare_gate;
  CLI::App* compare_cmd = app.add_subcommand(
      "compare",
      "Compare two or more runs of one suite: figures, verdicts against the first, a chart");
  compare_cmd
      ->add_option("RUN_DIR", compare.run_dirs,
                   "Run directories (two or more; the first is the reference of the verdicts)")
      ->required();
  compare_cmd->add_option("--gate", compare_gate,
                          "Metrics whose regression against the first run fails the command, "
                          "comma-separated (default: correct,token_f1,citation_recall)");
  compare_cmd->add_option("--min-effect", compare.drift.min_effect,
                          "Smallest |delta| a verdict may call a change (default 0.005)");
  compare_cmd->add_option("--seed", compare.drift.seed, "Bootstrap seed (default 20261201)");
  compare_cmd->add_option("--resamples", compare.drift.resamples,
                          "Bootstrap resamples (default 10000)");
  compare_cmd->add_flag("--allow-missing", compare.drift.allow_missing,
                        "Leave out cases of the first run a later run lacks instead of counting "
                        "them as lost");
  compare_cmd->add_flag("--json", compare.json, "Print the comparison as JSON on stdout");
  compare_cmd->add_option("--html", compare.html,
                          "Write the self-contained HTML page with the chart to FILE");
  compare_cmd->add_option("--markdown", compare.markdown, "Write a Markdown summary to FILE");

  plumb::ReportOptions report;
  CLI::App* report_cmd =
      app.add_subcommand("report", "Re-render a stored run's summary and report files");
  report_cmd->add_option("RUN_DIR", report.run_dir, "Run directory")->required();
  report_cmd->add_flag("--json", report.json, "Print the run record as JSON on stdout");
  AddOutputOptions(report_cmd, &report.outputs);

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
  merge_cmd->add_option("-o,--out", merge.out_dir, "Directory of the merged run")->required();
  merge_cmd->add_option("--label", merge_labels,
                        "Label the merged run, KEY=VALUE (repeatable; over the shards' labels)");
  merge_cmd->add_flag("--json", merge.json, "Print the merged run record as JSON on stdout");

  plumb::GradeOptions grade;
  CLI::App* grade_cmd = app.add_subcommand(
      "grade", "Grade a stored run with the suite's graders; the pipeline is not called");
  grade_cmd->add_option("RUN_DIR", grade.run_dir, "Run directory")->required();
  grade_cmd->add_option("--grader", grade.graders, "Grader to run (repeatable; default: all)");
  grade_cmd->add_option("--suite", grade.suite_path,
                        "Suite file (default: the one the run recorded)");
  grade_cmd->add_option("--pipelines", grade.pipelines_file,
                        "YAML file whose `pipelines:` replace the suite's");
  grade_cmd->add_option("--grade-cache", grade.cache.path,
                        "Verdict cache file (default: .plumb/grades.sqlite beside the suite)");
  grade_cmd->add_flag("--no-grade-cache", grade.cache.disabled,
                      "Grade without the verdict cache (every grade is requested)");
  grade_cmd->add_flag("--json", grade.json, "Print the run record as JSON on stdout");

  plumb::LabelOptions label;
  CLI::App* label_cmd = app.add_subcommand(
      "label", "Write a blind labelling sheet (JSONL) from a stored run, for plumb calibrate");
  label_cmd->add_option("RUN_DIR", label.run_dir, "Run directory")->required();
  label_cmd->add_option("-o,--out", label.out_path, "The sheet to write (a new file)")->required();
  label_cmd
      ->add_option("--sample", label.sample,
                   "Draw N answers, stratified by the grader's verdict and tag (default: all)")
      ->check(plumb::AtLeast(1));
  label_cmd->add_option("--seed", label.seed, "Seed of the sample and of the sheet's order");
  label_cmd->add_option("--grader", label.grader,
                        "Grader whose verdicts stratify the sample (default: the first)");
  label_cmd->add_option("--suite", label.suite_path,
                        "Suite file (default: the one the run recorded)");

  plumb::CalibrateOptions calibrate;
  CLI::App* calibrate_cmd = app.add_subcommand(
      "calibrate", "Check a grader against human labels; write calibration/NAME.json");
  calibrate_cmd->add_option("SUITE", calibrate.suite_path, "Suite file (YAML)")->required();
  calibrate_cmd->add_option("--grader", calibrate.grader, "The grader to calibrate")->required();
  calibrate_cmd->add_option("--labels", calibrate.labels_path,
                            "Human labels (JSONL; default: the grader's labels: file)");
  calibrate_cmd
      ->add_option("--repeat", calibrate.repeat,
                   "Grade every answer K times and report self-consistency")
      ->check(plumb::AtLeast(1));
  calibrate_cmd->add_option("--pipelines", calibrate.pipelines_file,
                            "YAML file whose `pipelines:` replace the suite's");
  calibrate_cmd->add_option("--grade-cache", calibrate.cache.path,
                            "Verdict cache file (default: .plumb/grades.sqlite beside the suite)");
  calibrate_cmd->add_flag("--no-grade-cache", calibrate.cache.disabled,
                          "Grade without the verdict cache (every grade is requested)");
  calibrate_cmd->add_flag("--json", calibrate.json, "Print the calibration record as JSON");

  std::string help_topic;
  CLI::App* help_cmd = app.add_subcommand("help", "Describe a command: its options, an example");
  help_cmd->add_option("COMMAND", help_topic, "The command to describe (default: all)");
  std::string shell;
  CLI::App* completion_cmd =
      app.add_subcommand("completion", "Print the shell completion script for bash or zsh");
  completion_cmd->add_option("SHELL", shell, "bash or zsh")
      ->required()
      ->check(plumb::OneOf({"bash", "zsh"}));
  // The man page the build installs (runner/CMakeLists.txt); hidden: not a user's command.
  CLI::App* man_cmd = app.add_subcommand("man-page", "Print the man page (troff)")->group("");
  plumb::ApplyHelpConventions(&app);

  const std::vector<std::string> args(argv + 1, argv + argc);
  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    if (e.get_exit_code() == 0) return app.exit(e);  // --help, --version
    std::fprintf(stderr, "%s\n", plumb::ExplainParseFailure(app, args, e).c_str());
    return plumb::kExitUsage;
  }
  plumb::SetColourChoice(colour == "always"  ? plumb::ColourChoice::kAlways
                         : colour == "never" ? plumb::ColourChoice::kNever
                                             : plumb::ColourChoice::kAuto);

  if (*help_cmd) {
    if (help_topic.empty()) {
      std::fputs(app.help().c_str(), stdout);
      return 0;
    }
    for (CLI::App* command :
         app.get_subcommands([](CLI::App* c) { return !c->get_group().empty(); })) {
      if (command->get_name() == help_topic) {
        std::fputs(command->help("plumb").c_str(), stdout);
        return 0;
      }
    }
    CLI::ExtrasError unknown("help", std::vector<std::string>{help_topic});
    std::fprintf(stderr, "%s\n", plumb::ExplainParseFailure(app, {help_topic}, unknown).c_str());
    return plumb::kExitUsage;
  }
  if (*completion_cmd) {
    std::fputs((shell == "zsh" ? plumb::ZshCompletion(app) : plumb::BashCompletion(app)).c_str(),
               stdout);
    return 0;
  }
  if (*grade_cmd) return plumb::GradeCommand(grade);
  if (*label_cmd) return plumb::LabelCommand(label);
  if (*calibrate_cmd) return plumb::CalibrateCommand(calibrate);
  if (*man_cmd) {
    std::fputs(plumb::ManPage(app, PLUMB_VERSION).c_str(), stdout);
    return 0;
  }

  // "-" sends a report file to stdout; then only that report may use it, and the summary
  // table goes to stderr (runner/base/report_stdout.h).
  const plumb::OutputOptions compare_outputs{compare.html, "", compare.markdown};
  for (const auto& [outputs, json] :
       {std::pair<const plumb::OutputOptions*, bool>{&run.outputs, run.json},
        {&score.outputs, score.json},
        {&drift.outputs, drift.json},
        {&compare_outputs, compare.json},
        {&report.outputs, report.json}}) {
    const int to_stdout = (outputs->html == "-") + (outputs->junit == "-") +
                          (outputs->markdown == "-") + (json ? 1 : 0);
    if (to_stdout > 1) {
      std::fprintf(stderr,
                   "plumb: only one of --json, --html -, --junit - and --markdown - can write "
                   "to standard output; give the others a file name\n");
      return plumb::kExitUsage;
    }
    if (to_stdout == 1 && !json) {
      std::string error;
      if (!plumb::ReserveStdoutForReport(&error)) {
        std::fprintf(stderr, "plumb: %s\n", error.c_str());
        return plumb::kExitUsage;
      }
    }
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
    if (!run_gate.empty()) {
      std::string error;
      if (!plumb::ParseGate(run_gate, &run.gate, &error)) {
        std::fprintf(stderr, "plumb: %s\n", error.c_str());
        return plumb::kExitUsage;
      }
    }
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
  if (*compare_cmd) {
    std::string error;
    if (!compare_gate.empty() && !plumb::ParseGate(compare_gate, &compare.drift.gate, &error)) {
      std::fprintf(stderr, "plumb: %s\n", error.c_str());
      return plumb::kExitUsage;
    }
    compare.colour = plumb::UseColour(stdout);
    return plumb::CompareCommand(compare);
  }
  if (*report_cmd) return plumb::ReportCommand(report);
  if (*merge_cmd) {
    if (!ParseLabels(merge_labels, &merge.labels)) return plumb::kExitUsage;
    return plumb::MergeCommand(merge);
  }
  return plumb::kExitUsage;
}
