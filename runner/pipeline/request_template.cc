#include "runner/pipeline/request_template.h"

namespace plumb {
namespace {

constexpr std::string_view kInput = "input.";

/// What the `!case` fields of one request read: the request, and for a grader's request the
/// object its line holds (parsed once per rendering; null for a case's request).
struct Fields {
  const PipelineRequest& request;
  nlohmann::json grader;

  explicit Fields(const PipelineRequest& r)
      : request(r),
        grader(r.line.empty()
                   ? nlohmann::json()
                   : nlohmann::json::parse(r.line, nullptr, /*allow_exceptions=*/false)) {}
};

// The value a case field names; false with a sentence when the case's input lacks the key.
bool Lookup(const std::string& field, const Fields& fields, nlohmann::json* value,
            std::string* error) {
  const PipelineRequest& request = fields.request;
  if (IsGraderRequestField(field)) {
    auto it = fields.grader.is_object() ? fields.grader.find(field) : fields.grader.end();
    if (!fields.grader.is_object() || it == fields.grader.end()) {
      *error = "'!case " + field +
               "' is a field of a grader's request, but this pipeline was called to answer a "
               "case; use it only in a pipeline that graders: names";
      return false;
    }
    *value = *it;
  } else if (field == "id") {
    *value = request.id;
  } else if (field == "question") {
    *value = request.question;
  } else if (field == "repeat") {
    *value = request.repeat;
  } else if (field == "session") {  // a session's turn (issue 22); null for a plain case
    *value = request.turn != nullptr ? nlohmann::json(request.turn->session) : nlohmann::json();
  } else if (field == "turn") {
    *value = request.turn != nullptr ? nlohmann::json(request.turn->turn) : nlohmann::json();
  } else if (field == "history") {  // [] for a plain case and a session's first turn
    *value = request.turn != nullptr && !request.turn->history.is_null() ? request.turn->history
                                                                         : nlohmann::json::array();
  } else if (field == "input") {
    *value = request.input.is_null() ? nlohmann::json::object() : request.input;
  } else {
    // The loader admits only id, question, repeat, input and input.KEY[.KEY].
    const nlohmann::json* node = &request.input;
    std::string_view path = std::string_view(field).substr(kInput.size());
    while (true) {
      const size_t dot = path.find('.');
      const std::string key(path.substr(0, dot));
      if (!node->is_object() || !node->contains(key)) {
        *error = "the case's input has no '" + field.substr(kInput.size()) + "' (used as !case " +
                 field + " in the pipeline's request)";
        return false;
      }
      node = &node->at(key);
      if (dot == std::string_view::npos) break;
      path = path.substr(dot + 1);
    }
    *value = *node;
  }
  return true;
}

std::string TextOf(const nlohmann::json& value) {
  // `replace`: a stray invalid UTF-8 byte in a case's input must not throw here.
  return value.is_string() ? value.get<std::string>()
                           : value.dump(-1, ' ', false, nlohmann::json::error_handler_t::replace);
}

// The text of a !text list, each field's text passed through `encode`.
template <typename Encode>
bool JoinText(const std::vector<RequestPart>& pieces, const Fields& request, Encode encode,
              std::string* out, std::string* error) {
  out->clear();
  for (const RequestPart& piece : pieces) {
    if (piece.kind != RequestPart::Kind::kCaseField) {
      out->append(TextOf(piece.value));
      continue;
    }
    nlohmann::json value;
    if (!Lookup(piece.field, request, &value, error)) return false;
    out->append(encode(TextOf(value)));
  }
  return true;
}

bool RenderPart(const RequestPart& part, const Fields& request, nlohmann::json* out,
                std::string* error) {
  switch (part.kind) {
    case RequestPart::Kind::kValue:
      *out = part.value;
      return true;
    case RequestPart::Kind::kCaseField:
      return Lookup(part.field, request, out, error);
    case RequestPart::Kind::kText: {
      std::string text;
      if (!JoinText(
              part.items, request, [](std::string s) { return s; }, &text, error)) {
        return false;
      }
      *out = std::move(text);
      return true;
    }
    case RequestPart::Kind::kObject:
      *out = nlohmann::json::object();
      for (size_t i = 0; i < part.items.size(); ++i) {
        if (!RenderPart(part.items[i], request, &(*out)[part.keys[i]], error)) return false;
      }
      return true;
    case RequestPart::Kind::kArray:
      *out = nlohmann::json::array();
      for (const RequestPart& item : part.items) {
        out->push_back(nullptr);
        if (!RenderPart(item, request, &out->back(), error)) return false;
      }
      return true;
  }
  return true;
}

bool IsUnreserved(unsigned char c) {
  return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || (c >= '0' && c <= '9') || c == '-' ||
         c == '.' || c == '_' || c == '~';
}

// RFC 3986 §2.3 percent-encoding of every byte but the unreserved ones.
std::string PercentEncode(const std::string& text) {
  static constexpr char kHex[] = "0123456789ABCDEF";
  std::string out;
  out.reserve(text.size());
  for (const char ch : text) {
    const auto c = static_cast<unsigned char>(ch);
    if (IsUnreserved(c)) {
      out.push_back(ch);
    } else {
      out.push_back('%');
      out.push_back(kHex[c >> 4]);
      out.push_back(kHex[c & 0xF]);
    }
  }
  return out;
}

}  // namespace

bool RenderRequest(const std::optional<RequestPart>& block, const PipelineRequest& request,
                   nlohmann::json* out, std::string* error) {
  if (!block.has_value()) {
    *out = request.ToJson();
    return true;
  }
  return RenderPart(*block, Fields(request), out, error);
}

bool RenderUrl(const std::string& url, const std::vector<RequestPart>& pieces,
               const PipelineRequest& request, std::string* out, std::string* error) {
  if (pieces.empty()) {
    *out = url;
    return true;
  }
  return JoinText(pieces, Fields(request), PercentEncode, out, error);
}

std::string QueryString(const nlohmann::json& body) {
  std::string out;
  for (const auto& [key, value] : body.items()) {
    out += (out.empty() ? "?" : "&") + PercentEncode(key) + "=" + PercentEncode(TextOf(value));
  }
  return out;
}

}  // namespace plumb
