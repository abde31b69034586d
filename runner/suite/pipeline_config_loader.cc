#include "runner/suite/pipeline_config_loader.h"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <string>

#include "runner/suite/did_you_mean.h"
#include "runner/suite/env_expand.h"
#include "runner/suite/flow_yaml.h"
#include "runner/suite/reply_block_reader.h"
#include "runner/suite/request_block_reader.h"

namespace plumb {
namespace {

const std::vector<std::string> kSubprocessKeys = {"command", "mode", "env", "cwd", "ready"};
const std::vector<std::string> kHttpKeys = {"url",  "method",   "headers",   "request", "retries",
                                            "rate", "insecure", "ready_url", "stream"};
// Keys an earlier format used; each is refused with its entry in the new form.
const std::vector<std::string> kRetiredKeys = {"body", "map"};
const std::vector<std::string> kCommonKeys = {"timeout", "jobs",    "max_response_bytes",
                                              "reply",   "offsets", "startup_timeout",
                                              "price",   "refresh", "refresh_timeout"};
const std::vector<std::string> kRefreshHttpKeys = {"url", "method", "headers", "request"};

// The answer of a streamed reply is the text delta of the common chat-completion streaming
// shape unless `reply: {answer: ...}` names another (issue 21).
constexpr const char* kDefaultStreamDelta = "/choices/0/delta/content";

bool Contains(const std::vector<std::string>& names, const std::string& name) {
  return std::find(names.begin(), names.end(), name) != names.end();
}

// A non-negative decimal ("12", "0.5") at the start of `text`; the rest goes to *rest.
bool LeadingNumber(std::string_view text, double* value, std::string_view* rest) {
  size_t i = 0;
  while (i < text.size() && text[i] >= '0' && text[i] <= '9') ++i;
  if (i == 0) return false;
  if (i < text.size() && text[i] == '.') {
    size_t fraction = ++i;
    while (i < text.size() && text[i] >= '0' && text[i] <= '9') ++i;
    if (i == fraction) return false;
  }
  *value = std::stod(std::string(text.substr(0, i)));
  *rest = text.substr(i);
  return true;
}

class PipelineReader {
 public:
  PipelineReader(bool expand_env, NodeChecker* check) : expand_env_(expand_env), check_(*check) {}

