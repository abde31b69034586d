#include "runner/pipeline/adapter.h"

#include "runner/base/json_writer.h"

namespace plumb {

std::string PipelineRequest::RequestLine(const std::string& id, const std::string& question,
                                         const nlohmann::json& input, int repeat,
                                         const SessionTurn* turn) {
  JsonWriter w;
  WriteRequest(id, question, input, repeat, &w, turn);
  return w.Take();
}

void PipelineRequest::WriteRequest(const std::string& id, const std::string& question,
                                   const nlohmann::json& input, int repeat, JsonWriter* out,
                                   const SessionTurn* turn) {
  JsonWriter& w = *out;
  // Keys in the order ToJson() would print them (sorted), so the wire form did not change.
  w.BeginObject();
  if (turn != nullptr && !turn->history.is_null()) w.PlainKey("history").Value(turn->history);
  w.PlainKey("id").String(id).PlainKey("input");
  if (input.is_null()) {  // a case without input (Case::input)
    w.BeginObject().EndObject();
  } else {
    w.Value(input);
  }
  w.PlainKey("question").String(question).PlainKey("repeat").Int(repeat);
  if (turn != nullptr) w.PlainKey("session").String(turn->session).PlainKey("turn").Int(turn->turn);
  w.EndObject();
}

}  // namespace plumb
