#include "runner/suite/reply_block_reader.h"

#include <re2/re2.h>

#include <vector>

#include "runner/suite/flow_yaml.h"

namespace plumb {
namespace {

const std::vector<std::string> kReplyKeys = {"answer",       "abstained",    "refusal",
                                             "abstain_when", "input_tokens", "output_tokens",
                                             "latency_ms",   "citations",    "retrieved"};
const std::vector<std::string> kRetiredReplyKeys = {"fields", "usage"};
const std::vector<std::string> kListKeys = {"at", "doc", "start", "end", "quote"};
constexpr char kPointerHint[] = "RFC 6901 pointers are \"\" or start with '/', e.g. /data/text";

bool ReadPointer(const SourceNode& node, const std::string& field, NodeChecker* check,
                 std::string* out) {
  if (!check->String(node, field, out)) return false;
  if (IsJsonPointer(*out)) return true;
  check->Error(node, "'" + field + "' is not a JSON Pointer: '" + *out + "'", kPointerHint);
  return false;
}

void ReadSourceList(const SourceNode& node, const std::string& field, NodeChecker* check,
                    std::optional<ReplyFields::SourceList>* out) {
  ReplyFields::SourceList list;
  if (node.IsScalar()) {
    if (ReadPointer(node, field, check, &list.at)) *out = list;
    return;
  }
  auto keys = check->Keys(node, kListKeys, "in '" + field + "'", "'" + field + "'");
  if (!node.IsMapping()) return;
  bool ok = true;
  if (auto it = keys.find("at"); it == keys.end()) {
    check->Error(node, "'" + field + "' has no 'at'",
                 "give the pointer to the list, e.g. {at: /data/" + field + ", doc: source}");
    ok = false;
  } else {
    ok = ReadPointer(it->second->value, field + ".at", check, &list.at) && ok;
  }
  for (const auto& [key, entry] : keys) {
    if (key == "at") continue;
    std::string name;
    if (!check->NonEmptyString(entry->value, field + "." + key, &name)) {
      ok = false;
      continue;
    }
    if (name[0] == '/' && !IsJsonPointer(name)) {
      check->Error(entry->value,
                   "'" + field + "." + key + "' is not a JSON Pointer: '" + name + "'",
                   "a member name, or a pointer into the item such as /source/title");
      ok = false;
      continue;
    }
    (key == "doc"     ? list.doc
     : key == "start" ? list.start
     : key == "end"   ? list.end
                      : list.quote) = name;
  }
  if (ok) *out = list;
}

// The upgrade message for a retired key inside `reply:`.
void RefuseRetired(const SourceEntry& entry, NodeChecker* check) {
  const std::string key = entry.key.scalar;
  if (key == "usage") {
    std::string usage;
    ScalarAsString(entry.value, &usage);
    check->Error(entry.key, "'usage' is now one pointer per count",
                 "write 'input_tokens: " + FlowYamlString(usage + "/input_tokens") +
                     "' and 'output_tokens: " + FlowYamlString(usage + "/output_tokens") +
                     "' (or the service's own names, e.g. /usage/prompt_tokens)");
    return;
  }
  std::string members;
  for (const SourceEntry& e : entry.value.entries) {
    members += ", " + FlowYaml(e.key) + ": " + FlowYaml(e.value);
  }
  check->Error(entry.key,
               "'fields' renamed members in citations and retrieved at once; each list names "
               "its own now",
               "write 'citations: {at: /citations" + members + "}' and 'retrieved: {at: " +
                   "/retrieved" + members + "}', each with the names its list uses");
}

}  // namespace

bool IsJsonPointer(const std::string& pointer) {
  if (!pointer.empty() && pointer[0] != '/') return false;
  for (size_t i = 0; i < pointer.size(); ++i) {
    if (pointer[i] == '~' &&
        (i + 1 == pointer.size() || (pointer[i + 1] != '0' && pointer[i + 1] != '1'))) {
      return false;
    }
  }
  return true;
}

void ReadReplyBlock(const SourceNode& node, NodeChecker* check, ReplyFields* out) {
  out->given = true;
  auto keys = check->Keys(node, kReplyKeys, "in 'reply'", "'reply'", kRetiredReplyKeys);
  for (const auto& [key, entry] : keys) {
    const SourceNode& value = entry->value;
    const std::string field = "reply." + key;
    if (key == "fields" || key == "usage") {
      RefuseRetired(*entry, check);
    } else if (key == "citations") {
      ReadSourceList(value, field, check, &out->citations);
    } else if (key == "retrieved") {
      ReadSourceList(value, field, check, &out->retrieved);
    } else if (key == "abstain_when") {
      if (!check->NonEmptyString(value, field, &out->abstain_when)) continue;
      RE2 pattern(out->abstain_when, RE2::Quiet);
      if (!pattern.ok()) {
        check->Error(value, "invalid RE2 pattern in '" + field + "': " + pattern.error(),
                     "RE2 syntax is Perl's without backreferences or lookaround; (?i) ignores "
                     "case");
        out->abstain_when.clear();
      }
    } else {
      std::string* target = key == "answer"          ? &out->answer
                            : key == "abstained"     ? &out->abstained
                            : key == "refusal"       ? &out->refusal
                            : key == "input_tokens"  ? &out->input_tokens
                            : key == "output_tokens" ? &out->output_tokens
                                                     : &out->latency_ms;
      ReadPointer(value, field, check, target);
    }
  }
}

std::string UpgradeMapToReply(const SourceNode& map) {
  std::string out, usage, fields;
  const SourceNode* citations = nullptr;
  const SourceNode* retrieved = nullptr;
  if (map.IsMapping()) {
    for (const SourceEntry& e : map.entries) {
      const std::string& key = e.key.scalar;
      if (key == "usage") {
        ScalarAsString(e.value, &usage);
      } else if (key == "fields" && e.value.IsMapping()) {
        for (const SourceEntry& f : e.value.entries) {
          fields += ", " + FlowYaml(f.key) + ": " + FlowYaml(f.value);
        }
      } else if (key == "citations") {
        citations = &e.value;
      } else if (key == "retrieved") {
        retrieved = &e.value;
      } else {
        out += (out.empty() ? "" : ", ") + FlowYaml(e.key) + ": " + FlowYaml(e.value);
      }
    }
  }
  if (!usage.empty()) {
    out += std::string(out.empty() ? "" : ", ") +
           "input_tokens: " + FlowYamlString(usage + "/input_tokens") +
           ", output_tokens: " + FlowYamlString(usage + "/output_tokens");
  }
  auto list = [&](const char* name, const SourceNode* at) {
    if (at == nullptr && fields.empty()) return;
    const std::string pointer = at != nullptr ? FlowYaml(*at) : std::string("/") + name;
    out += std::string(out.empty() ? "" : ", ") + name + ": " +
           (fields.empty() ? pointer : "{at: " + pointer + fields + "}");
  };
  list("citations", citations);
  list("retrieved", retrieved);
  return "{" + out + "}";
}

}  // namespace plumb
