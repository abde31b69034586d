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
                          const CaseScorer& scorer, size_t case_index,
                          nlohmann::json* parsed_body) {
  const std::vector<std::string>& secrets = pipeline.secrets;
  CaseRecord record;
  record.id = c.id;
  record.repeat = repeat;
  record.request = PipelineRequest::RequestLine(c.id, c.question, c.input, repeat);
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
  outcome.input_tokens = record.parsed.input_tokens.value_or(0);
  outcome.output_tokens = record.parsed.output_tokens.value_or(0);
  outcome.has_usage = record.parsed.input_tokens || record.parsed.output_tokens;
  outcome.ttft_ms = record.ttft_ms;
  outcome.cost = record.cost;
  return outcome;
}

ScheduleResult RunSchedule(const ScheduleInputs& in) {
  const std::vector<WorkItem>& items = *in.items;
  std::vector<CaseOutcome> outcomes(items.size());
  std::vector<char> finished(items.size(), 0);
  std::atomic<size_t> next{0};
  std::atomic<bool> failed{false};
  std::string fatal_error;
  std::mutex fatal_mutex;
  auto stopping = [&] { return failed.load() || (in.stop != nullptr && in.stop->load()); };

  auto worker = [&](int slot) {
    while (!stopping()) {
      const size_t i = next.fetch_add(1);
      if (i >= items.size()) return;
      const WorkItem& item = items[i];
      const Case& c = in.suite->cases[item.case_index];
      const PipelineRequest request{c.id, c.question, CaseInput(c), item.repeat, std::string()};
      CallResult call = in.adapter->Call(request, slot);
      // A call cut short by the interrupt is not the pipeline's fault: leave it unjournaled so
      // --resume sends it again.
      if (!call.error.empty() && stopping()) return;
      CaseRecord record = MakeCaseRecord(c, item.repeat, call, *in.pipeline,
                                         in.reply != nullptr ? *in.reply : ProtocolReplyMapping(),
                                         *in.scorer, item.case_index);
      std::string error;
      if (!in.journal->AppendLine(CaseRecordLine(record), &error)) {
        std::lock_guard<std::mutex> lock(fatal_mutex);
        fatal_error = error;
        failed = true;
        return;
      }
      if (in.on_journaled) in.on_journaled(record, item.case_index);
      outcomes[i] = OutcomeOf(record, item.case_index);
      finished[i] = 1;
      if (in.progress != nullptr) in.progress->Tick(record.scores.errored);
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
