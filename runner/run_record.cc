#include "runner/run_record.h"

#include <limits.h>
#include <stdlib.h>
#include <unistd.h>

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <ctime>

#include "runner/json_writer.h"
#include "runner/sha256.h"

namespace plumb {
namespace {

/// The corpus directory as an absolute path, so `plumb report` finds the documents from any
/// working directory on the machine that ran the suite.
std::string AbsolutePath(const std::string& path) {
  char resolved[PATH_MAX];
  return realpath(path.c_str(), resolved) != nullptr ? std::string(resolved) : path;
}

// Bytes of layout around one case's gold in run.json, and around each list item and source.
constexpr size_t kCaseEntryBytes = 256;
constexpr size_t kItemBytes = 16;
constexpr size_t kSourceEntryBytes = 192;
// Bytes of run.json besides the cases: the header and the run's aggregates, and per tag and
// metric in the tag's aggregates.
constexpr size_t kRecordBytes = 64 << 10;
constexpr size_t kTagBytes = 192;

}  // namespace

std::string RunRecordCaseMembers(const RunContext& ctx) {
  const Suite& suite = *ctx.suite;
  JsonWriter w(2, 2);  // inside the record's object and its "cases" object
  // About the text's size (keys, indentation and the hashes besides the gold's own text), so the
  // buffer is set aside once instead of growing through every doubling.
  size_t bytes = 0;
  for (size_t index : ctx.selected) {
    const Case& c = suite.cases[index];
    bytes += kCaseEntryBytes + c.id.size() + c.question.size();
    for (const std::string& text : c.answers) bytes += text.size() + kItemBytes;
    for (const std::string& text : c.patterns) bytes += text.size() + kItemBytes;
    for (const std::string& text : c.tags) bytes += text.size() + kItemBytes;
    for (const GoldSpan& span : c.sources) {
      bytes += kSourceEntryBytes + span.doc.size() + span.text.size();
    }
  }
  w.Reserve(bytes);
  for (size_t index : ctx.selected) {
    const Case& c = suite.cases[index];
    w.Key(c.id).BeginObject().Member("gold_hash", c.gold_hash).Member("question", c.question);
    w.Member("answers", c.answers).Member("patterns", c.patterns).Member("tags", c.tags);
    w.Key("sources").BeginArray();
    for (const GoldSpan& span : c.sources) {
      w.BeginObject()
          .Member("doc", span.doc)
          .Member("start", span.start)
          .Member("end", span.end)
          .Member("text", span.text)
          .Member("text_sha256", Sha256Hex(span.text))
          .EndObject();
    }
    w.EndArray().Member("line", c.pos.line);
    if (c.number) {
      w.Key("number")
          .BeginObject()
          .Member("value", c.number->value)
          .Member("tolerance", c.number->tolerance)
          .Member("unit", c.number->unit)
          .EndObject();
    }
    w.EndObject();
  }
  return w.Take();
}

std::string BuildRunRecord(const RunContext& ctx, const RunAggregates& aggregates,
                           const std::vector<ThresholdOutcome>& thresholds,
                           const RunVerdict& verdict, std::string_view case_members) {
  const Suite& suite = *ctx.suite;
  JsonWriter w(2);
  w.Reserve(case_members.size() + kRecordBytes +
            kTagBytes * aggregates.tags.size() * (aggregates.metrics.size() + 1));
  w.BeginObject().Member("plumb_run", 1);
  w.Key("tool").BeginObject().Member("name", "plumb").Member("version", PLUMB_VERSION).EndObject();
  w.Key("suite")
      .BeginObject()
      .Member("name", suite.name)
      .Member("path", suite.path)
      .Member("hash", suite.suite_hash)
      .Member("normalize", metrics::NormalizationProfileName(suite.normalize))
      .Member("lang", suite.lang)
      .Key("retrieval_k")
      .BeginArray();
  for (int k : suite.retrieval_k) w.Int(k);
  w.EndArray().Key("case_pass").BeginObject();
  for (const auto& [metric, minimum] : suite.case_pass) w.Member(metric, minimum);
  w.EndObject()
      .Member("min_overlap", suite.min_overlap)
      .Member("max_error_rate", suite.max_error_rate)
      .EndObject();
  w.Member("corpus_fingerprint", ctx.corpus_fingerprint).Key("corpus_dir");
  if (suite.corpus_dir) {
    w.String(AbsolutePath(*suite.corpus_dir));
  } else {
    w.Null();
  }
  w.Key("pipeline").BeginObject().Member("name", ctx.pipeline_name);
  w.Key("config").Value(ctx.pipeline_config).EndObject();
  w.Key("labels").BeginObject();
  for (const auto& [key, value] : ctx.labels) w.Member(key, value);
  w.EndObject()
      .Member("started_at", ctx.started_at)
      .Member("finished_at", ctx.finished_at)
      .Key("shard")
      .BeginObject()
      .Member("index", ctx.shard.index)
      .Member("count", ctx.shard.count)
      .EndObject()
      .Member("repeat", ctx.repeat)
      .Member("jobs", ctx.jobs)
      .Member("resumed", ctx.resumed);
  w.Key("cases").BeginObject().Members(case_members).EndObject();
  w.Key("aggregates").Value(AggregatesToJson(aggregates));
  w.Key("thresholds").Value(ThresholdsToJson(thresholds));
  w.Key("verdict")
      .BeginObject()
      .Member("exit_code", verdict.code)
      .Member("reason", verdict.reason)
      .EndObject();
  w.EndObject();
  std::string text = w.Take();
  text += '\n';
  return text;
}

bool WriteFileAtomically(const std::string& path, const std::string& contents, std::string* error) {
  const std::string temp = path + ".tmp." + std::to_string(getpid());
  std::FILE* f = std::fopen(temp.c_str(), "wb");
  if (f == nullptr) {
    *error = "cannot write " + temp + ": " + std::strerror(errno);
    return false;
  }
  const bool written = std::fwrite(contents.data(), 1, contents.size(), f) == contents.size();
  // No fsync: like the journal, the record is safe from a crash of plumb (rename is atomic),
  // not from a power cut, which a CI run answers by running again; fsync of a large run.json
  // costs more wall time than the scoring.
  const bool flushed = std::fflush(f) == 0;
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
