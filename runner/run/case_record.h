#ifndef PLUMB_RUNNER_RUN_CASE_RECORD_H_
#define PLUMB_RUNNER_RUN_CASE_RECORD_H_

/// CaseRecord is one finished (case, repeat): what was sent, what came back, and its scores. It
/// is the unit of the run journal (cases.jsonl, SPEC §9); reports and drift read records back.
/// The reply is kept bounded: the raw body only up to kMaxRecordedBody bytes, an excerpt beyond.

#include <cstdint>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>

#include "runner/base/json_writer.h"
#include "runner/pipeline/adapter.h"
#include "runner/pipeline/response.h"
#include "runner/run/case_scores.h"

namespace plumb {

/// Raw reply bodies larger than this are journaled as an excerpt (the parsed answer, citations
/// and retrieved list are journaled in full either way).
inline constexpr size_t kMaxRecordedBody = 64 * 1024;

struct CaseRecord {
  std::string id;
  int repeat = 0;
  std::string request;      // as sent: compact JSON (PipelineRequest::ToLine)
  nlohmann::json response;  // the parsed reply, or {"excerpt", "bytes"} when large or invalid
  Response parsed;          // empty when the call errored
  double latency_ms = 0;
  bool latency_lower_bound = false;  // the call timed out: latency_ms is its timeout
  /// A fresh worker's first reply with no ready signal: latency_ms includes its start-up, so it
  /// stays out of the latency distribution (it is the worker's first_call_ms).
  bool first_call = false;
  /// A streamed reply's time to first token (CallResult::ttft_ms); journaled as "ttft_ms".
  std::optional<double> ttft_ms;
  /// What the reply cost at the pipeline's `price:` (runner/run/token_cost.h); "cost".
  std::optional<double> cost;
  int attempts = 1;
  /// A session's turn (issue 22): how often the session was run again from turn 1 because its
  /// persistent worker was replaced mid-session (its state gone). 0 for a plain case.
  int session_restarts = 0;
  std::string error;  // empty when the reply was valid
  std::string stdout_excerpt;
  std::string stderr_excerpt;
  CaseScores scores;
  /// Per grader: {"grade", "scores", "reason", "from_cache"} or {"error", "scores"}; null when
  /// the suite has no graders (the journal line then has no "grades" member).
  nlohmann::json grades;
};

/// The record as one journal line of compact JSON, without the newline.
std::string CaseRecordLine(const CaseRecord& record);
/// The same, appended to a compact (indent < 0) writer at its top level.
void WriteCaseRecord(const CaseRecord& record, JsonWriter* out);
/// WriteCaseRecord in two parts, for a caller that writes "request" and "response" straight into
/// `out` (plumb score's recorded replies): BeginCaseRecord opens the object with "id" and
/// "repeat"; the caller writes Key "request" and its value, then Key "response" and its value;
/// EndCaseRecord writes the members after them from `record` (its id, repeat, request and
/// response are not read).
void BeginCaseRecord(std::string_view id, int repeat, JsonWriter* out);
void EndCaseRecord(const CaseRecord& record, JsonWriter* out);
/// Reads a record written by CaseRecordLine; false with a reason when fields are missing.
bool CaseRecordFromJson(const nlohmann::json& json, CaseRecord* record, std::string* error);

/// The journal's "response" value for a raw reply body (bounded, see kMaxRecordedBody). A small
/// reply is `*parsed`, moved out (so *parsed is left empty); `parsed` null: the body was not valid.
nlohmann::json RecordedBody(const std::string& body, nlohmann::json* parsed);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_CASE_RECORD_H_
