#ifndef PLUMB_RUNNER_RUN_FAILURE_CAUSE_H_
#define PLUMB_RUNNER_RUN_FAILURE_CAUSE_H_

/// FailureCause says why a failed case failed, one cause per case, so a report can answer
/// first "did the retriever miss, or the reader?". ClassifyFailure is a pure function of the
/// case's scores and the suite's case_pass minimums: the scorer calls it when it concludes a
/// case (the cause is journaled), and a report calls it again for journals written before
/// causes were recorded. Ids are stable: they are written to cases.jsonl, run.json and
/// drift.json.

#include <map>
#include <string>
#include <string_view>
#include <vector>

namespace plumb {

struct CaseScores;  // runner/run/case_scores.h, which holds a case's FailureCause

/// In classification order: a failed case gets the first cause whose condition holds.
enum class FailureCause {
  kNone,                  // the case passed
  kErrored,               // the call failed (its reason is the record's error)
  kRetrievalMiss,         // gold spans exist, `retrieved` was reported and none of it hits one
  kCitationMiss,          // the answer is correct but no citation hits a gold span
  kReadingMiss,           // the answer is wrong though the pipeline answered an answerable
                          // question (a gold span was retrieved, or retrieval is not reported)
  kFalseAbstention,       // an answerable question, and the pipeline abstained
  kAnsweredUnanswerable,  // the gold is "abstain" (answers: []) and the pipeline answered
  kGradeBelowFloor,       // a grader's grade.NAME is below its case_pass minimum
  kBelowCasePass,         // any other case_pass minimum (say citation_recall 0.5 < 0.7)
};

/// Every cause but kNone, in classification order (the order reports list them in).
const std::vector<FailureCause>& FailureCauses();

/// "retrieval_miss": the stable id written to files.
std::string_view FailureCauseId(FailureCause cause);
/// "retrieval miss": the words reports print.
std::string_view FailureCauseLabel(FailureCause cause);
/// The cause with id `id`; false when `id` names none (kNone's id is "" and is not parsed).
bool ParseFailureCause(std::string_view id, FailureCause* cause);

/// The cause of a case with `scores` under `case_pass` (Suite::case_pass), kNone when
/// scores.pass. The scores are read as the scorer writes them (runner/run/case_scorer.h):
///   - gold spans exist when citation_recall is defined (it is on every such case, errored too);
///   - the reply reported `retrieved` when mrr is defined (only on cases with gold spans), and
///     none of the whole list hits a gold span when mrr is 0;
///   - the answer is correct when every case_pass minimum on an answer metric (correct,
///     exact_match, token_f1, token_recall, covers_gold, pattern_match, number_match) holds that
///     the case defines, and `correct` >= 1 when case_pass names none of them;
///   - answerable: not an abstention case; abstained: CaseScores::abstained.
/// A pipeline that reports no `retrieved` (a preloaded-context pipeline has the whole corpus
/// in view) is never a retrieval miss: a wrong answer there is a reading miss. So is a wrong
/// answer on a case without gold spans: nothing says the retriever missed.
FailureCause ClassifyFailure(const CaseScores& scores,
                             const std::map<std::string, double>& case_pass);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_FAILURE_CAUSE_H_
