#include "runner/run/case_record.h"

#include "runner/base/json_writer.h"
#include "runner/pipeline/excerpt.h"
#include "runner/pipeline/reply_mapping.h"

namespace plumb {
namespace {

void WriteRefs(JsonWriter* w, const std::vector<SourceRef>& refs) {
  w->BeginArray();
  for (const SourceRef& ref : refs) {
    w->BeginObject().PlainKey("doc").String(ref.doc);
    if (ref.start) w->PlainKey("start").Int(*ref.start);
    if (ref.end) w->PlainKey("end").Int(*ref.end);
    if (ref.quote) w->PlainKey("quote").String(*ref.quote);
    w->EndObject();
  }
  w->EndArray();
}

}  // namespace

nlohmann::json RecordedBody(const std::string& body, nlohmann::json* parsed) {
  if (parsed != nullptr && body.size() <= kMaxRecordedBody) return std::move(*parsed);
  if (body.empty()) return nullptr;
  // nlohmann::json refuses invalid UTF-8 on dump; the replace handler turns it into U+FFFD.
  return {{"excerpt", std::string(Utf8Prefix(body, 2048))}, {"bytes", body.size()}};
}

std::string CaseRecordLine(const CaseRecord& r) {
  JsonWriter w;
  WriteCaseRecord(r, &w);
  return w.Take();
}

void WriteCaseRecord(const CaseRecord& r, JsonWriter* out) {
  BeginCaseRecord(r.id, r.repeat, out);
  out->PlainKey("request").Raw(r.request).PlainKey("response").Value(r.response);
  EndCaseRecord(r, out);
}

void BeginCaseRecord(std::string_view id, int repeat, JsonWriter* out) {
  out->BeginObject().PlainKey("id").String(id).PlainKey("repeat").Int(repeat);
}

void EndCaseRecord(const CaseRecord& r, JsonWriter* out) {
  JsonWriter& w = *out;
  w.PlainKey("latency_ms").Double(r.latency_ms);
  if (r.latency_lower_bound) w.PlainKey("latency_lower_bound").Bool(true);
  if (r.first_call) w.PlainKey("first_call").Bool(true);
  if (r.ttft_ms) w.PlainKey("ttft_ms").Double(*r.ttft_ms);
  w.PlainKey("attempts").Int(r.attempts);
  if (r.session_restarts > 0) w.PlainKey("session_restarts").Int(r.session_restarts);
  // The service's own timing, when the pipeline's `reply:` block maps it.
  if (r.error.empty() && r.parsed.service_latency_ms) {
    w.PlainKey("service_latency_ms").Double(*r.parsed.service_latency_ms);
  }
  if (r.error.empty()) {
    w.PlainKey("answer");
    if (r.parsed.answer) {
      w.String(*r.parsed.answer);
    } else {
      w.Null();
    }
    w.PlainKey("abstained").Bool(r.parsed.abstained).PlainKey("citations");
    WriteRefs(&w, r.parsed.citations);
    w.PlainKey("retrieved");
    if (r.parsed.has_retrieved) {
      WriteRefs(&w, r.parsed.retrieved);
    } else {
      w.Null();
    }
    w.PlainKey("usage").BeginObject();
    if (r.parsed.input_tokens) w.PlainKey("input_tokens").Int(*r.parsed.input_tokens);
    if (r.parsed.output_tokens) w.PlainKey("output_tokens").Int(*r.parsed.output_tokens);
    w.EndObject();
    if (r.cost) w.PlainKey("cost").Double(*r.cost);
    w.PlainKey("error").Null();
  } else {
    w.PlainKey("answer").Null().PlainKey("abstained").Bool(false);
    w.PlainKey("citations").BeginArray().EndArray().PlainKey("retrieved").Null();
    w.PlainKey("usage").BeginObject().EndObject();
    w.PlainKey("error")
        .BeginObject()
        .PlainKey("reason")
        .String(r.error)
        .PlainKey("stdout")
        .String(r.stdout_excerpt)
        .PlainKey("stderr")
        .String(r.stderr_excerpt)
        .EndObject();
  }
  w.PlainKey("scores").BeginObject();
  for (const auto& [metric, value] : r.scores.values) w.Member(metric, value);
  w.EndObject()
      .PlainKey("pass")
      .Bool(r.scores.pass)
      .PlainKey("abstained_scored")
      .Bool(r.scores.abstained);
  // Why a failed case failed (runner/run/failure_cause.h); absent on a case that passed.
  if (r.scores.cause != FailureCause::kNone) {
    w.PlainKey("cause").String(FailureCauseId(r.scores.cause));
  }
  if (!r.scores.warnings.empty()) w.Member("warnings", r.scores.warnings);
  if (!r.grades.is_null()) w.PlainKey("grades").Value(r.grades);
  w.EndObject();
}

bool CaseRecordFromJson(const nlohmann::json& json, CaseRecord* r, std::string* error) {
  *r = CaseRecord();
  try {
    r->id = json.at("id").get<std::string>();
    r->repeat = json.at("repeat").get<int>();
    r->request = json.value("request", nlohmann::json::object())
                     .dump(-1, ' ', false, nlohmann::json::error_handler_t::replace);
    r->response = json.value("response", nlohmann::json());
    r->latency_ms = json.at("latency_ms").get<double>();
    r->latency_lower_bound = json.value("latency_lower_bound", false);
    r->first_call = json.value("first_call", false);
    if (auto ttft = json.find("ttft_ms"); ttft != json.end() && ttft->is_number()) {
      r->ttft_ms = ttft->get<double>();
    }
    if (auto cost = json.find("cost"); cost != json.end() && cost->is_number()) {
      r->cost = cost->get<double>();
    }
    r->attempts = json.value("attempts", 1);
    r->session_restarts = json.value("session_restarts", 0);
    const nlohmann::json& err = json.at("error");
    if (!err.is_null()) {
      r->error = err.value("reason", std::string("error"));
      r->stdout_excerpt = err.value("stdout", std::string());
      r->stderr_excerpt = err.value("stderr", std::string());
    } else {
      // The journal holds the parsed reply in our own field names; read it back with the
      // default map.
      nlohmann::json reply = {{"answer", json.at("answer")},
                              {"abstained", json.value("abstained", false)},
                              {"citations", json.value("citations", nlohmann::json::array())},
                              {"retrieved", json.value("retrieved", nlohmann::json())},
                              {"usage", json.value("usage", nlohmann::json::object())}};
      std::string parse_error;
      if (!ParseResponseJson(reply, ProtocolReplyMapping(), &r->parsed, &parse_error)) {
        *error = parse_error;
        return false;
      }
    }
    r->scores.values = MetricValues(json.value("scores", std::map<std::string, double>()));
    r->scores.pass = json.value("pass", false);
    r->scores.errored = !r->error.empty();
    r->scores.abstained = json.value("abstained_scored", false);
    r->scores.warnings = json.value("warnings", std::vector<std::string>());
    // A journal written before causes were recorded has none, and one from a later plumb may
    // name a cause this one does not know: both are left kNone, and LoadRun and AggregateRun
    // classify them from the scores.
    const std::string cause = json.value("cause", std::string());
    if (!ParseFailureCause(cause, &r->scores.cause)) r->scores.cause = FailureCause::kNone;
    if (auto grades = json.find("grades"); grades != json.end() && grades->is_object()) {
      r->grades = *grades;
    }
  } catch (const nlohmann::json::exception& e) {
    *error = std::string("malformed journal record: ") + e.what();
    return false;
  }
  return true;
}

}  // namespace plumb
