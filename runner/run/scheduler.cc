#include "runner/run/scheduler.h"

#include <thread>

#include "runner/pipeline/excerpt.h"
#include "runner/pipeline/reply_mapping.h"
#include "runner/run/token_cost.h"

namespace plumb {
namespace {

// Bytes of an invalid reply kept in the error details, like the adapters' excerpts.
constexpr size_t kExcerptBytes = 2048;

}  // namespace

CaseRecord MakeCaseRecord(const Case& c, int repeat, const CallResult& call,
                          const PipelineConfig& pipeline, const ReplyMapping& reply,
                          const CaseScorer& scorer, size_t case_index, nlohmann::json* parsed_body,
                          const SessionTurn* turn) {
  const std::vector<std::string>& secrets = pipeline.secrets;
  CaseRecord record;
  record.id = c.id;
  record.repeat = repeat;
  record.request = PipelineRequest::RequestLine(c.id, c.question, c.input, repeat, turn);
  record.latency_ms = call.latency_ms;
  record.latency_lower_bound = call.timed_out;
  record.first_call = call.first_call;
  record.attempts = call.attempts;
  if (call.error.empty()) record.ttft_ms = call.ttft_ms;
  // A pipeline may echo a secret it was given, as is or JSON-escaped; nothing it says reaches a
  // file unredacted. The reply is parsed as sent and its decoded strings are redacted (a mask
  // put into the raw text could break its JSON); the raw text is redacted, escaped forms too,
  // only where it is recorded as text.
  auto redacted_body = [&] {
    return secrets.empty() ? call.body : RedactSecrets(call.body, secrets);
  };
  if (!call.error.empty()) {
    record.error = secrets.empty() ? call.error : RedactSecrets(call.error, secrets);
    record.stdout_excerpt = call.stdout_excerpt;
    record.stderr_excerpt = call.stderr_excerpt;
    record.response = RecordedBody(redacted_body(), nullptr);
  } else {
    nlohmann::json parsed =
        parsed_body != nullptr
            ? std::move(*parsed_body)
            : nlohmann::json::parse(call.body, nullptr, /*allow_exceptions=*/false);
    if (!parsed.is_discarded() && !secrets.empty()) RedactJsonStrings(&parsed, secrets);
    std::string parse_error;
    if (parsed.is_discarded()) {
      record.error = "response is not valid JSON";
    } else if (!ParseResponseJson(parsed, reply, &record.parsed, &parse_error)) {
      record.error = secrets.empty() ? parse_error : RedactSecrets(parse_error, secrets);
    }
    if (!record.error.empty()) {
      record.stdout_excerpt = HeadExcerpt(call.body, kExcerptBytes, secrets);
      record.stderr_excerpt = call.stderr_excerpt;
      record.parsed = Response();
      record.response = RecordedBody(redacted_body(), nullptr);
    } else if (call.body.size() <= kMaxRecordedBody) {
      record.response = RecordedBody(call.body, &parsed);
    } else {
      record.response = RecordedBody(redacted_body(), nullptr);  // an excerpt of the text
    }
  }
  if (record.error.empty() && pipeline.price) {
    record.cost =
        TokenCost(*pipeline.price, record.parsed.input_tokens, record.parsed.output_tokens);
  }
  record.scores =
      scorer.Score(case_index, record.error.empty() ? &record.parsed : nullptr, pipeline.offsets);
  return record;
}

CaseOutcome OutcomeOf(CaseRecord&& record, size_t case_index) {
  CaseScores scores = std::move(record.scores);
  record.scores = CaseScores();
  CaseOutcome outcome = OutcomeOf(record, case_index);
  outcome.scores = std::move(scores);
  return outcome;
}

CaseOutcome OutcomeOf(const CaseRecord& record, size_t case_index) {
  CaseOutcome outcome;
  outcome.case_index = case_index;
  outcome.repeat = record.repeat;
  outcome.scores = record.scores;
  outcome.latency_ms = record.latency_ms;
  outcome.latency_lower_bound = record.latency_lower_bound;
  outcome.first_call = record.first_call;
  outcome.attempts = record.attempts;
  outcome.session_restarts = record.session_restarts;
  outcome.input_tokens = record.parsed.input_tokens.value_or(0);
  outcome.output_tokens = record.parsed.output_tokens.value_or(0);
  outcome.has_usage = record.parsed.input_tokens || record.parsed.output_tokens;
  outcome.ttft_ms = record.ttft_ms;
  outcome.cost = record.cost;
  return outcome;
}

namespace {

/// Where the unit of work that starts at item `begin` ends: past the last turn of the same
/// session and repeat that follows in order, or begin + 1 for a plain case.
size_t UnitEnd(const Suite& suite, const std::vector<WorkItem>& items, size_t begin) {
  size_t end = begin + 1;
  const Case& first = suite.cases[items[begin].case_index];
  if (first.turn == 0) return end;
  while (end < items.size()) {
    const Case& next = suite.cases[items[end].case_index];
    const Case& last = suite.cases[items[end - 1].case_index];
    if (items[end].repeat != items[begin].repeat || next.session != first.session ||
        next.turn != last.turn + 1) {
      break;
    }
    ++end;
  }
  return end;
}

}  // namespace

ScheduleResult RunSchedule(const ScheduleInputs& in) {
  const std::vector<WorkItem>& items = *in.items;
  std::vector<CaseOutcome> outcomes(items.size());
  std::vector<char> finished(items.size(), 0);
  // Units of work: a plain case, or a session's turns in one repeat (see the header).
  std::vector<size_t> unit_begin;
  for (size_t i = 0; i < items.size(); i = UnitEnd(*in.suite, items, i)) unit_begin.push_back(i);
  unit_begin.push_back(items.size());
  std::atomic<size_t> next{0};
  std::atomic<bool> failed{false};
  std::string fatal_error;
  std::mutex fatal_mutex;
  auto stopping = [&] { return failed.load() || (in.stop != nullptr && in.stop->load()); };
  const ReplyMapping& reply = in.reply != nullptr ? *in.reply : ProtocolReplyMapping();

  // Runs items [begin, end) of one unit on `slot`; false when the run must stop.
  auto run_unit = [&](size_t begin, size_t end, int slot) {
    std::vector<CaseRecord> records;
    const bool session = in.suite->cases[items[begin].case_index].turn > 0;
    int restarts = 0;
    for (bool again = true; again;) {
      again = false;
      records.clear();
      SessionTurn turn;
      int first_start = 0;
      for (size_t i = begin; i < end; ++i) {
        const WorkItem& item = items[i];
        const Case& c = in.suite->cases[item.case_index];
        turn.session = c.session;
        turn.turn = c.turn;
        const PipelineRequest request{c.id,        c.question,    CaseInput(c),
                                      item.repeat, std::string(), session ? &turn : nullptr};
        CallResult call = in.adapter->Call(request, slot);
        // A call cut short by the interrupt is not the pipeline's fault: leave it (and the
        // rest of its session) unjournaled so --resume sends it again.
        if (!call.error.empty() && stopping()) return false;
        if (i == begin) first_start = call.worker_start;
        const bool state_lost = session && i > begin && call.worker_start != first_start;
        if (state_lost && restarts == 0) {
          ++restarts;
          again = true;  // the worker that held this session's state is gone: from turn 1
          break;
        }
        records.push_back(MakeCaseRecord(c, item.repeat, call, *in.pipeline, reply, *in.scorer,
                                         item.case_index, nullptr, session ? &turn : nullptr));
        if (session) {
          const CaseRecord& done = records.back();
          const bool answered =
              done.error.empty() && done.parsed.answer.has_value() && !done.parsed.abstained;
          turn.history.push_back(
              {{"question", c.question},
               {"answer", answered ? nlohmann::json(*done.parsed.answer) : nlohmann::json()}});
        }
      }
    }
    std::string lines;
    for (CaseRecord& record : records) {
      record.session_restarts = restarts;
      lines += CaseRecordLine(record);
      lines.push_back('\n');
    }
    std::string error;
    // One write for the whole unit: a session is in the journal whole or not at all.
    if (!in.journal->AppendLines(lines, &error)) {
      std::lock_guard<std::mutex> lock(fatal_mutex);
      fatal_error = error;
      failed = true;
      return false;
    }
    for (size_t k = 0; k < records.size(); ++k) {
      const size_t i = begin + k;
      if (in.on_journaled) in.on_journaled(records[k], items[i].case_index);
      outcomes[i] = OutcomeOf(std::move(records[k]), items[i].case_index);
      finished[i] = 1;
      if (in.progress != nullptr) in.progress->Tick(outcomes[i].scores.errored);
    }
    return true;
  };

  auto worker = [&](int slot) {
    while (!stopping()) {
      const size_t u = next.fetch_add(1);
      if (u + 1 >= unit_begin.size()) return;
      if (!run_unit(unit_begin[u], unit_begin[u + 1], slot)) return;
    }
  };

  const int slots = std::max(1, in.adapter->slots());
  std::vector<std::thread> threads;
  threads.reserve(static_cast<size_t>(slots));
  for (int slot = 0; slot < slots; ++slot) threads.emplace_back(worker, slot);
  for (std::thread& t : threads) t.join();

  ScheduleResult result;
  result.interrupted = in.stop != nullptr && in.stop->load();
  result.fatal_error = fatal_error;
  result.warmups = in.adapter->Warmups();
  result.outcomes.reserve(items.size());
  for (size_t i = 0; i < items.size(); ++i) {
    if (finished[i]) result.outcomes.push_back(std::move(outcomes[i]));
  }
  return result;
}

}  // namespace plumb
