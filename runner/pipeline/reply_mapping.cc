#include "runner/pipeline/reply_mapping.h"

#include <re2/re2.h>

#include <optional>

namespace plumb {

struct ReplyMapping::Pointer {
  std::string key;   // the `reply:` key, for NeverResolved
  std::string text;  // as written
  bool mapped = false;
  // "/name" with no further '/' or '~' (the usual case) is looked up directly; other
  // pointers are parsed once here.
  bool one_member = false;
  std::string member;
  nlohmann::json::json_pointer parsed;
  mutable std::atomic<bool> resolved{false};
};

// Where each member of a citation or retrieved item is: a member name, or a pointer into the
// item when it starts with '/'.
struct ItemMember {
  std::string name;  // as written, for messages
  std::optional<nlohmann::json::json_pointer> pointer;

  const nlohmann::json* Find(const nlohmann::json& item) const {
    if (!pointer) {
      auto it = item.find(name);
      return it == item.end() ? nullptr : &*it;
    }
    if (!item.contains(*pointer)) return nullptr;
    return &item.at(*pointer);
  }
};

struct ReplyMapping::SourceList {
  Pointer* at = nullptr;
  ItemMember doc, start, end, quote;
};

namespace {

// No reply reads a billion tokens; a count beyond it (or negative, or not a number) is a
// pipeline's bug, not usage, and is left out rather than summed into the run's totals (where
// 1e31 would not fit an int64_t at all: found by tests/fuzz/reply_fuzz.cc).
constexpr double kMaxUsageTokens = 1e9;

bool ReadCount(const nlohmann::json& value, std::optional<int64_t>* out) {
  if (!value.is_number()) return false;
  const double count = value.get<double>();
  if (!(count >= 0 && count <= kMaxUsageTokens)) return false;
  *out = value.is_number_integer() ? value.get<int64_t>() : static_cast<int64_t>(count);
  return true;
}

bool ParseMember(const std::string& written, const char* fallback, ItemMember* out,
                 std::string* error) {
  out->name = written.empty() ? fallback : written;
  if (out->name[0] != '/') return true;
  try {
    out->pointer = nlohmann::json::json_pointer(out->name);
  } catch (const nlohmann::json::exception&) {
    *error = "'" + out->name + "' is not a JSON Pointer";
    return false;
  }
  return true;
}

bool ParseOffset(const nlohmann::json& item, const ItemMember& member, std::optional<int64_t>* out,
                 std::string* error) {
  const nlohmann::json* value = member.Find(item);
  if (value == nullptr || value->is_null()) return true;
  if (!value->is_number_integer()) {
    *error = "field '" + member.name + "' must be an integer code-point offset, got " +
             value->dump(-1, ' ', false, nlohmann::json::error_handler_t::replace);
    return false;
  }
  *out = value->get<int64_t>();
  return true;
}

}  // namespace

ReplyMapping::ReplyMapping() {
  std::string ignored;
  Init(ReplyFields(), &ignored);  // the protocol's own pointers always parse
}

ReplyMapping::ReplyMapping(Empty) {}

ReplyMapping::~ReplyMapping() = default;

std::unique_ptr<ReplyMapping> ReplyMapping::Create(const ReplyFields& fields, std::string* error) {
  std::unique_ptr<ReplyMapping> m(new ReplyMapping(Empty()));
  if (!m->Init(fields, error)) return nullptr;
  return m;
}

bool ReplyMapping::Init(const ReplyFields& fields, std::string* error) {
  bool ok = true;
  auto add = [&](const char* key, const std::string& written, const char* fallback) -> Pointer* {
    auto p = std::make_unique<Pointer>();
    p->key = key;
    p->mapped = !written.empty();
    any_mapped_ = any_mapped_ || p->mapped;
    p->text = p->mapped ? written : fallback;
    const std::string& t = p->text;
    p->one_member = t.size() > 1 && t[0] == '/' && t.find_first_of("/~", 1) == std::string::npos;
    if (p->one_member) {
      p->member = t.substr(1);
    } else {
      try {
        p->parsed = nlohmann::json::json_pointer(t);
      } catch (const nlohmann::json::exception&) {
        *error = "'reply." + std::string(key) + "' is not a JSON Pointer: '" + t + "'";
        ok = false;
      }
    }
    pointers_.push_back(std::move(p));
    return pointers_.back().get();
  };
  answer_ = add("answer", fields.answer, "/answer");
  abstained_ = add("abstained", fields.abstained, "/abstained");
  if (!fields.refusal.empty()) refusal_ = add("refusal", fields.refusal, "");
  if (!fields.latency_ms.empty()) latency_ms_ = add("latency_ms", fields.latency_ms, "");
  if (!fields.input_tokens.empty()) {
    input_tokens_ = {add("input_tokens", fields.input_tokens, "")};
  } else {
    input_tokens_ = {add("input_tokens", "", "/usage/input_tokens"),
                     add("input_tokens", "", "/usage/prompt_tokens")};
  }
  if (!fields.output_tokens.empty()) {
    output_tokens_ = {add("output_tokens", fields.output_tokens, "")};
  } else {
    output_tokens_ = {add("output_tokens", "", "/usage/output_tokens"),
                      add("output_tokens", "", "/usage/completion_tokens")};
  }
  auto list = [&](const char* key, const std::optional<ReplyFields::SourceList>& given,
                  const char* fallback) {
    auto l = std::make_unique<SourceList>();
    const ReplyFields::SourceList spec = given.value_or(ReplyFields::SourceList());
    l->at = add(key, spec.at, fallback);
    std::string member_error;
    if (!ParseMember(spec.doc, "doc", &l->doc, &member_error) ||
        !ParseMember(spec.start, "start", &l->start, &member_error) ||
        !ParseMember(spec.end, "end", &l->end, &member_error) ||
        !ParseMember(spec.quote, "quote", &l->quote, &member_error)) {
      *error = "in 'reply." + std::string(key) + "': " + member_error;
      ok = false;
    }
    return l;
  };
  citations_ = list("citations", fields.citations, "/citations");
  retrieved_ = list("retrieved", fields.retrieved, "/retrieved");
  if (!fields.abstain_when.empty()) {
    abstain_when_ = std::make_unique<re2::RE2>(fields.abstain_when, re2::RE2::Quiet);
    if (!abstain_when_->ok()) {
      *error = "invalid RE2 pattern in 'reply.abstain_when': " + abstain_when_->error();
      ok = false;
    }
  }
  return ok;
}

const nlohmann::json* ReplyMapping::Resolve(const nlohmann::json& reply, const Pointer& p) const {
  const nlohmann::json* found = nullptr;
  if (p.one_member) {
    if (reply.is_object()) {
      auto it = reply.find(p.member);
      if (it != reply.end()) found = &*it;
    }
  } else {
    try {
      if (reply.contains(p.parsed)) found = &reply.at(p.parsed);
    } catch (const nlohmann::json::exception&) {
      found = nullptr;
    }
  }
  if (found != nullptr && !p.resolved.load(std::memory_order_relaxed)) {
    p.resolved.store(true, std::memory_order_relaxed);
  }
  return found;
}

bool ReplyMapping::ReadList(const nlohmann::json& reply, const SourceList& list, const char* what,
                            std::vector<SourceRef>* out, bool* present, std::string* error) const {
  const nlohmann::json* items = Resolve(reply, *list.at);
  *present = items != nullptr && items->is_array();
  if (items == nullptr || items->is_null()) return true;
  if (!items->is_array()) {
    *error = std::string(what) + " at '" + list.at->text + "' must be a list";
    return false;
  }
  out->reserve(items->size());
  for (size_t i = 0; i < items->size(); ++i) {
    const nlohmann::json& item = (*items)[i];
    SourceRef ref;
    std::string item_error;
    if (item.is_string()) {  // a bare doc id: a doc-only reference
      ref.doc = item.get<std::string>();
      out->push_back(std::move(ref));
      continue;
    }
    if (!item.is_object()) {
      item_error = "expected an object {" + list.doc.name + ", " + list.start.name + ", " +
                   list.end.name + "} or {" + list.doc.name + ", " + list.quote.name + "}, got " +
                   item.dump(-1, ' ', false, nlohmann::json::error_handler_t::replace);
    } else if (const nlohmann::json* doc = list.doc.Find(item);
               doc == nullptr || !doc->is_string()) {
      item_error = "missing string field '" + list.doc.name + "'";
    } else {
      ref.doc = doc->get<std::string>();
      if (ParseOffset(item, list.start, &ref.start, &item_error) &&
          ParseOffset(item, list.end, &ref.end, &item_error)) {
        if (ref.start.has_value() != ref.end.has_value()) {
          item_error = "a span needs both '" + list.start.name + "' and '" + list.end.name + "'";
        } else if (const nlohmann::json* quote = list.quote.Find(item);
                   quote != nullptr && !quote->is_null()) {
          if (quote->is_string()) {
            ref.quote = quote->get<std::string>();
          } else {
            item_error = "field '" + list.quote.name + "' must be a string";
          }
        }
      }
    }
    if (!item_error.empty()) {
      *error = std::string(what) + "[" + std::to_string(i) + "]: " + item_error;
      return false;
    }
    out->push_back(std::move(ref));
  }
  return true;
}

bool ReplyMapping::Read(const nlohmann::json& reply, Response* out, std::string* error) const {
  *out = Response();
  if (!reply.is_object()) {
    *error = "response is not a JSON object";
    return false;
  }
  if (any_mapped_) replies_.fetch_add(1, std::memory_order_relaxed);
  const nlohmann::json* answer = Resolve(reply, *answer_);
  if (answer == nullptr) {
    *error = "response has no answer at '" + answer_->text + "'";
    return false;
  }
  if (answer->is_string()) {
    out->answer = answer->get<std::string>();
  } else if (!answer->is_null()) {
    *error = "answer at '" + answer_->text + "' must be a string or null, got " +
             std::string(answer->type_name());
    return false;
  }
  bool abstains = !out->answer.has_value();
  if (const nlohmann::json* flag = Resolve(reply, *abstained_);
      flag != nullptr && !flag->is_null()) {
    if (!flag->is_boolean()) {
      *error = "'abstained' at '" + abstained_->text + "' must be true or false";
      return false;
    }
    abstains = abstains || flag->get<bool>();
  }
  if (refusal_ != nullptr) {
    if (const nlohmann::json* refusal = Resolve(reply, *refusal_);
        refusal != nullptr && !refusal->is_null()) {
      if (!refusal->is_string()) {
        *error = "'refusal' at '" + refusal_->text + "' must be a string or null, got " +
                 std::string(refusal->type_name());
        return false;
      }
      abstains = abstains || !refusal->get_ref<const std::string&>().empty();
    }
  }
  if (abstain_when_ != nullptr && out->answer.has_value() &&
      re2::RE2::PartialMatch(*out->answer, *abstain_when_)) {
    abstains = true;
  }
  out->abstained = abstains;
  if (abstains) out->answer.reset();
  bool citations_present = false;
  if (!ReadList(reply, *citations_, "citations", &out->citations, &citations_present, error)) {
    return false;
  }
  if (!ReadList(reply, *retrieved_, "retrieved", &out->retrieved, &out->has_retrieved, error)) {
    return false;
  }
  for (const Pointer* p : input_tokens_) {
    if (const nlohmann::json* v = Resolve(reply, *p);
        v != nullptr && ReadCount(*v, &out->input_tokens))
      break;
  }
  for (const Pointer* p : output_tokens_) {
    if (const nlohmann::json* v = Resolve(reply, *p);
        v != nullptr && ReadCount(*v, &out->output_tokens))
      break;
  }
  if (latency_ms_ != nullptr) {
    if (const nlohmann::json* v = Resolve(reply, *latency_ms_);
        v != nullptr && v->is_number() && v->get<double>() >= 0 && v->get<double>() < 1e12) {
      out->service_latency_ms = v->get<double>();
    }
  }
  return true;
}

std::vector<ReplyMapping::Unresolved> ReplyMapping::NeverResolved() const {
  std::vector<Unresolved> out;
  if (replies_read() == 0) return out;
  for (const auto& p : pointers_) {
    if (p->mapped && !p->resolved.load(std::memory_order_relaxed)) out.push_back({p->key, p->text});
  }
  return out;
}

const ReplyMapping& ProtocolReplyMapping() {
  static const ReplyMapping* const mapping = new ReplyMapping();
  return *mapping;
}

}  // namespace plumb