  void Read(const SourceEntry& entry, PipelineConfig* config) {
    config->pos = check_.Pos(entry.key);
    const SourceNode& node = entry.value;
    std::vector<std::string> valid = kSubprocessKeys;
    valid.insert(valid.end(), kHttpKeys.begin(), kHttpKeys.end());
    valid.insert(valid.end(), kCommonKeys.begin(), kCommonKeys.end());
    auto keys = check_.Keys(node, valid, "in pipeline '" + config->name + "'", "a pipeline config",
                            kRetiredKeys);
    if (!node.IsMapping()) return;
    config->redacted_config = SourceNodeToJson(node);
    const SourceNode* ready_node = nullptr;  // `ready:`, checked against the mode at the end

    bool has_command = keys.count("command") > 0;
    bool has_url = keys.count("url") > 0;
    if (has_command == has_url) {
      check_.Error(entry.key,
                   has_command ? "pipeline '" + config->name + "' has both 'command' and 'url'"
                               : "pipeline '" + config->name + "' has neither 'command' nor 'url'",
                   "give 'command' for a subprocess pipeline or 'url' for an HTTP one");
    }
    config->kind = has_url && !has_command ? PipelineKind::kHttp : PipelineKind::kSubprocess;
    if (has_command != has_url) {
      const std::vector<std::string>& foreign =
          config->kind == PipelineKind::kHttp ? kSubprocessKeys : kHttpKeys;
      for (const auto& [key, key_entry] : keys) {
        if (!Contains(foreign, key)) continue;
        check_.Error(key_entry->key,
                     "'" + key + "' applies to " +
                         (config->kind == PipelineKind::kHttp ? "subprocess pipelines ('command')"
                                                              : "HTTP pipelines ('url')") +
                         ", and pipeline '" + config->name + "' is " +
                         (config->kind == PipelineKind::kHttp ? "an HTTP one" : "a subprocess"),
                     "remove it");
      }
    }

    for (const auto& [key, key_entry] : keys) {
      const SourceNode& value = key_entry->value;
      if (key == "command") {
        ReadCommand(value, config);
      } else if (key == "mode") {
        std::string mode;
        if (!check_.String(value, key, &mode)) continue;
        if (mode == "persistent") {
          config->mode = SubprocessMode::kPersistent;
        } else if (mode == "per-case") {
          config->mode = SubprocessMode::kPerCase;
        } else {
          check_.Error(value, "unknown mode '" + mode + "'",
                       DidYouMeanHint(mode, {"persistent", "per-case"}, "modes"));
        }
      } else if (key == "ready") {
        std::string ready;
        if (!check_.String(value, key, &ready)) continue;
        if (ready != "line") {
          check_.Error(value, "unknown ready signal '" + ready + "'",
                       "write 'ready: line' for a pipeline that writes {\"ready\": true} when it "
                       "can take requests, or leave 'ready' out");
          continue;
        }
        config->ready_line = true;
        ready_node = &value;
      } else if (key == "ready_url") {
        ExpandedString url;
        if (!ReadExpanded(value, key, config, &url)) continue;
        config->redacted_config["ready_url"] = url.redacted;
        const bool scheme_known = expand_env_ || url.value.rfind("${", 0) != 0;
        if (scheme_known && url.value.rfind("http://", 0) != 0 &&
            url.value.rfind("https://", 0) != 0) {
          check_.Error(
              value, "'ready_url' must start with http:// or https://, got '" + url.redacted + "'");
          continue;
        }
        config->ready_url = url;
      } else if (key == "startup_timeout") {
        std::string text;
        if (!ScalarAsString(value, &text) || !ParseDuration(text, &config->startup_timeout_ms) ||
            config->startup_timeout_ms <= 0) {
          check_.Error(value, "invalid startup_timeout " + DescribeValue(value),
                       "write a duration such as 10m, 90s or 500ms");
        }
      } else if (key == "env") {
        ReadExpandedMap(value, key, config, &config->env, &config->redacted_config["env"]);
        for (const auto& [name, expanded] : config->env) {
          if (!IsNameOf(name, "_") || (name[0] >= '0' && name[0] <= '9')) {
            for (const SourceEntry& e : value.entries) {
              if (e.key.scalar == name) {
                check_.Error(e.key, "'" + name + "' is not a valid environment variable name",
                             "use letters, digits and '_', not starting with a digit");
              }
            }
          }
        }
      } else if (key == "cwd") {
        ExpandedString cwd;
        if (ReadExpanded(value, key, config, &cwd)) {
          config->redacted_config["cwd"] = cwd.redacted;
          config->cwd = cwd;
        }
      } else if (key == "url") {
        ExpandedString url;
        if (value.tag == "!text") {
          if (!ReadUrlPieces(value, expand_env_, &check_, &config->url_pieces, &url,
                             &config->secrets)) {
            continue;
          }
        } else if (!ReadExpanded(value, key, config, &url)) {
          continue;
        } else if (url.value.find("{{") != std::string::npos) {
          check_.Error(value, "'{{...}}' placeholders are not read in 'url'",
                       "write 'url: " + UpgradeBodyToRequest(value) +
                           "' (a !text list: strings, and !case FIELD pieces percent-encoded)");
          continue;
        }
        config->redacted_config["url"] = url.redacted;
        // Unexpanded, a URL that starts with `${` has its scheme in a variable: unknown yet.
        const bool scheme_known = expand_env_ || url.value.rfind("${", 0) != 0;
        if (scheme_known && url.value.rfind("http://", 0) != 0 &&
            url.value.rfind("https://", 0) != 0) {
          check_.Error(value,
                       "'url' must start with http:// or https://, got '" + url.redacted + "'");
        }
        config->url = url;
      } else if (key == "method") {
        std::string method;
        if (!check_.String(value, key, &method)) continue;
        std::transform(method.begin(), method.end(), method.begin(),
                       [](unsigned char c) { return char(std::toupper(c)); });
        if (!Contains({"GET", "POST", "PUT", "PATCH"}, method)) {
          check_.Error(value, "unsupported HTTP method '" + value.scalar + "'",
                       "use GET, POST, PUT or PATCH");
          continue;
        }
        config->method = method;
      } else if (key == "headers") {
        ReadExpandedMap(value, key, config, &config->headers, &config->redacted_config["headers"]);
      } else if (key == "body") {
        check_.Error(key_entry->key,
                     "'body' with {{...}} placeholders is now 'request', where case fields are "
                     "inserted as JSON values",
                     "write 'request: " + UpgradeBodyToRequest(value) + "' in its place");
      } else if (key == "request") {
        RequestPart request;
        if (ReadRequestBlock(value, expand_env_, &check_, &request,
                             &config->redacted_config["request"], &config->secrets)) {
          config->request = std::move(request);
        }
      } else if (key == "map") {
        check_.Error(key_entry->key,
                     "'map' is now 'reply', where citations and retrieved each name their own "
                     "members",
                     "write 'reply: " + UpgradeMapToReply(value) + "' in its place");
      } else if (key == "reply") {
        ReadReplyBlock(value, &check_, &config->reply);
      } else if (key == "retries") {
        int64_t retries;
        if (!check_.Int(value, key, &retries)) continue;
        if (retries < 0 || retries > 100) {
          check_.Error(value, "'retries' is " + value.scalar + ", out of range",
                       "expected an integer from 0 to 100");
          continue;
        }
        config->retries = int(retries);
      } else if (key == "rate") {
        std::string rate;
        if (!ScalarAsString(value, &rate) || !ParseRate(rate, &config->rate_per_second)) {
          check_.Error(value, "invalid rate " + DescribeValue(value),
                       "write requests per second or minute, e.g. 20/s or 100/m");
        }
      } else if (key == "insecure") {
        check_.Bool(value, key, &config->insecure);
      } else if (key == "refresh") {
        ReadRefresh(value, config);
      } else if (key == "refresh_timeout") {
        std::string text;
        if (!ScalarAsString(value, &text) || !ParseDuration(text, &config->refresh_timeout_ms) ||
            config->refresh_timeout_ms <= 0) {
          check_.Error(value, "invalid refresh_timeout " + DescribeValue(value),
                       "write a duration such as 30m, 90s or 500ms");
        }
      } else if (key == "timeout") {
        std::string text;
        if (!ScalarAsString(value, &text) || !ParseDuration(text, &config->timeout_ms)) {
          check_.Error(value, "invalid timeout " + DescribeValue(value),
                       "write a duration such as 30s, 500ms or 2m, or a number of seconds");
        }
      } else if (key == "jobs") {
        int64_t jobs;
        if (!check_.Int(value, key, &jobs)) continue;
        if (jobs < 1 || jobs > 1024) {
          check_.Error(value, "'jobs' is " + value.scalar + ", out of range",
                       "expected an integer from 1 to 1024");
          continue;
        }
        config->jobs = int(jobs);
      } else if (key == "max_response_bytes") {
        std::string text;
        if (!ScalarAsString(value, &text) || !ParseByteSize(text, &config->max_response_bytes)) {
          check_.Error(value, "invalid max_response_bytes " + DescribeValue(value),
                       "write a size such as 16MiB or 512KiB, or a number of bytes");
        }
      } else if (key == "stream") {
        std::string format;
        if (!check_.String(value, key, &format)) continue;
        if (format == "sse") {
          config->stream = StreamFormat::kSse;
        } else if (format == "lines") {
          config->stream = StreamFormat::kLines;
        } else {
          check_.Error(value, "unknown stream format '" + format + "'",
                       "write 'stream: sse' for server-sent events or 'stream: lines' for one "
                       "JSON object per line; " +
                           DidYouMeanHint(format, {"sse", "lines"}, "formats"));
        }
      } else if (key == "price") {
        ReadPrice(value, config);
      } else if (key == "offsets") {
        std::string unit;
        if (!check_.String(value, key, &unit)) continue;
        if (!metrics::ParseOffsetUnit(unit, &config->offsets)) {
          check_.Error(value, "unknown offset unit '" + unit + "'",
                       DidYouMeanHint(unit, {"codepoints", "utf8", "utf16"}, "units"));
        }
      }
    }
    if (ready_node != nullptr && config->mode == SubprocessMode::kPerCase) {
      check_.Error(*ready_node, "'ready: line' needs mode: persistent",
                   "a per-case process starts for every case, so its start-up is part of each "
                   "case's latency; remove 'ready' or use mode: persistent");
    }
    if (config->stream != StreamFormat::kNone && config->reply.answer.empty()) {
      config->reply.answer = kDefaultStreamDelta;
    }
    std::sort(config->secrets.begin(), config->secrets.end());
    config->secrets.erase(std::unique(config->secrets.begin(), config->secrets.end()),
                          config->secrets.end());
  }

