#include "runner/run_record.h"

#include <limits.h>
#include <stdlib.h>
#include <unistd.h>

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <ctime>

#include "runner/sha256.h"

namespace plumb {
namespace {

/// The corpus directory as an absolute path, so `plumb report` finds the documents from any
/// working directory on the machine that ran the suite.
std::string AbsolutePath(const std::string& path) {
  char resolved[PATH_MAX];
  return realpath(path.c_str(), resolved) != nullptr ? std::string(resolved) : path;
}

}  // namespace

nlohmann::json BuildRunRecord(const RunContext& ctx, const RunAggregates& aggregates,
                              const std::vector<ThresholdOutcome>& thresholds,
                              const RunVerdict& verdict) {
  const Suite& suite = *ctx.suite;
  nlohmann::json cases = nlohmann::json::object();
  for (size_t index : ctx.selected) {
    const Case& c = suite.cases[index];
    nlohmann::json spans = nlohmann::json::array();
    for (const GoldSpan& span : c.sources) {
      spans.push_back({{"doc", span.doc},
                       {"start", span.start},
                       {"end", span.end},
                       {"text", span.text},
                       {"text_sha256", Sha256Hex(span.text)}});
    }
    // The gold itself travels with the run, so reports and drift need no suite file.
    nlohmann::json gold = {{"gold_hash", c.gold_hash}, {"question", c.question},
                           {"answers", c.answers},     {"patterns", c.patterns},
                           {"tags", c.tags},           {"sources", spans},
                           {"line", c.pos.line}};
    if (c.number) {
      gold["number"] = {
          {"value", c.number->value}, {"tolerance", c.number->tolerance}, {"unit", c.number->unit}};
    }
    cases[c.id] = std::move(gold);
  }
  nlohmann::json labels = ctx.labels;
  return {
      {"plumb_run", 1},
      {"tool", {{"name", "plumb"}, {"version", PLUMB_VERSION}}},
      {"suite",
       {{"name", suite.name},
        {"path", suite.path},
        {"hash", suite.suite_hash},
        {"normalize", metrics::NormalizationProfileName(suite.normalize)},
        {"lang", suite.lang},
        {"retrieval_k", suite.retrieval_k},
        {"case_pass", suite.case_pass},
        {"min_overlap", suite.min_overlap},
        {"max_error_rate", suite.max_error_rate}}},
      {"corpus_fingerprint", ctx.corpus_fingerprint},
      {"corpus_dir", suite.corpus_dir ? nlohmann::json(AbsolutePath(*suite.corpus_dir))
                                      : nlohmann::json()},
      {"pipeline", {{"name", ctx.pipeline_name}, {"config", ctx.pipeline_config}}},
      {"labels", labels},
      {"started_at", ctx.started_at},
      {"finished_at", ctx.finished_at},
      {"shard", {{"index", ctx.shard.index}, {"count", ctx.shard.count}}},
      {"repeat", ctx.repeat},
      {"jobs", ctx.jobs},
      {"resumed", ctx.resumed},
      {"cases", cases},
      {"aggregates", AggregatesToJson(aggregates)},
      {"thresholds", ThresholdsToJson(thresholds)},
      {"verdict", {{"exit_code", verdict.code}, {"reason", verdict.reason}}},
  };
}

bool WriteFileAtomically(const std::string& path, const std::string& contents, std::string* error) {
  const std::string temp = path + ".tmp." + std::to_string(getpid());
  std::FILE* f = std::fopen(temp.c_str(), "wb");
  if (f == nullptr) {
    *error = "cannot write " + temp + ": " + std::strerror(errno);
    return false;
  }
  const bool written = std::fwrite(contents.data(), 1, contents.size(), f) == contents.size();
  const bool flushed = std::fflush(f) == 0 && fsync(fileno(f)) == 0;
  const bool closed = std::fclose(f) == 0;
  if (!written || !flushed || !closed || std::rename(temp.c_str(), path.c_str()) != 0) {
    *error = "cannot write " + path + ": " + std::strerror(errno);
    std::remove(temp.c_str());
    return false;
  }
  return true;
}

std::string NowIso8601() {
  const std::time_t now = std::time(nullptr);
  std::tm utc{};
  gmtime_r(&now, &utc);
  char buffer[32];
  std::strftime(buffer, sizeof buffer, "%Y-%m-%dT%H:%M:%SZ", &utc);
  return buffer;
}

bool ParseLabel(const std::string& text, std::string* key, std::string* value, std::string* error) {
  const size_t eq = text.find('=');
  if (eq == std::string::npos || eq == 0) {
    *error = "--label takes KEY=VALUE (e.g. --label git=abc123); got '" + text + "'";
    return false;
  }
  *key = text.substr(0, eq);
  *value = text.substr(eq + 1);
  return true;
}

}  // namespace plumb
