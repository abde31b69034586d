#include "runner/pipeline/response.h"

#include <string_view>

namespace plumb {
namespace {

/// True for "/name" with no further '/' and no '~' escape.
bool IsOneMemberName(const std::string& pointer) {
  for (size_t i = 1; i < pointer.size(); ++i) {
    if (pointer[i] == '/' || pointer[i] == '~') return false;
  }
  return true;
}

const nlohmann::json* Resolve(const nlohmann::json& body, const std::string& pointer) {
  if (pointer.empty()) return &body;
  // The usual map entry is one member name without escapes ("/answer"): look it up directly
  // instead of parsing the pointer, which is most of the cost of reading a small reply.
  if (body.is_object() && pointer[0] == '/' && IsOneMemberName(pointer)) {
    auto it = body.find(std::string_view(pointer).substr(1));
    return it == body.end() ? nullptr : &*it;
  }
  try {
    nlohmann::json::json_pointer ptr(pointer);
    if (!body.contains(ptr)) return nullptr;
    return &body.at(ptr);
  } catch (const nlohmann::json::exception&) {
    return nullptr;
  }
}

std::string FieldName(const ResponseMap& map, const char* field) {
  auto it = map.citation_fields.find(field);
  return it == map.citation_fields.end() ? std::string(field) : it->second;
}

bool ParseOffset(const nlohmann::json& item, const std::string& key, std::optional<int64_t>* out,
                 std::string* error) {
  auto it = item.find(key);
  if (it == item.end() || it->is_null()) return true;
  if (!it->is_number_integer()) {
    *error = "field '" + key + "' must be an integer code-point offset, got " + it->dump();
    return false;
  }
  *out = it->get<int64_t>();
  return true;
}

bool ParseSourceRef(const nlohmann::json& item, const ResponseMap& map, SourceRef* ref,
                    std::string* error) {
  if (item.is_string()) {  // a bare doc id: a doc-only reference
    ref->doc = item.get<std::string>();
    return true;
  }
  if (!item.is_object()) {
    *error = "expected an object {doc, start, end} or {doc, quote}, got " + item.dump();
    return false;
  }
  const std::string doc_key = FieldName(map, "doc");
  auto doc = item.find(doc_key);
  if (doc == item.end() || !doc->is_string()) {
    *error = "missing string field '" + doc_key + "'";
    return false;
  }
  ref->doc = doc->get<std::string>();
  if (!ParseOffset(item, FieldName(map, "start"), &ref->start, error)) return false;
  if (!ParseOffset(item, FieldName(map, "end"), &ref->end, error)) return false;
  if (ref->start.has_value() != ref->end.has_value()) {
    *error =
        "a span needs both '" + FieldName(map, "start") + "' and '" + FieldName(map, "end") + "'";
    return false;
  }
  auto quote = item.find(FieldName(map, "quote"));
  if (quote != item.end() && !quote->is_null()) {
    if (!quote->is_string()) {
      *error = "field '" + FieldName(map, "quote") + "' must be a string";
      return false;
    }
    ref->quote = quote->get<std::string>();
  }
  return true;
}

bool ParseRefList(const nlohmann::json& body, const std::string& pointer, const char* what,
                  bool required, const ResponseMap& map, std::vector<SourceRef>* out,
                  std::string* error) {
  const nlohmann::json* list = Resolve(body, pointer);
  if (list == nullptr && required) {
    *error = std::string("response has no ") + what + " at '" + pointer + "'";
    return false;
  }
  if (list == nullptr || list->is_null()) return true;  // optional
  if (!list->is_array()) {
    *error = std::string(what) + " at '" + pointer + "' must be a list";
    return false;
  }
  out->reserve(list->size());
  for (size_t i = 0; i < list->size(); ++i) {
    SourceRef ref;
    std::string item_error;
    if (!ParseSourceRef((*list)[i], map, &ref, &item_error)) {
      *error = std::string(what) + "[" + std::to_string(i) + "]: " + item_error;
      return false;
    }
    out->push_back(std::move(ref));
  }
  return true;
}

// No reply reads a billion tokens; a count beyond it (or negative, or not a number) is a
// pipeline's bug, not usage, and is left out rather than summed into the run's totals (where
// 1e31 would not fit an int64_t at all: found by tests/fuzz/reply_fuzz.cc).
constexpr double kMaxUsageTokens = 1e9;

bool ParseUsageCount(const nlohmann::json& usage, const char* key, std::optional<int64_t>* out) {
  auto it = usage.find(key);
  if (it == usage.end() || !it->is_number()) return false;
  const double count = it->get<double>();
  if (!(count >= 0 && count <= kMaxUsageTokens)) return false;
  *out = it->is_number_integer() ? it->get<int64_t>() : static_cast<int64_t>(count);
  return true;
}

}  // namespace

ResponseMap ResponseMap::FromConfig(const std::map<std::string, std::string>& config) {
  ResponseMap map;
  for (const auto& [key, value] : config) {
    if (key == "answer") map.answer = value;
    if (key == "abstained") map.abstained = value;
    if (key == "citations") {
      map.citations = value;
      map.citations_required = true;
    }
    if (key == "retrieved") {
      map.retrieved = value;
      map.retrieved_required = true;
    }
    if (key == "usage") map.usage = value;
    const std::string prefix = "fields.";
    if (key.rfind(prefix, 0) == 0) map.citation_fields[key.substr(prefix.size())] = value;
  }
  return map;
}

bool ParseResponse(std::string_view body, const ResponseMap& map, Response* out,
                   std::string* error) {
  nlohmann::json parsed = nlohmann::json::parse(body, nullptr, /*allow_exceptions=*/false);
  if (parsed.is_discarded()) {
    *error = "response is not valid JSON";
    return false;
  }
  return ParseResponseJson(parsed, map, out, error);
}

bool ParseResponseJson(const nlohmann::json& body, const ResponseMap& map, Response* out,
                       std::string* error) {
  *out = Response();
  if (!body.is_object()) {
    *error = "response is not a JSON object";
    return false;
  }
  const nlohmann::json* answer = Resolve(body, map.answer);
  if (answer == nullptr) {
    *error = "response has no answer at '" + map.answer + "'";
    return false;
  }
  if (answer->is_string()) {
    out->answer = answer->get<std::string>();
  } else if (!answer->is_null()) {
    *error = "answer at '" + map.answer + "' must be a string or null, got " +
             std::string(answer->type_name());
    return false;
  }
  out->abstained = !out->answer.has_value();
  if (const nlohmann::json* abstained = Resolve(body, map.abstained);
      abstained != nullptr && !abstained->is_null()) {
    if (!abstained->is_boolean()) {
      *error = "'abstained' at '" + map.abstained + "' must be true or false";
      return false;
    }
    if (abstained->get<bool>()) {
      out->abstained = true;
      out->answer.reset();
    }
  }
  if (!ParseRefList(body, map.citations, "citations", map.citations_required, map, &out->citations,
                    error)) {
    return false;
  }
  if (!ParseRefList(body, map.retrieved, "retrieved", map.retrieved_required, map, &out->retrieved,
                    error)) {
    return false;
  }
  const nlohmann::json* retrieved = Resolve(body, map.retrieved);
  out->has_retrieved = retrieved != nullptr && retrieved->is_array();
  if (const nlohmann::json* usage = Resolve(body, map.usage);
      usage != nullptr && usage->is_object()) {
    ParseUsageCount(*usage, "input_tokens", &out->input_tokens);
    ParseUsageCount(*usage, "output_tokens", &out->output_tokens);
  }
  return true;
}

}  // namespace plumb
