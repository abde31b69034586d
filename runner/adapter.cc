#include "runner/adapter.h"

#include "runner/json_writer.h"

namespace plumb {

std::string PipelineRequest::RequestLine(const std::string& id, const std::string& question,
                                         const nlohmann::json& input, int repeat) {
  JsonWriter w;
  // Keys in the order ToJson() would print them (sorted), so the wire form did not change.
  w.BeginObject().PlainKey("id").String(id).PlainKey("input").Value(input);
  w.PlainKey("question").String(question).PlainKey("repeat").Int(repeat).EndObject();
  return w.Take();
}

}  // namespace plumb
