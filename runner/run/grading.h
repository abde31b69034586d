#ifndef PLUMB_RUNNER_RUN_GRADING_H_
#define PLUMB_RUNNER_RUN_GRADING_H_

/// Grading: each finished answer sent to the suite's grader pipelines (`graders:`), the grade
/// stored as the per-case metric "grade.NAME" (0..1) with the grader's reason in the journal
/// record's "grades". Grades come from the verdict cache when it has them; the others are
/// requested on the grader adapter's own slots (so grading never takes the pipeline's), and
/// stored as they arrive. A grader call that fails, times out or answers without a usable grade
/// costs that grade only: the metric is left undefined on that case and the failure is counted
/// and written beside it. An answer whose own call failed is not sent: it grades 0, like every
/// other answer metric of an errored case. `correct` and `pass` are recomputed afterwards
/// (CaseScorer::Conclude), since correct_from and case_pass may name grade metrics.

#include <atomic>
#include <condition_variable>
#include <cstdint>
#include <deque>
#include <map>
#include <memory>
#include <mutex>
#include <nlohmann/json.hpp>
#include <string>
#include <thread>
#include <utility>
#include <vector>

#include "runner/pipeline/adapter.h"
#include "runner/pipeline/reply_mapping.h"
#include "runner/run/case_record.h"
#include "runner/run/case_scorer.h"
#include "runner/run/scheduler.h"
#include "runner/run/verdict_cache.h"
#include "runner/suite/corpus.h"
#include "runner/suite/suite.h"

namespace plumb {

/// One grader ready to call: its config, its pipeline, a live adapter, where the grade is in
/// its replies (null: the grader protocol's own shape), and its identity (GraderIdentity).
struct GraderRuntime {
  const GraderConfig* config = nullptr;
  const PipelineConfig* pipeline = nullptr;
  Adapter* adapter = nullptr;
  const ReplyMapping* reply = nullptr;
  std::string identity;
  /// CalibrationSummary of the grader (runner/run/calibration.h), written into run.json's
  /// grading member; null when not assessed.
  nlohmann::json calibration;
};

struct GradingInputs {
  const Suite* suite = nullptr;
  const CaseScorer* scorer = nullptr;
  Corpus* corpus = nullptr;  // for the text of cited spans; may be null
  std::vector<GraderRuntime> graders;
  VerdictCache* cache = nullptr;  // null: --no-grade-cache
  /// Raised to stop: calls not yet made are skipped, and the pass reports `interrupted`.
  const std::atomic<bool>* stop = nullptr;
};

struct GradingCounts {
  int64_t from_cache = 0;  // grader calls answered by the cache
  int64_t requested = 0;   // grader calls made
  /// Per grader: answers whose grade failed (metric undefined there).
  std::map<std::string, int64_t> failed;
  /// Per grader: answers graded (the metric is defined).
  std::map<std::string, int64_t> graded;
};

/// Grades answers as they are handed in. Add() queues an answer's grader calls (every grader,
/// every grader repeat) and returns at once; each grader's calls run on `slots()` threads of
/// its own, which first look a batch of queued calls up in the cache (one read transaction)
/// and then call the grader for the ones it lacks, storing new grades in batches. `plumb run`
/// hands each answer in as its case finishes, so grading overlaps the run and a slow grader
/// never holds the pipeline's workers. Finish() waits for every call; Apply() then writes an
/// answer's grades into its record. The inputs must outlive the pass. Add is thread-safe;
/// Finish and Apply are called from one thread, after the last Add.
class GradingPass {
 public:
  explicit GradingPass(const GradingInputs& in);
  ~GradingPass();  // stops and joins the threads (as Finish, discarding its result)
  GradingPass(const GradingPass&) = delete;
  GradingPass& operator=(const GradingPass&) = delete;

  /// Queues the grader calls for `record` (the answer of case `case_index`), unless this case
  /// and repeat was added before (its answer is the same record). An errored record queues
  /// nothing: it grades 0 in Apply.
  void Add(const CaseRecord& record, size_t case_index);

  /// Waits until every queued call is answered, or until `stop` is raised (then *interrupted
  /// is set and the answers' grades are incomplete: do not write them), stores the last new
  /// grades in the cache and stops the threads. Adds the cache hits and calls made to *counts.
  /// False with *error when the cache could not be read or written.
  bool Finish(GradingCounts* counts, bool* interrupted, std::string* error);

  /// After Finish: sets every grader's grade.NAME in `record` (the mean of its repeats;
  /// removed when a call failed) and its "grades" entry, counts it as graded or failed, and
  /// recomputes `correct` and `pass`. A record not added is counted failed ("not graded").
  void Apply(CaseRecord* record, size_t case_index, GradingCounts* counts) const;

 private:
  struct Call;
  struct Lane;
  void Work(Lane* lane, int slot);
  bool Stopped() const;

  const GradingInputs& in_;
  std::vector<std::unique_ptr<Lane>> lanes_;  // one per grader, in in_.graders order
  std::mutex mutex_;
  std::condition_variable wake_;
  bool finishing_ = false;
  bool joined_ = false;
  int64_t from_cache_ = 0;
  int64_t requested_ = 0;
  std::string store_error_;
};

struct GradeTarget {
  CaseRecord* record = nullptr;
  size_t case_index = 0;
};

/// Grades every target with every grader in `in`, in place (a GradingPass over them). False
/// (with *error) only when the cache fails; grader failures are per grade. *interrupted is set
/// when `stop` was raised: the targets' grades are then incomplete and must not be written.
bool GradeRecords(const GradingInputs& in, const std::vector<GradeTarget>& targets,
                  GradingCounts* counts, bool* interrupted, std::string* error);

/// The journal at `journal_path`, graded through `pass` (which may already hold some of its
/// answers, handed in while the run went on): every record of a case marked in `selected` (the
/// first record of each case and repeat) is graded, and the journal is replaced atomically
/// (the old file stays until the new one is complete; other lines are kept as they were).
/// `outcomes` are the graded records' outcomes, in journal order.
struct GradedJournal {
  std::vector<CaseOutcome> outcomes;
  GradingCounts counts;
  bool interrupted = false;  // nothing was rewritten
  std::vector<std::string> warnings;
};
bool GradeJournal(const std::string& journal_path, const GradingInputs& in,
                  const std::vector<bool>& selected, GradingPass* pass, GradedJournal* out,
                  std::string* error);

/// run.json's "grading" member: the cache file (or null), the counts, and per grader its
/// pipeline, identity, scale, repeat, rubric file and graded and failed answers.
nlohmann::json GradingRecord(const GradingInputs& in, const GradingCounts& counts);

/// The "grading" member of a run merged from shards (`plumb merge`), from the shards' own
/// (null for a shard run without graders): counts summed, each grader's graded and failed
/// answers summed and its other entries taken from the first shard that has it, and the cache
/// file when the shards agree on it (else the list of their files). Null when no shard graded.
/// A shard without grading beside one with it, or one grader with two identities (a rubric or
/// grader config changed between shards), adds a sentence to *warnings.
nlohmann::json MergedGradingRecord(const std::vector<nlohmann::json>& shards,
                                   const std::vector<std::string>& shard_dirs,
                                   std::vector<std::string>* warnings);

/// True when `grader` is the pipeline under test: the same name, or the same command or URL
/// (compared as written, secrets redacted), e.g. the run's config from run.json.
bool IsSamePipeline(const PipelineConfig& grader, const std::string& tested_name,
                    const nlohmann::json& tested_config);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_GRADING_H_
