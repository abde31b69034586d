#include "runner/pipeline/response.h"

#include "runner/pipeline/reply_mapping.h"

namespace plumb {

bool ParseResponse(std::string_view body, const ReplyMapping& mapping, Response* out,
                   std::string* error) {
  nlohmann::json parsed = nlohmann::json::parse(body, nullptr, /*allow_exceptions=*/false);
  if (parsed.is_discarded()) {
    *error = "response is not valid JSON";
    return false;
  }
  return ParseResponseJson(parsed, mapping, out, error);
}

bool ParseResponseJson(const nlohmann::json& body, const ReplyMapping& mapping, Response* out,
                       std::string* error) {
  return mapping.Read(body, out, error);
}

}  // namespace plumb