 private:
  static std::string DescribeValue(const SourceNode& value) {
    return value.IsScalar() ? "'" + value.scalar + "'" : "(" + DescribeNode(value) + ")";
  }

  /// `price: {input: 0.50, output: 1.50, per: 1M, currency: EUR}`.
  void ReadPrice(const SourceNode& node, PipelineConfig* config) {
    auto keys = check_.Keys(node, {"input", "output", "per", "currency"},
                            "in the price of pipeline '" + config->name + "'", "a price");
    if (!node.IsMapping()) return;
    TokenPrice price;
    bool ok = true;
    for (const char* side : {"input", "output"}) {
      auto it = keys.find(side);
      if (it == keys.end()) {
        check_.Error(node, std::string("the price has no '") + side + "'",
                     "give the price of input and output tokens, e.g. price: {input: 0.50, "
                     "output: 1.50, per: 1M, currency: EUR}");
        ok = false;
        continue;
      }
      double amount = 0;
      if (!check_.Number(it->second->value, side, &amount)) {
        ok = false;
        continue;
      }
      if (!(amount >= 0) || !std::isfinite(amount)) {
        check_.Error(it->second->value,
                     std::string("'") + side + "' must be a price at or above 0");
        ok = false;
        continue;
      }
      (std::string(side) == "input" ? price.input : price.output) = amount;
    }
    if (auto it = keys.find("per"); it != keys.end()) {
      std::string text;
      if (!ScalarAsString(it->second->value, &text) || !ParseTokenCount(text, &price.per)) {
        check_.Error(it->second->value, "invalid 'per' " + DescribeValue(it->second->value),
                     "write how many tokens the prices are for: 1M, 1K or a number such as 1000");
        ok = false;
      }
    }
    if (auto it = keys.find("currency"); it != keys.end()) {
      if (!check_.String(it->second->value, "currency", &price.currency)) {
        ok = false;
      } else if (price.currency.size() > 16 ||
                 !std::all_of(price.currency.begin(), price.currency.end(), [](char c) {
                   return std::isalpha(static_cast<unsigned char>(c)) != 0;
                 })) {
        check_.Error(it->second->value, "invalid currency '" + price.currency + "'",
                     "write a currency code in letters, such as EUR or USD");
        ok = false;
      }
    }
    if (ok) config->price = price;
  }

