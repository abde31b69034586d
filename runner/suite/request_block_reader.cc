#include "runner/suite/request_block_reader.h"

#include <algorithm>
#include <set>

#include "runner/suite/did_you_mean.h"
#include "runner/suite/env_expand.h"
#include "runner/suite/flow_yaml.h"

namespace plumb {
namespace {

const std::vector<std::string> kCaseFields = {
    "id",    "question", "repeat", "input",  "session",      "turn", "history",
    "grade", "rubric",   "gold",   "answer", "gold_sources", "cited"};
const std::vector<std::string> kTags = {"!case", "!text", "!env"};
constexpr char kFieldHint[] =
    "case fields are id, question, repeat, input, input.KEY, session, turn and history; a "
    "grader's pipeline also has "
    "grade, rubric, gold, answer, gold_sources and cited";

bool IsCaseField(const std::string& field) {
  if (std::find(kCaseFields.begin(), kCaseFields.end(), field) != kCaseFields.end()) return true;
  if (field.rfind("input.", 0) != 0 || field.size() == 6) return false;
  // input.a.b: no empty key between the dots.
  return field.back() != '.' && field.find("..") == std::string::npos;
}

class RequestReader {
 public:
  RequestReader(bool expand_env, NodeChecker* check, std::vector<std::string>* secrets)
      : expand_env_(expand_env), check_(*check), secrets_(secrets) {}

  bool ok() const { return ok_; }

  void Error(const SourceNode& at, std::string message, std::string hint) {
    check_.Error(at, std::move(message), std::move(hint));
    ok_ = false;
  }

  void Read(const SourceNode& node, RequestPart* out, nlohmann::json* redacted) {
    if (node.tag == "!case") {
      ReadCaseField(node, out, redacted);
      return;
    }
    if (node.tag == "!env") {
      ReadEnv(node, out, redacted);
      return;
    }
    if (node.tag == "!text") {
      ReadText(node, out, redacted);
      return;
    }
    if (!node.tag.empty()) {
      Error(node, "unknown tag '" + node.tag + "' in 'request'",
            ClosestName(node.tag, kTags).empty()
                ? "use !case FIELD, !text [...] or !env NAME"
                : "did you mean '" + ClosestName(node.tag, kTags) + "'?");
      return;
    }
    if (node.IsMapping()) {
      out->kind = RequestPart::Kind::kObject;
      *redacted = nlohmann::json::object();
      std::set<std::string> seen;
      for (const SourceEntry& entry : node.entries) {
        std::string key;
        if (!ScalarAsString(entry.key, &key)) {
          Error(entry.key, "a key in 'request' must be a name, got " + DescribeNode(entry.key), "");
          continue;
        }
        if (!seen.insert(key).second) {
          Error(entry.key, "duplicate key '" + key + "' in 'request'", "");
          continue;
        }
        out->keys.push_back(key);
        out->items.emplace_back();
        Read(entry.value, &out->items.back(), &(*redacted)[key]);
      }
      return;
    }
    if (node.IsSequence()) {
      out->kind = RequestPart::Kind::kArray;
      *redacted = nlohmann::json::array();
      for (const SourceNode& item : node.items) {
        out->items.emplace_back();
        redacted->push_back(nullptr);
        Read(item, &out->items.back(), &redacted->back());
      }
      return;
    }
    out->kind = RequestPart::Kind::kValue;
    out->value = SourceNodeToJson(node);
    *redacted = out->value;
    if (node.IsScalar() && node.scalar.find("{{") != std::string::npos) {
      Error(node, "'{{...}}' placeholders are not read in 'request'",
            "write the value as " + UpgradeBodyToRequest(node));
    }
  }

 private:
  void ReadCaseField(const SourceNode& node, RequestPart* out, nlohmann::json* redacted) {
    std::string field;
    if (!node.IsScalar() || !ScalarAsString(node, &field)) {
      Error(node, "'!case' takes a case field name, got " + DescribeNode(node),
            std::string("e.g. !case question; ") + kFieldHint);
      return;
    }
    if (!IsCaseField(field)) {
      const std::string close = ClosestName(field, kCaseFields);
      Error(node, "unknown case field '" + field + "' in '!case'",
            close.empty() ? std::string(kFieldHint) : "did you mean '" + close + "'?");
      return;
    }
    out->kind = RequestPart::Kind::kCaseField;
    out->field = field;
    *redacted = {{"!case", field}};
  }

  void ReadEnv(const SourceNode& node, RequestPart* out, nlohmann::json* redacted) {
    std::string name;
    if (!node.IsScalar() || !ScalarAsString(node, &name) || !IsNameOf(name, "_") ||
        (name[0] >= '0' && name[0] <= '9')) {
      Error(node, "'!env' takes an environment variable name, got " + FlowYaml(node),
            "e.g. !env API_TOKEN (letters, digits and '_', not starting with a digit)");
      return;
    }
    ExpandedString expanded;
    std::string error;
    const std::string templ = "${" + name + "}";
    if (!(expand_env_ ? ExpandEnv(templ, &expanded, secrets_, &error)
                      : RedactEnv(templ, &expanded, &error))) {
      Error(node, error + " (in 'request')",
            "'!env NAME' takes its value from the environment plumb runs in");
      return;
    }
    out->kind = RequestPart::Kind::kValue;
    out->value = expanded.value;
    *redacted = expanded.redacted;
  }

