#include "runner/pipeline/request_template.h"

#include "runner/suite/env_expand.h"

namespace plumb {
namespace {

constexpr std::string_view kOpen = "{{";
constexpr std::string_view kClose = "}}";

constexpr std::string_view kInput = "input.";

bool IsPlaceholderName(std::string_view name) {
  return name == "id" || name == "question" || name == "repeat" || name == "input" ||
         (name.substr(0, kInput.size()) == kInput && name.size() > kInput.size());
}

std::string UnknownPlaceholder(std::string_view name) {
  return "unknown placeholder '{{" + std::string(name) +
         "}}'; use {{id}}, {{question}}, {{repeat}}, {{input}} or {{input.KEY}}";
}

// The value a placeholder name stands for; false with a sentence when there is none.
bool Lookup(std::string_view name, const PipelineRequest& request, nlohmann::json* value,
            std::string* error) {
  if (name == "id") {
    *value = request.id;
    return true;
  }
  if (name == "question") {
    *value = request.question;
    return true;
  }
  if (name == "repeat") {
    *value = request.repeat;
    return true;
  }
  if (name == "input") {
    *value = request.input;
    return true;
  }
  if (!IsPlaceholderName(name)) {
    *error = UnknownPlaceholder(name);
    return false;
  }
  const nlohmann::json* node = &request.input;
  std::string_view path = name.substr(kInput.size());
  while (true) {
    const size_t dot = path.find('.');
    const std::string key(path.substr(0, dot));
    if (!node->is_object() || !node->contains(key)) {
      *error = "the case's input has no '" + std::string(name.substr(kInput.size())) +
               "' (used as {{" + std::string(name) + "}} in the request template)";
      return false;
    }
    node = &node->at(key);
    if (dot == std::string_view::npos) break;
    path = path.substr(dot + 1);
  }
  *value = *node;
  return true;
}

std::string TextOf(const nlohmann::json& value) {
  // `replace`: a stray invalid UTF-8 byte in a case's input must not throw here.
  return value.is_string() ? value.get<std::string>()
                           : value.dump(-1, ' ', false, nlohmann::json::error_handler_t::replace);
}

// Replaces every placeholder in `text`, passing each value's text through `encode`.
template <typename Encode>
bool Substitute(std::string_view text, const PipelineRequest* request, Encode encode,
                std::string* out, std::string* error) {
  out->clear();
  size_t at = 0;
  while (true) {
    const size_t open = text.find(kOpen, at);
    if (open == std::string_view::npos) break;
    const size_t close = text.find(kClose, open + kOpen.size());
    if (close == std::string_view::npos) {
      *error = "unterminated '{{' in '" + std::string(text) + "'";
      return false;
    }
    out->append(text.substr(at, open - at));
    const std::string_view name = text.substr(open + kOpen.size(), close - open - kOpen.size());
    nlohmann::json value;
    if (request == nullptr) {  // checking only: any request has every field but input keys
      if (!IsPlaceholderName(name)) {
        *error = UnknownPlaceholder(name);
        return false;
      }
    } else if (!Lookup(name, *request, &value, error)) {
      return false;
    }
    out->append(encode(TextOf(value)));
    at = close + kClose.size();
  }
  out->append(text.substr(at));
  return true;
}

// The name inside a string that is exactly one placeholder, or empty.
std::string_view SolePlaceholder(std::string_view text) {
  if (text.size() <= kOpen.size() + kClose.size()) return {};
  if (text.substr(0, kOpen.size()) != kOpen) return {};
  if (text.substr(text.size() - kClose.size()) != kClose) return {};
  const std::string_view name =
      text.substr(kOpen.size(), text.size() - kOpen.size() - kClose.size());
  if (name.find(kOpen) != std::string_view::npos || name.find(kClose) != std::string_view::npos) {
    return {};
  }
  return name;
}

bool RenderNode(const nlohmann::json& templ, const PipelineRequest& request, nlohmann::json* out,
                std::string* error) {
  if (templ.is_object()) {
    *out = nlohmann::json::object();
    for (const auto& [key, value] : templ.items()) {
      if (!RenderNode(value, request, &(*out)[key], error)) return false;
    }
    return true;
  }
  if (templ.is_array()) {
    *out = nlohmann::json::array();
    for (const nlohmann::json& item : templ) {
      out->push_back(nullptr);
      if (!RenderNode(item, request, &out->back(), error)) return false;
    }
    return true;
  }
  if (!templ.is_string()) {
    *out = templ;
    return true;
  }
  const std::string& text = templ.get_ref<const std::string&>();
  if (const std::string_view name = SolePlaceholder(text); !name.empty()) {
    return Lookup(name, request, out, error);
  }
  std::string rendered;
  if (!Substitute(
          text, &request, [](std::string value) { return value; }, &rendered, error)) {
    return false;
  }
  *out = std::move(rendered);
  return true;
}

bool IsUnreserved(unsigned char c) {
  return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || (c >= '0' && c <= '9') || c == '-' ||
         c == '.' || c == '_' || c == '~';
}

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

bool ExpandBodyEnv(nlohmann::json* templ, std::vector<std::string>* secrets, std::string* error) {
  if (templ->is_object() || templ->is_array()) {
    for (nlohmann::json& item : *templ) {
      if (!ExpandBodyEnv(&item, secrets, error)) return false;
    }
    return true;
  }
  if (!templ->is_string()) return true;
  const std::string& text = templ->get_ref<const std::string&>();
  if (text.find('$') == std::string::npos) return true;
  ExpandedString expanded;
  std::string expand_error;
  if (!ExpandEnv(text, &expanded, secrets, &expand_error)) {
    *error = expand_error + " (in 'body')";
    return false;
  }
  *templ = expanded.value;
  return true;
}

bool RenderBody(const nlohmann::json& templ, const PipelineRequest& request, nlohmann::json* out,
                std::string* error) {
  if (templ.is_null()) {
    *out = request.ToJson();
    return true;
  }
  return RenderNode(templ, request, out, error);
}

bool RenderUrl(std::string_view templ, const PipelineRequest& request, std::string* out,
               std::string* error) {
  return Substitute(templ, &request, PercentEncode, out, error);
}

bool CheckPlaceholders(std::string_view templ, std::string* error) {
  std::string ignored;
  return Substitute(
      templ, nullptr, [](std::string value) { return value; }, &ignored, error);
}

}  // namespace plumb
