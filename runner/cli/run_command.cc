#include "runner/cli/run_command.h"

#include <sys/stat.h>
#include <unistd.h>

#include <atomic>
#include <cerrno>
#include <chrono>
#include <cstdio>
#include <cstring>
#include <map>
#include <memory>
#include <set>

#include "runner/base/atomic_file.h"
#include "runner/base/interrupt.h"
#include "runner/base/keep_until_exit.h"
#include "runner/cli/drift_command.h"
#include "runner/cli/run_summary.h"
#include "runner/pipeline/adapter_factory.h"
#include "runner/pipeline/child_process.h"
#include "runner/pipeline/reply_mapping.h"
#include "runner/report/summary_table.h"
#include "runner/run/grading.h"
#include "runner/run/prepared_suite.h"
#include "runner/run/run_journal.h"
#include "runner/run/run_origin.h"
#include "runner/run/run_reader.h"
#include "runner/run/scheduler.h"
#include "runner/run/update_phases.h"

namespace plumb {
namespace {

const PipelineConfig* FindPipeline(const Suite& suite, const std::string& name) {
  for (const PipelineConfig& p : suite.pipelines) {
    if (p.name == name) return &p;
  }
  return nullptr;
}

std::string PipelineNames(const Suite& suite) {
  std::string names;
  for (const PipelineConfig& p : suite.pipelines) names += (names.empty() ? "" : ", ") + p.name;
  return names.empty() ? "none" : names;
}

/// Outcomes of the items a previous, interrupted run finished, and the items still to do.
struct ResumeState {
  std::vector<CaseOutcome> outcomes;
  std::set<std::pair<std::string, int>> finished;
  long long keep_bytes = -1;
};

/// The number of turns of the session whose turn is suite.cases[index].
size_t SessionLength(const Suite& suite, size_t index) {
  size_t first = index - static_cast<size_t>(suite.cases[index].turn - 1);
  size_t end = first + 1;
  while (end < suite.cases.size() && suite.cases[end].turn > 1 &&
         suite.cases[end].session == suite.cases[first].session) {
    ++end;
  }
  return end - first;
}

bool LoadResumeState(const std::string& journal_path, const Suite& suite,
                     const std::vector<size_t>& selected, ResumeState* state, std::string* error) {
  JournalContents contents;
  if (!ReadJournal(journal_path, &contents, error, /*keep_lines=*/true)) return false;
  for (const std::string& w : contents.warnings) std::fprintf(stderr, "warning: %s\n", w.c_str());
  std::vector<bool> is_selected(suite.cases.size(), false);
  for (size_t i : selected) is_selected[i] = true;
  // A session is one unit (issue 22): kept only when the journal has every one of its turns
  // for that repeat. The turns of one that is not are cut off the journal with everything
  // after the first of them (a session is written in one piece, so such a piece is the torn
  // end of the file) and run again from turn 1.
  std::map<std::pair<std::string, int>, size_t> turns_seen;  // (session, repeat) -> turns
  std::vector<size_t> indices(contents.records.size(), CaseIdIndex::kAbsent);
  std::vector<CaseRecord> records(contents.records.size());
  for (size_t r = 0; r < contents.records.size(); ++r) {
    std::string record_error;
    if (!CaseRecordFromJson(contents.records[r], &records[r], &record_error)) {
      *error = journal_path + ": " + record_error;
      return false;
    }
    indices[r] = suite.case_ids.Find(suite.cases, records[r].id);
    if (indices[r] != CaseIdIndex::kAbsent && suite.cases[indices[r]].turn > 0) {
      ++turns_seen[{suite.cases[indices[r]].session, records[r].repeat}];
    }
  }
  size_t keep_records = records.size();
  long long keep_bytes = 0;
  for (size_t r = 0; r < records.size(); ++r) {
    const size_t index = indices[r];
    if (index != CaseIdIndex::kAbsent && suite.cases[index].turn > 0 &&
        turns_seen[{suite.cases[index].session, records[r].repeat}] !=
            SessionLength(suite, index)) {
      keep_records = r;
      std::fprintf(stderr,
                   "warning: %s: session '%s' (repeat %d) is not whole in the journal; it runs "
                   "again from turn 1\n",
                   journal_path.c_str(), suite.cases[index].session.c_str(), records[r].repeat);
      break;
    }
    keep_bytes += static_cast<long long>(contents.lines[r].size()) + 1;
  }
  for (size_t r = 0; r < keep_records; ++r) {
    const size_t index = indices[r];
    const CaseRecord& record = records[r];
    // Not in the suite, or not selected this time: kept in the journal as is.
    if (index == CaseIdIndex::kAbsent || !is_selected[index]) continue;
    if (!state->finished.insert({record.id, record.repeat}).second) continue;
    CaseOutcome outcome = OutcomeOf(record, index);
    outcome.scores.abstention_case = suite.cases[index].answers.empty();
    state->outcomes.push_back(std::move(outcome));
  }
  state->keep_bytes = keep_records == records.size() ? contents.valid_bytes : keep_bytes;
  return true;
}

RunOrigin OriginOf(const PreparedSuite& prepared, const PipelineConfig& pipeline) {
  return RunOrigin{prepared.suite.suite_hash, prepared.corpus_fingerprint, pipeline.name,
                   pipeline.redacted_config};
}

/// Before anything runs: --resume must continue the run its directory holds, not another
/// pipeline's, suite's or corpus's; and an explicit --out must not replace a finished run
/// unless --overwrite says so. False with the sentence to print.
bool CheckRunDirectory(const RunOptions& options, const PreparedSuite& prepared,
                       const PipelineConfig& pipeline, bool several, std::string* error) {
  const std::string dir =
      RunDirectory(options.out_dir, prepared.suite.name, pipeline.name, several);
  if (options.resume) {
    RunOrigin recorded;
    bool found = false;
    if (!ReadRecordedOrigin(dir, &recorded, &found, error)) return false;
    if (!found) {
      if (::access((dir + "/cases.jsonl").c_str(), F_OK) == 0) {
        std::fprintf(stderr,
                     "plumb: warning: %s records no run (no %s or run.json, as before plumb "
                     "wrote them); resuming its journal without checking that it is this "
                     "pipeline's, suite's and corpus's\n",
                     dir.c_str(), kRunStartFile);
      }
      return true;
    }
    const std::vector<std::string> differences =
        OriginDifferences(recorded, OriginOf(prepared, pipeline));
    if (differences.empty()) return true;
    std::string list;
    for (const std::string& d : differences) list += (list.empty() ? "" : "; ") + d;
    *error = "--resume: " + dir + " holds a run of another " +
             (differences.size() == 1 ? "setting" : "set of settings") + ": " + list +
             ". Resume with the settings it was started with, or start over with another "
             "--out (or this one without --resume" +
             (::access((dir + "/run.json").c_str(), F_OK) == 0 ? " and with --overwrite" : "") +
             ")";
    return false;
  }
  if (!options.out_dir.empty() && !options.overwrite &&
      ::access((dir + "/run.json").c_str(), F_OK) == 0) {
    *error = "--out: " + dir +
             " holds a finished run (run.json); pass --overwrite to replace it, --resume to "
             "continue it, or choose another --out";
    return false;
  }
  return true;
}

struct PipelineRun {
  int code = kExitOk;
  std::string reason;     // the verdict's sentence
  nlohmann::json record;  // with --json only: run.json, parsed
};

int RunOnePipeline(const RunOptions& options, PreparedSuite& prepared,
                   const PipelineConfig& pipeline, const std::vector<size_t>& selected,
                   bool several, PipelineRun* result) {
  const Suite& suite = prepared.suite;
  const std::string dir = RunDirectory(options.out_dir, suite.name, pipeline.name, several);
  std::string error;
  if (!MakeDirectories(dir, &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return kExitUsage;
  }
  ReportStaleTempFiles(dir);
  const std::string journal_path = dir + "/cases.jsonl";
  ResumeState resume;
  if (options.resume && !LoadResumeState(journal_path, suite, selected, &resume, &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return kExitUsage;
  }
  std::vector<WorkItem> items;
  for (size_t k = 0; k < selected.size();) {
    // A session's turns go in turn order within each repeat, so the scheduler sees each
    // (session, repeat) as one run of consecutive items (its unit of work).
    size_t end = k + 1;
    const Case& first = suite.cases[selected[k]];
    while (first.turn > 0 && end < selected.size() && suite.cases[selected[end]].turn > 1 &&
           suite.cases[selected[end]].session == first.session) {
      ++end;
    }
    for (int repeat = 0; repeat < options.repeat; ++repeat) {
      for (size_t t = k; t < end; ++t) {
        if (resume.finished.count({suite.cases[selected[t]].id, repeat})) continue;
        items.push_back({selected[t], repeat});
      }
    }
    k = end;
  }

  std::unique_ptr<ReplyMapping> reply = ReplyMapping::Create(pipeline.reply, &error);
  if (reply == nullptr) {
    std::fprintf(stderr, "%s: error: pipeline '%s': %s\n", suite.path.c_str(),
                 pipeline.name.c_str(), error.c_str());
    return kExitUsage;
  }
  const int jobs = options.jobs > 0 ? options.jobs : (pipeline.jobs > 0 ? pipeline.jobs : 1);
  std::unique_ptr<Adapter> adapter = CreateAdapter(pipeline, jobs, &error);
  if (adapter == nullptr) {
    std::fprintf(stderr, "%s: error: %s\n", suite.path.c_str(), error.c_str());
    return kExitUsage;
  }
  // The graders start before any case is sent: a grader that is the pipeline under test, or a
  // cache that cannot be used, stops the run before it costs anything.
  GraderSession graders;
  if (!suite.graders.empty() && !StartGraders(prepared, {}, options.grade_cache, pipeline.name,
                                              pipeline.redacted_config, &graders, &error)) {
    std::fprintf(stderr, "%s: error: %s\n", suite.path.c_str(), error.c_str());
    return kExitUsage;
  }
  std::unique_ptr<RunJournal> journal = RunJournal::Open(journal_path, resume.keep_bytes, &error);
  if (journal == nullptr) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return kExitUsage;
  }
  // A leftover run.json from an earlier run must not describe this one while it is running;
  // run.start.json says which run the journal belongs to, for --resume.
  std::remove((dir + "/run.json").c_str());
  if (!WriteRunStart(dir, OriginOf(prepared, pipeline), &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return kExitUsage;
  }

  RunContext context;
  context.suite = &suite;
  context.selected = selected;
  context.pipeline_name = pipeline.name;
  context.pipeline_config = pipeline.redacted_config;
  context.corpus_fingerprint = prepared.corpus_fingerprint;
  context.labels = options.labels;
  context.started_at = NowIso8601();
  context.shard = options.selection.shard;
  context.repeat = options.repeat;
  context.jobs = adapter->slots();
  context.resumed = options.resume;

  const auto start = std::chrono::steady_clock::now();
  Adapter* raw_adapter = adapter.get();
  Progress progress(pipeline.name, static_cast<int64_t>(items.size()),
                    options.progress && !items.empty(),
                    [raw_adapter] { return raw_adapter->retries_in_flight(); });
  ScheduleResult scheduled;
  // Grading runs beside the pipeline: each answer is handed to the graders as its case
  // finishes, and their calls run on the graders' own slots (GradingPass).
  // The pass outlives both interrupt watches, so it reads a flag of its own that each sets.
  std::atomic<bool> grading_stop{false};
  graders.inputs.stop = &grading_stop;
  std::unique_ptr<GradingPass> grading;
  if (!suite.graders.empty()) grading = std::make_unique<GradingPass>(graders.inputs);
  {
    InterruptWatch watch([raw_adapter, &graders, &grading_stop] {
      grading_stop = true;
      raw_adapter->Shutdown();
      graders.Shutdown();
    });
    ScheduleInputs inputs;
    inputs.suite = &suite;
    inputs.items = &items;
    inputs.adapter = raw_adapter;
    inputs.scorer = prepared.scorer.get();
    inputs.journal = journal.get();
    inputs.pipeline = &pipeline;
    inputs.reply = reply.get();
    inputs.progress = &progress;
    inputs.stop = &watch.interrupted();
    if (grading != nullptr) {
      inputs.on_journaled = [&grading](const CaseRecord& record, size_t case_index) {
        grading->Add(record, case_index);
      };
    }
    if (suite.updates.empty()) {
      scheduled = RunSchedule(inputs);
    } else {
      // Corpus updates (issue 23): the cases in phases, each update's after its refresh.
      UpdatePhaseInputs phased;
      phased.schedule = inputs;
      phased.items = &items;
      phased.run_dir = dir;
      phased.refresh_log = dir + "/refresh.jsonl";
      if (options.resume) {
        phased.recorded = ReadRefreshLog(phased.refresh_log);
      } else {
        std::remove(phased.refresh_log.c_str());
      }
      UpdatePhaseResult result = RunUpdatePhases(phased);
      scheduled = std::move(result.schedule);
      context.refreshes = std::move(result.refreshes);
    }
    adapter->Shutdown();
    // Each worker's adopted descendants died with it; what is left is a descendant that shed
    // its PLUMB_WORKER mark. plumb starts no children but pipelines, so every adopted process
    // is a pipeline's.
    KillAdoptedDescendants("");
    // A signal after the last case but before the watch ended still interrupts the run.
    scheduled.interrupted = scheduled.interrupted || watch.interrupted();
  }
  progress.Finish();
  // Once per run: a pointer the reply block names that no reply had is most likely mistyped.
  for (const ReplyMapping::Unresolved& u : reply->NeverResolved()) {
    std::fprintf(stderr,
                 "%s: warning: pipeline '%s': reply.%s '%s' resolved in none of the %lld "
                 "replies; compare it with a reply in %s\n",
                 suite.path.c_str(), pipeline.name.c_str(), u.key.c_str(), u.pointer.c_str(),
                 static_cast<long long>(reply->replies_read()), journal_path.c_str());
  }
  if (!scheduled.fatal_error.empty()) {
    std::fprintf(stderr, "plumb: %s\n", scheduled.fatal_error.c_str());
    return kExitUsage;
  }
  context.warmups = scheduled.warmups;
  std::vector<CaseOutcome> outcomes = std::move(resume.outcomes);
  for (CaseOutcome& o : scheduled.outcomes) outcomes.push_back(std::move(o));

  // The answers of a resumed journal were not handed in yet: GradeJournal adds them, waits for
  // every grade, and rewrites the journal with the grades.
  if (grading != nullptr && scheduled.interrupted) {
    // Stopped: the grades already given are stored in the cache (Finish), the journal stays
    // as the pipeline left it, and --resume grades it all again from the cache.
    GradingCounts counts;
    bool interrupted = false;
    grading->Finish(&counts, &interrupted, &error);
    graders.Shutdown();
  } else if (grading != nullptr) {
    journal.reset();  // flushes and closes: the grading pass replaces the file
    std::vector<bool> is_selected(suite.cases.size(), false);
    for (size_t i : selected) is_selected[i] = true;
    GradedJournal graded;
    bool ok = false;
    {
      InterruptWatch watch([&graders, &grading_stop] {
        grading_stop = true;
        graders.Shutdown();
      });
      ok = GradeJournal(journal_path, graders.inputs, is_selected, grading.get(), &graded, &error);
      graders.Shutdown();
      KillAdoptedDescendants("");
      scheduled.interrupted = watch.interrupted();
    }
    if (!ok) {
      std::fprintf(stderr, "plumb: %s\n", error.c_str());
      return kExitUsage;
    }
    std::fprintf(stderr, "%s\n", GradingSummaryLine(graded.counts).c_str());
    if (!graded.interrupted) {
      outcomes = std::move(graded.outcomes);
      context.grading = GradingRecord(graders.inputs, graded.counts);
    }
  }

  const double seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  FinishedRun finished;
  // With a baseline or several pipelines, RunCommand prints the one final exit line itself.
  const bool exit_line = !several && options.baseline_dir.empty();
  if (!FinishRun(context, outcomes, scheduled.interrupted, dir, options.json, seconds, &finished,
                 &error, exit_line)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return kExitUsage;
  }
  if (scheduled.interrupted) {
    std::fprintf(stderr, "plumb: %s\n", finished.verdict.reason.c_str());
  }
  // Only --json prints the record, with the drift added to it; parse it back for that alone.
  if (options.json) result->record = nlohmann::json::parse(finished.record);
  result->reason = finished.verdict.reason;
  result->code = finished.verdict.code;
  return finished.verdict.code;
}

/// The most severe of two exit codes: interrupted, then case errors, usage, floors, ok.
int Worse(int a, int b) {
  auto rank = [](int code) {
    switch (code) {
      case kExitInterrupted:
        return 4;
      case kExitCaseErrors:
        return 3;
      case kExitUsage:
        return 2;
      case kExitFloorBroken:
        return 1;
      default:
        return 0;
    }
  };
  return rank(a) >= rank(b) ? a : b;
}

/// After a finished run: its report files and, with --baseline, the drift against the baseline
/// run (printed after the run's summary, or added to the JSON record as "drift"). The drift and
/// its gate are recorded in the run directory (drift.json, and run.json's "baseline" and
/// "verdict"), so a later `plumb report` exits as this command does. Returns the pipeline's exit
/// code with the drift gate's folded in; *reason gets the sentence that goes with it.
int ReportOnRun(const RunOptions& options, const std::string& suite, const std::string& pipeline,
                bool several, int code, std::string* reason, nlohmann::json* record) {
  if (options.baseline_dir.empty() && options.outputs.empty()) return code;
  const std::string dir = RunDirectory(options.out_dir, suite, pipeline, several);
  const OutputOptions outputs =
      several ? OutputsForPipeline(options.outputs, pipeline) : options.outputs;
  LoadedRun run;
  std::string error;
  if (!LoadRun(dir, &run, &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return Worse(code, kExitUsage);
  }
  if (options.baseline_dir.empty()) {
    if (!WriteRunOutputs(run, outputs, &error)) {
      std::fprintf(stderr, "plumb: %s\n", error.c_str());
      return Worse(code, kExitUsage);
    }
    return code;
  }
  // With several pipelines the baseline mirrors --out: one run directory per pipeline.
  const std::string baseline_dir =
      several ? options.baseline_dir + "/" + pipeline : options.baseline_dir;
  LoadedRun baseline;
  if (!LoadRun(baseline_dir, &baseline, &error)) {
    std::fprintf(stderr, "plumb: --baseline: %s\n", error.c_str());
    return Worse(code, kExitUsage);
  }
  DriftCommandOptions drift;
  drift.base_dir = baseline_dir;
  drift.cand_dir = dir;
  drift.outputs = outputs;
  drift.json = options.json;
  drift.colour = UseColour(stdout);
  drift.exit_line = false;
  // A run of selected cases (--tag, --case, --limit, --shard) lacks the rest of the baseline by
  // choice: those are left out rather than counted as lost.
  const CaseSelection& s = options.selection;
  if (!options.gate.empty()) drift.drift.gate = options.gate;
  drift.drift.max_slowdown = options.max_slowdown;
  drift.drift.allow_missing = options.allow_missing || !s.tags.empty() || !s.id_globs.empty() ||
                              s.limit >= 0 || s.shard.count > 1;
  if (!options.json) std::printf("\n");
  nlohmann::json drift_json;
  const int gate = RunDrift(baseline, run, drift, &drift_json);
  if (gate == kExitUsage) return Worse(code, gate);
  const int combined = Worse(code, gate);
  const std::string gate_reason = drift_json["gate"].value("reason", std::string());
  // The gate's reason when it decides the code (it also names the candidate's broken floors);
  // the run's own when case errors or an interruption outrank it.
  if (combined == gate) *reason = gate_reason;
  RunVerdict verdict{combined, *reason};
  const nlohmann::json recorded = BaselineRecord(baseline_dir, gate, gate_reason);
  if (!WriteFileAtomically(dir + "/drift.json", drift_json.dump(2) + "\n", &error) ||
      !RecordBaselineVerdict(dir, recorded, verdict, &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return Worse(combined, kExitUsage);
  }
  if (options.json) {
    (*record)["drift"] = std::move(drift_json);
    (*record)["baseline"] = recorded;
    (*record)["verdict"] = {{"exit_code", combined}, {"reason", *reason}};
  }
  return combined;
}

}  // namespace

void ReportStaleTempFiles(const std::string& dir) {
  for (const std::string& name : RemoveStaleTempFiles(dir)) {
    std::fprintf(stderr,
                 "plumb: removed %s/%s, left by a plumb process that is no longer running\n",
                 dir.c_str(), name.c_str());
  }
}

std::string RunDirectory(const std::string& out_dir, const std::string& suite_name,
                         const std::string& pipeline, bool several) {
  if (out_dir.empty()) return "plumb-out/" + suite_name + "/" + pipeline;
  return several ? out_dir + "/" + pipeline : out_dir;
}

bool MakeDirectories(const std::string& dir, std::string* error) {
  std::string path;
  size_t pos = 0;
  while (pos != std::string::npos) {
    pos = dir.find('/', pos + 1);
    path = dir.substr(0, pos);
    if (path.empty()) continue;
    if (::mkdir(path.c_str(), 0755) != 0 && errno != EEXIST) {
      *error = "cannot create directory " + path + ": " + std::strerror(errno);
      return false;
    }
  }
  struct stat st {};
  if (::stat(dir.c_str(), &st) != 0 || !S_ISDIR(st.st_mode)) {
    *error = dir + " exists and is not a directory; choose another --out";
    return false;
  }
  return true;
}

int RunCommand(const RunOptions& options) {
  auto owned = std::make_unique<PreparedSuite>();
  PreparedSuite& prepared = *owned;
  // Only the pipelines this run starts need their variables set ("" is the suite's first).
  const std::vector<std::string> expand =
      options.pipelines.empty() ? std::vector<std::string>{""} : options.pipelines;
  if (!PrepareSuite(options.suite_path, options.pipelines_file, /*expand_env=*/true, &prepared,
                    expand)) {
    return kExitUsage;
  }
  const Suite& suite = prepared.suite;
  if (!RefuseUncalibratedGates(suite)) return kExitUsage;
  std::vector<const PipelineConfig*> pipelines;
  if (options.pipelines.empty()) {
    if (suite.pipelines.empty()) {
      std::fprintf(stderr,
                   "%s: error: the suite defines no pipelines; add a `pipelines:` block or pass "
                   "--pipelines FILE\n",
                   suite.path.c_str());
      return kExitUsage;
    }
    pipelines.push_back(&suite.pipelines.front());
  }
  for (const std::string& name : options.pipelines) {
    const PipelineConfig* p = FindPipeline(suite, name);
    if (p == nullptr) {
      std::fprintf(stderr, "plumb: --pipeline %s: no such pipeline in %s (it has: %s)\n",
                   name.c_str(), suite.path.c_str(), PipelineNames(suite).c_str());
      return kExitUsage;
    }
    pipelines.push_back(p);
  }
  const std::vector<size_t> selected = SelectCases(suite, options.selection);
  if (selected.empty()) {
    std::fprintf(stderr,
                 "plumb: no case of %s matches the selection (--tag/--case/--shard/--limit)\n",
                 suite.path.c_str());
    return kExitUsage;
  }

  const bool several = pipelines.size() > 1;
  // A baseline that is not there fails now, before any pipeline runs.
  for (const PipelineConfig* pipeline : pipelines) {
    if (options.baseline_dir.empty()) break;
    const std::string dir =
        several ? options.baseline_dir + "/" + pipeline->name : options.baseline_dir;
    if (::access((dir + "/run.json").c_str(), R_OK) != 0) {
      std::fprintf(stderr,
                   "plumb: --baseline %s: no run.json in %s; point --baseline at the run "
                   "directory of a finished run%s\n",
                   options.baseline_dir.c_str(), dir.c_str(),
                   several ? " (with several pipelines, one subdirectory per pipeline)" : "");
      return kExitUsage;
    }
  }
  for (const PipelineConfig* pipeline : pipelines) {
    std::string error;
    if (!CheckRunDirectory(options, prepared, *pipeline, several, &error)) {
      std::fprintf(stderr, "plumb: %s\n", error.c_str());
      return kExitUsage;
    }
  }
  int code = kExitOk;
  nlohmann::json runs = nlohmann::json::array();
  std::vector<std::pair<std::string, RunVerdict>> verdicts;  // per pipeline, for the last line
  for (const PipelineConfig* pipeline : pipelines) {
    PipelineRun run;
    int pipeline_code = RunOnePipeline(options, prepared, *pipeline, selected, several, &run);
    if (pipeline_code != kExitInterrupted && pipeline_code != kExitUsage) {
      pipeline_code = ReportOnRun(options, suite.name, pipeline->name, several, pipeline_code,
                                  &run.reason, &run.record);
      verdicts.push_back({pipeline->name, RunVerdict{pipeline_code, run.reason}});
    }
    code = Worse(code, pipeline_code);
    if (!run.record.is_null()) runs.push_back(std::move(run.record));
    if (pipeline_code == kExitInterrupted || pipeline_code == kExitUsage) break;
    if (several && !options.json) std::printf("\n");
  }
  // 130 for SIGINT, 143 for SIGTERM (SPEC §8; the shell's 128 + signal number).
  if (code == kExitInterrupted) code = InterruptExitCode();
  // One last line states the process's exit code and why, after every run and gate; a single
  // run without a baseline printed it already (FinishRun).
  if (!options.json && (several || !options.baseline_dir.empty()) && !verdicts.empty() &&
      code != kExitUsage && code != InterruptExitCode()) {
    std::string reason;
    for (const auto& [name, verdict] : verdicts) {
      if (verdict.code != code) continue;
      reason += (reason.empty() ? "" : "; ") + (several ? name + ": " : "") + verdict.reason;
    }
    std::printf("\n%s", FormatExitLine(RunVerdict{code, reason}, UseColour(stdout)).c_str());
  }
  if (options.json) {
    const nlohmann::json out = several ? nlohmann::json{{"runs", runs}, {"exit_code", code}}
                                       : (runs.empty() ? nlohmann::json::object() : runs[0]);
    std::printf("%s\n", out.dump(2).c_str());
  }
  KeepUntilExit(std::move(owned));
  return code;
}

}  // namespace plumb