  void ReadText(const SourceNode& node, RequestPart* out, nlohmann::json* redacted) {
    if (!node.IsSequence()) {
      Error(node, "'!text' takes a list of pieces, got " + DescribeNode(node),
            "e.g. !text [\"Question: \", !case question]");
      return;
    }
    out->kind = RequestPart::Kind::kText;
    nlohmann::json pieces = nlohmann::json::array();
    for (const SourceNode& item : node.items) {
      RequestPart piece;
      nlohmann::json piece_redacted;
      if (item.tag == "!case" || item.tag == "!env") {
        Read(item, &piece, &piece_redacted);
      } else if (item.tag.empty() && item.IsScalar()) {
        piece.value = item.scalar;
        piece_redacted = item.scalar;
        if (item.scalar.find("{{") != std::string::npos) {
          Error(item, "'{{...}}' placeholders are not read in 'request'",
                "write the piece as " + UpgradeBodyToRequest(item) + " inside the list");
        }
      } else {
        Error(item,
              "a '!text' piece is a string, !case FIELD or !env NAME, got " +
                  (item.tag.empty() ? DescribeNode(item) : "'" + item.tag + "'"),
              "");
        continue;
      }
      out->items.push_back(std::move(piece));
      pieces.push_back(std::move(piece_redacted));
    }
    *redacted = {{"!text", pieces}};
  }

  bool expand_env_;
  NodeChecker& check_;
  std::vector<std::string>* secrets_;
  bool ok_ = true;
};

SourceNode Scalar(std::string text, std::string tag, bool quoted) {
  SourceNode node;
  node.kind = SourceNode::Kind::kScalar;
  node.scalar = std::move(text);
  node.tag = std::move(tag);
  node.quoted = quoted;
  return node;
}

// The string `node` of an old body template, placeholders made into !case inserts.
SourceNode UpgradeString(const SourceNode& node) {
  const std::string& text = node.scalar;
  std::vector<SourceNode> pieces;
  size_t at = 0;
  while (at < text.size()) {
    const size_t open = text.find("{{", at);
    const size_t close = open == std::string::npos ? open : text.find("}}", open + 2);
    if (close == std::string::npos) {
      pieces.push_back(Scalar(text.substr(at), "", true));
      break;
    }
    if (open > at) pieces.push_back(Scalar(text.substr(at, open - at), "", true));
    pieces.push_back(Scalar(text.substr(open + 2, close - open - 2), "!case", false));
    at = close + 2;
  }
  if (pieces.size() == 1 && pieces[0].tag == "!case") return pieces[0];
  if (pieces.size() == 1) return node;
  SourceNode list;
  list.kind = SourceNode::Kind::kSequence;
  list.tag = "!text";
  list.items = std::move(pieces);
  return list;
}

SourceNode Upgrade(const SourceNode& node) {
  SourceNode out = node;
  if (node.IsScalar() && node.scalar.find("{{") != std::string::npos) return UpgradeString(node);
  if (node.IsScalar() && node.scalar.size() > 3 && node.scalar.rfind("${", 0) == 0 &&
      node.scalar.back() == '}' && node.scalar.find('}') == node.scalar.size() - 1) {
    return Scalar(node.scalar.substr(2, node.scalar.size() - 3), "!env", false);
  }
  for (SourceNode& item : out.items) item = Upgrade(item);
  for (SourceEntry& entry : out.entries) entry.value = Upgrade(entry.value);
  return out;
}

}  // namespace

bool ReadRequestBlock(const SourceNode& node, bool expand_env, NodeChecker* check, RequestPart* out,
                      nlohmann::json* redacted, std::vector<std::string>* secrets) {
  RequestReader reader(expand_env, check, secrets);
  reader.Read(node, out, redacted);
  return reader.ok();
}

bool ReadUrlPieces(const SourceNode& node, bool expand_env, NodeChecker* check,
                   std::vector<RequestPart>* pieces, ExpandedString* url,
                   std::vector<std::string>* secrets) {
  bool ok = true;
  if (!node.IsSequence()) {
    check->Error(node, "'url: !text' takes a list of pieces, got " + DescribeNode(node),
                 "e.g. url: !text [\"http://127.0.0.1:8088/\", !case input.route]");
    return false;
  }
  for (const SourceNode& item : node.items) {
    RequestPart piece;
    if (item.tag == "!case") {
      RequestReader reader(expand_env, check, secrets);
      nlohmann::json ignored;
      reader.Read(item, &piece, &ignored);
      if (!reader.ok()) {
        ok = false;
        continue;
      }
      url->value += "{!case " + piece.field + "}";
      url->redacted += "{!case " + piece.field + "}";
    } else if (item.tag.empty() && item.IsScalar()) {
      ExpandedString text;
      std::string error;
      if (!(expand_env ? ExpandEnv(item.scalar, &text, secrets, &error)
                       : RedactEnv(item.scalar, &text, &error))) {
        check->Error(item, error + " (in 'url')",
                     "'${NAME}' takes its value from the environment plumb runs in; '$$' is a "
                     "literal '$'");
        ok = false;
        continue;
      }
      piece.value = text.value;
      url->value += text.value;
      url->redacted += text.redacted;
    } else {
      check->Error(item,
                   "a 'url: !text' piece is a string or !case FIELD, got " +
                       (item.tag.empty() ? DescribeNode(item) : "'" + item.tag + "'"),
                   "");
      ok = false;
      continue;
    }
    pieces->push_back(std::move(piece));
  }
  return ok;
}

std::string UpgradeBodyToRequest(const SourceNode& body) { return FlowYaml(Upgrade(body)); }

}  // namespace plumb
