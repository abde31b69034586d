#include "runner/adapter.h"

#include "runner/json_writer.h"

namespace plumb {

std::string PipelineRequest::RequestLine(const std::string& id, const std::string& question,
                                         const nlohmann::json& input, int repeat) {
  JsonWriter w;
  // Keys in the order ToJson() would print them (sorted), so the wire form did not change.
  w.BeginObject().Member("id", id).Key("input").Value(input).Member("question", question);
  w.Member("repeat", repeat).EndObject();
  return w.Take();
}

}  // namespace plumb