  bool ReadExpanded(const SourceNode& node, const std::string& field, PipelineConfig* config,
                    ExpandedString* out) {
    std::string templ;
    if (!check_.String(node, field, &templ)) return false;
    std::string error;
    bool ok = !expand_env_     ? RedactEnv(templ, out, &error)
              : field == "url" ? ExpandEnvInUrl(templ, out, &config->secrets, &error)
                               : ExpandEnv(templ, out, &config->secrets, &error);
    if (!ok) {
      check_.Error(node, error + " (in '" + field + "')",
                   "'${NAME}' takes its value from the environment plumb runs in; '$$' is a "
                   "literal '$'");
    }
    return ok;
  }

  void ReadCommand(const SourceNode& node, PipelineConfig* config) {
    nlohmann::json redacted;
    if (node.IsScalar()) {
      // One string is argv[0] alone: plumb never splits on spaces the way a shell would.
      ExpandedString item;
      if (ReadExpanded(node, "command", config, &item)) {
        redacted = item.redacted;
        config->command.push_back(item);
      }
    } else if (check_.Sequence(node, "command", "strings")) {
      redacted = nlohmann::json::array();
      if (node.items.empty()) {
        check_.Error(node, "'command' is empty", "give the program and its arguments");
      }
      for (const SourceNode& item_node : node.items) {
        ExpandedString item;
        if (!ReadExpanded(item_node, "command", config, &item)) continue;
        redacted.push_back(item.redacted);
        config->command.push_back(item);
      }
    }
    if (!config->command.empty() && config->command[0].value.empty()) {
      check_.Error(node, "the program in 'command' is empty");
    }
    config->redacted_config["command"] = redacted;
  }

