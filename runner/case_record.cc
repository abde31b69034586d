#include "runner/case_record.h"

#include "runner/excerpt.h"

namespace plumb {
namespace {

nlohmann::json RefsToJson(const std::vector<SourceRef>& refs) {
  nlohmann::json out = nlohmann::json::array();
  for (const SourceRef& ref : refs) out.push_back(SourceRefToJson(ref));
  return out;
}

}  // namespace

nlohmann::json RecordedBody(const std::string& body, const nlohmann::json* parsed) {
  if (parsed != nullptr && body.size() <= kMaxRecordedBody) return *parsed;
  if (body.empty()) return nullptr;
  // nlohmann::json refuses invalid UTF-8 on dump; the replace handler turns it into U+FFFD.
  return {{"excerpt", std::string(Utf8Prefix(body, 2048))}, {"bytes", body.size()}};
}

nlohmann::json CaseRecordToJson(const CaseRecord& r) {
  nlohmann::json out = {{"id", r.id},
                        {"repeat", r.repeat},
                        {"request", r.request},
                        {"response", r.response},
                        {"latency_ms", r.latency_ms},
                        {"attempts", r.attempts}};
  if (r.error.empty()) {
    out["answer"] = r.parsed.answer ? nlohmann::json(*r.parsed.answer) : nlohmann::json(nullptr);
    out["abstained"] = r.parsed.abstained;
    out["citations"] = RefsToJson(r.parsed.citations);
    out["retrieved"] = r.parsed.has_retrieved ? RefsToJson(r.parsed.retrieved) : nlohmann::json();
    nlohmann::json usage = nlohmann::json::object();
    if (r.parsed.input_tokens) usage["input_tokens"] = *r.parsed.input_tokens;
    if (r.parsed.output_tokens) usage["output_tokens"] = *r.parsed.output_tokens;
    out["usage"] = usage;
    out["error"] = nullptr;
  } else {
    out["answer"] = nullptr;
    out["abstained"] = false;
    out["citations"] = nlohmann::json::array();
    out["retrieved"] = nullptr;
    out["usage"] = nlohmann::json::object();
    out["error"] = {
        {"reason", r.error}, {"stdout", r.stdout_excerpt}, {"stderr", r.stderr_excerpt}};
  }
  out["scores"] = r.scores.values;
  out["pass"] = r.scores.pass;
  out["abstained_scored"] = r.scores.abstained;
  if (!r.scores.warnings.empty()) out["warnings"] = r.scores.warnings;
  return out;
}

bool CaseRecordFromJson(const nlohmann::json& json, CaseRecord* r, std::string* error) {
  *r = CaseRecord();
  try {
    r->id = json.at("id").get<std::string>();
    r->repeat = json.at("repeat").get<int>();
    r->request = json.value("request", nlohmann::json::object());
    r->response = json.value("response", nlohmann::json());
    r->latency_ms = json.at("latency_ms").get<double>();
    r->attempts = json.value("attempts", 1);
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
      if (!ParseResponseJson(reply, ResponseMap(), &r->parsed, &parse_error)) {
        *error = parse_error;
        return false;
      }
    }
    r->scores.values = json.value("scores", std::map<std::string, double>());
    r->scores.pass = json.value("pass", false);
    r->scores.errored = !r->error.empty();
    r->scores.abstained = json.value("abstained_scored", false);
    r->scores.warnings = json.value("warnings", std::vector<std::string>());
  } catch (const nlohmann::json::exception& e) {
    *error = std::string("malformed journal record: ") + e.what();
    return false;
  }
  return true;
}

}  // namespace plumb
