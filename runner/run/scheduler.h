#ifndef PLUMB_RUNNER_RUN_SCHEDULER_H_
#define PLUMB_RUNNER_RUN_SCHEDULER_H_

/// The scheduler drives one pipeline over a list of (case, repeat) work items: `adapter.slots()`
/// worker threads each take the next item, call the adapter, parse and score the reply, and
/// append the record to the journal as soon as it finishes. Only small CaseOutcomes stay in
/// memory (scores, latency), never reply bodies, so memory grows with cases, not responses.
/// A call that fails costs its case (recorded as a case error), never the run.
///
/// Multi-turn sessions (issue 22): consecutive items that are turns 1, 2, ... of one session in
/// one repeat are one unit, run in order by one worker on its slot (one persistent process),
/// each turn's request carrying the earlier turns' questions and the pipeline's own answers.
/// Different sessions run at once on different slots. The unit's records are journaled
/// together once its last turn is done (one write), so an interrupted session leaves nothing
/// and --resume runs it from turn 1. When a turn is answered by another start of the slot's
/// worker than turn 1 was (it crashed and was replaced: the session's state is gone), the
/// session runs again from turn 1, once, and its records say so (`session_restarts`).

#include <atomic>
#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "runner/pipeline/adapter.h"
#include "runner/pipeline/response.h"
#include "runner/run/case_record.h"
#include "runner/run/case_scorer.h"
#include "runner/run/case_scores.h"
#include "runner/run/progress.h"
#include "runner/run/run_journal.h"
#include "runner/suite/suite.h"

namespace plumb {

struct WorkItem {
  size_t case_index = 0;
  int repeat = 0;
};

/// What the run keeps of a finished item after its record went to the journal.
struct CaseOutcome {
  size_t case_index = 0;
  int repeat = 0;
  CaseScores scores;
  double latency_ms = 0;
  bool latency_lower_bound = false;  // timed out: latency_ms is the timeout
  bool first_call = false;           // a fresh worker's first reply: its first_call_ms
  int attempts = 1;
  int session_restarts = 0;  // a session's turn: see CaseRecord::session_restarts
  int64_t input_tokens = 0;
  int64_t output_tokens = 0;
  bool has_usage = false;         // the reply carried a token count
  std::optional<double> ttft_ms;  // a streamed reply's time to first token
  std::optional<double> cost;     // at the pipeline's price
};

struct ScheduleResult {
  std::vector<CaseOutcome> outcomes;  // finished items, in work-list order
  bool interrupted = false;           // `stop` was raised; unfinished items are not journaled
  std::string fatal_error;            // e.g. the journal could not be written; the run stops
  std::vector<WorkerWarmup> warmups;  // the adapter's worker start-ups (Adapter::Warmups)
};

struct ScheduleInputs {
  const Suite* suite = nullptr;
  const std::vector<WorkItem>* items = nullptr;
  Adapter* adapter = nullptr;
  const CaseScorer* scorer = nullptr;
  RunJournal* journal = nullptr;
  const PipelineConfig* pipeline = nullptr;
  /// Where the values are in the pipeline's replies; null: the protocol's own shape.
  const ReplyMapping* reply = nullptr;
  Progress* progress = nullptr;
  /// Raised (e.g. by a SIGINT watcher) to stop taking new items; in-flight calls that then fail
  /// are treated as interrupted, not as case errors, so --resume runs them again.
  const std::atomic<bool>* stop = nullptr;
  /// Called on the worker's thread with each record once it is in the journal (and before its
  /// outcome is taken), e.g. to hand the answer to the graders; must return promptly.
  std::function<void(const CaseRecord&, size_t case_index)> on_journaled;
};

ScheduleResult RunSchedule(const ScheduleInputs& inputs);

/// Builds the journal record and outcome for one reply; shared by `plumb run` (replies from an
/// adapter) and `plumb score` (recorded replies).
/// `pipeline` supplies the offset unit and the secrets to redact, `reply` where the reply's
/// values are; `plumb score` passes a default PipelineConfig and ProtocolReplyMapping().
/// `parsed_body`, when not null, is call.body already parsed as JSON by the caller (valid, and from
/// a pipeline without secrets): it is used, and moved from, instead of parsing the body a second
/// time.
/// `turn`, for a session's turn, is what its request carried (session, turn, history).
CaseRecord MakeCaseRecord(const Case& c, int repeat, const CallResult& call,
                          const PipelineConfig& pipeline, const ReplyMapping& reply,
                          const CaseScorer& scorer, size_t case_index,
                          nlohmann::json* parsed_body = nullptr, const SessionTurn* turn = nullptr);

CaseOutcome OutcomeOf(const CaseRecord& record, size_t case_index);
/// The same, taking the scores out of a record that is no longer needed.
CaseOutcome OutcomeOf(CaseRecord&& record, size_t case_index);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_SCHEDULER_H_