  /// `refresh:` as an argv list, or as {url, method, headers, request}.
  void ReadRefresh(const SourceNode& node, PipelineConfig* config) {
    RefreshConfig refresh;
    nlohmann::json& redacted = config->redacted_config["refresh"];
    const std::string hint =
        "write an argv list such as [my-indexer, --docs, \"{corpus}\"] or a request such as "
        "{url: http://127.0.0.1:8088/refresh, request: {corpus: \"{corpus}\"}}";
    if (node.IsSequence()) {
      redacted = nlohmann::json::array();
      if (node.items.empty()) check_.Error(node, "'refresh' is empty", hint);
      for (const SourceNode& item_node : node.items) {
        ExpandedString item;
        if (item_node.IsMapping()) {
          // `[tool, {corpus}]`: YAML reads an unquoted {corpus} as a mapping.
          check_.Error(item_node, "an argument of 'refresh' is a mapping",
                       "quote placeholders: \"{corpus}\"");
          continue;
        }
        if (!ReadExpanded(item_node, "refresh", config, &item)) continue;
        redacted.push_back(item.redacted);
        refresh.command.push_back(item);
      }
      if (!refresh.command.empty() && refresh.command[0].value.empty()) {
        check_.Error(node, "the program in 'refresh' is empty");
      }
    } else if (node.IsMapping()) {
      auto keys = check_.Keys(node, kRefreshHttpKeys, "in 'refresh'", "a refresh request");
      redacted = nlohmann::json::object();
      if (keys.count("url") == 0) check_.Error(node, "'refresh' has no 'url'", hint);
      for (const auto& [key, key_entry] : keys) {
        const SourceNode& value = key_entry->value;
        if (key == "url") {
          ExpandedString url;
          if (!ReadExpanded(value, "url", config, &url)) continue;
          const bool scheme_known = expand_env_ || url.value.rfind("${", 0) != 0;
          if (scheme_known && url.value.rfind("http://", 0) != 0 &&
              url.value.rfind("https://", 0) != 0) {
            check_.Error(value, "'refresh.url' must start with http:// or https://, got '" +
                                    url.redacted + "'");
            continue;
          }
          redacted["url"] = url.redacted;
          refresh.url = url;
        } else if (key == "method") {
          std::string method;
          if (!check_.String(value, key, &method)) continue;
          std::transform(method.begin(), method.end(), method.begin(),
                         [](unsigned char c) { return char(std::toupper(c)); });
          if (!Contains({"GET", "POST", "PUT", "PATCH"}, method)) {
            check_.Error(value, "unsupported HTTP method '" + value.scalar + "'",
                         "use GET, POST, PUT or PATCH");
            continue;
          }
          redacted["method"] = method;
          refresh.method = method;
        } else if (key == "headers") {
          ReadExpandedMap(value, "refresh.headers", config, &refresh.headers, &redacted["headers"]);
        } else if (key == "request") {
          RequestPart request;
          if (ReadRequestBlock(value, expand_env_, &check_, &request, &redacted["request"],
                               &config->secrets)) {
            refresh.request = std::move(request);
          }
        }
      }
    } else {
      check_.Error(node, "'refresh' must be an argv list or a request mapping", hint);
      return;
    }
    config->refresh = std::move(refresh);
  }

  void ReadExpandedMap(const SourceNode& node, const std::string& field, PipelineConfig* config,
                       std::map<std::string, ExpandedString>* out, nlohmann::json* redacted) {
    std::vector<std::pair<const SourceNode*, const SourceNode*>> entries;
    check_.StringMap(node, field, &entries);
    *redacted = nlohmann::json::object();
    for (const auto& [key, value] : entries) {
      ExpandedString expanded;
      if (!ReadExpanded(*value, field + "." + key->scalar, config, &expanded)) continue;
      (*redacted)[key->scalar] = expanded.redacted;
      (*out)[key->scalar] = expanded;
    }
  }

  bool expand_env_;
  NodeChecker& check_;
};

}  // namespace

bool PipelineExpansion::Expands(const std::string& name, bool first) const {
  if (!enabled) return false;
  if (only.empty()) return true;
  return std::find(only.begin(), only.end(), name) != only.end() ||
         (first && std::find(only.begin(), only.end(), "") != only.end());
}

void ReadPipelines(const SourceNode& pipelines, const PipelineExpansion& expansion,
                   NodeChecker* check, std::vector<PipelineConfig>* out) {
  if (!check->Mapping(pipelines, "pipelines")) return;
  std::map<std::string, const SourceNode*> seen;
  for (const SourceEntry& entry : pipelines.entries) {
    const bool first = &entry == &pipelines.entries.front();
    PipelineConfig config;
    if (!ScalarAsString(entry.key, &config.name)) {
      check->Error(entry.key, "a pipeline name must be a string, got " + DescribeNode(entry.key));
      continue;
    }
    // The name becomes a directory (DIR/<pipeline>/) when several pipelines run.
    if (!IsNameOf(config.name, "._-") || config.name == "." || config.name == "..") {
      check->Error(entry.key, "invalid pipeline name '" + config.name + "'",
                   "use letters, digits, '.', '_' and '-'");
    }
    auto [it, inserted] = seen.emplace(config.name, &entry.key);
    if (!inserted) {
      check->Error(entry.key, "duplicate pipeline '" + config.name + "'",
                   "first defined at " + FormatPos(check->Pos(*it->second)));
      continue;
    }
    PipelineReader reader(expansion.Expands(config.name, first), check);
    reader.Read(entry, &config);
    out->push_back(std::move(config));
  }
}

bool ParseDuration(std::string_view text, int64_t* milliseconds) {
  double value;
  std::string_view unit;
  if (!LeadingNumber(text, &value, &unit)) return false;
  double scale;
  if (unit.empty() || unit == "s") {
    scale = 1000;
  } else if (unit == "ms") {
    scale = 1;
  } else if (unit == "m") {
    scale = 60000;
  } else {
    return false;
  }
  double ms = std::round(value * scale);
  if (ms < 1 || ms > 1e12) return false;
  *milliseconds = int64_t(ms);
  return true;
}

bool ParseByteSize(std::string_view text, int64_t* bytes) {
  double value;
  std::string_view unit;
  if (!LeadingNumber(text, &value, &unit)) return false;
  if (value != std::floor(value)) return false;
  double scale;
  if (unit.empty() || unit == "B") {
    scale = 1;
  } else if (unit == "KiB") {
    scale = 1024;
  } else if (unit == "MiB") {
    scale = 1024.0 * 1024;
  } else if (unit == "GiB") {
    scale = 1024.0 * 1024 * 1024;
  } else {
    return false;
  }
  double total = value * scale;
  if (total < 1 || total > 9e15) return false;
  *bytes = int64_t(total);
  return true;
}

bool ParseTokenCount(std::string_view text, double* tokens) {
  double value;
  std::string_view unit;
  if (!LeadingNumber(text, &value, &unit)) return false;
  if (unit == "K" || unit == "k") {
    value *= 1e3;
  } else if (unit == "M") {
    value *= 1e6;
  } else if (!unit.empty()) {
    return false;
  }
  if (!(value >= 1) || value > 1e15) return false;
  *tokens = value;
  return true;
}

bool ParseRate(std::string_view text, double* per_second) {
  double value;
  std::string_view unit;
  if (!LeadingNumber(text, &value, &unit)) return false;
  if (unit == "/s") {
    *per_second = value;
  } else if (unit == "/m") {
    *per_second = value / 60;
  } else {
    return false;
  }
  return *per_second > 0;
}

}  // namespace plumb
