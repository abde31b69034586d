#include "runner/run/run_record.h"

#include <limits.h>
#include <stdlib.h>
#include <time.h>
#include <unistd.h>

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <iterator>

#include "runner/base/atomic_file.h"
#include "runner/base/json_writer.h"
#include "runner/base/report_stdout.h"
#include "runner/base/sha256.h"

namespace plumb {
namespace {

/// The corpus directory as an absolute path, so `plumb report` finds the documents from any
/// working directory on the machine that ran the suite.
std::string AbsolutePath(const std::string& path) {
  char resolved[PATH_MAX];
  return realpath(path.c_str(), resolved) != nullptr ? std::string(resolved) : path;
}

// The case entries are handed out in pieces of about this size.
constexpr size_t kPieceBytes = 256 << 10;

}  // namespace

bool WriteRunRecordCases(const RunContext& ctx, const std::function<bool(std::string_view)>& sink) {
  const Suite& suite = *ctx.suite;
  JsonWriter w(2, 2);      // inside the record's object and its "cases" object
  w.CompactDeeperThan(2);  // one line per case entry
  w.Reserve(2 * kPieceBytes);
  for (size_t index : ctx.selected) {
    const Case& c = suite.cases[index];
    w.Key(c.id).BeginObject();
    w.PlainKey("gold_hash").String(c.gold_hash).PlainKey("question").String(c.question);
    w.PlainKey("answers").StringArray(c.answers).PlainKey("patterns").StringArray(c.patterns);
    w.PlainKey("tags").StringArray(c.tags).PlainKey("sources").BeginArray();
    for (const GoldSpan& span : c.sources) {
      w.BeginObject()
          .PlainKey("doc")
          .String(span.doc)
          .PlainKey("start")
          .Int(span.start)
          .PlainKey("end")
          .Int(span.end)
          .PlainKey("text")
          .String(span.text)
          .PlainKey("text_sha256")
          .String(Sha256Hex(span.text))
          .EndObject();
    }
    // "index" is the case's place in the suite (includes concatenated), which "line" alone
    // cannot give across files: `plumb merge` puts shards' cases back in suite order by it.
    w.EndArray()
        .PlainKey("line")
        .Int(c.pos.line)
        .PlainKey("index")
        .Int(static_cast<int64_t>(index));
    if (c.number) {
      w.PlainKey("number")
          .BeginObject()
          .PlainKey("value")
          .Double(c.number->value)
          .PlainKey("tolerance")
          .Double(c.number->tolerance)
          .PlainKey("unit")
          .String(c.number->unit)
          .EndObject();
    }
    if (c.after >= 0) {
      w.PlainKey("after").String(suite.updates[size_t(c.after)].id);
      w.PlainKey("stale_answers").StringArray(c.stale_answers);
    }
    w.EndObject();
    if (w.size() >= kPieceBytes) {
      if (!sink(w.text())) return false;
      w.DropText();
    }
  }
  return w.size() == 0 || sink(w.text());
}

std::string RunRecordHead(const RunContext& ctx) {
  const Suite& suite = *ctx.suite;
  JsonWriter w(2);
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
  w.EndObject().Key("correct_from").BeginArray();
  for (const std::string& metric : suite.correct_from) w.String(metric);
  w.EndArray()
      .Member("min_overlap", suite.min_overlap)
      .Member("max_error_rate", suite.max_error_rate)
      .EndObject();
  w.Member("corpus_fingerprint", ctx.corpus_fingerprint).Key("corpus_dir");
  if (suite.corpus_dir) {
    w.String(AbsolutePath(*suite.corpus_dir));
  } else {
    w.Null();
  }
  if (!suite.updates.empty()) {
    w.Key("updates").BeginArray();
    for (const CorpusUpdate& u : suite.updates) {
      w.BeginObject().Member("id", u.id).Key("docs").StringArray(u.docs);
      w.Key("remove").StringArray(u.remove).EndObject();
    }
    w.EndArray();
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
  if (!ctx.grading.is_null()) w.Key("grading").Value(ctx.grading);
  w.Key("cases").BeginObject();
  return w.Take();
}

std::string RunRecordTail(const RunContext& ctx, const RunAggregates& aggregates,
                          const std::vector<ThresholdOutcome>& thresholds,
                          const RunVerdict& verdict) {
  JsonWriter w(2, 2);  // inside the record's object and its "cases" object
  if (!ctx.selected.empty()) w.MarkFilled();
  w.EndObject().MarkFilled();
  // Why cases failed comes first: it is what a reader of a failed run asks first.
  w.Key("failures").Value(FailuresToJson(aggregates));
  nlohmann::json aggregates_json = AggregatesToJson(aggregates);
  // Corpus updates (issue 23): present only in a run of a suite with `updates:`.
  if (!aggregates.freshness.empty()) {
    aggregates_json["freshness"] = FreshnessToJson(aggregates.freshness);
  }
  w.Key("aggregates").Value(aggregates_json);
  if (aggregates.sessions) w.Key("sessions").Value(SessionsToJson(*aggregates.sessions));
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
  if (path == kStdoutPath) return WriteReportToStdout(contents, error);
  const std::filesystem::path parent = std::filesystem::path(path).parent_path();
  std::error_code code;
  if (!parent.empty() && !std::filesystem::is_directory(parent, code)) {
    std::filesystem::create_directories(parent, code);
    if (code) {
      *error = "cannot create the folder " + parent.string() + " for " + path + ": " +
               code.message() + "; name a folder you may write to";
      return false;
    }
  }
  std::unique_ptr<AtomicFile> file = AtomicFile::Open(path, error);
  if (file == nullptr) return false;
  file->Write(contents);
  return file->Commit(error);
}

nlohmann::json BaselineRecord(const std::string& baseline_dir, int gate_code,
                              const std::string& gate_reason) {
  return {{"run_dir", AbsolutePath(baseline_dir)},
          {"drift", "drift.json"},
          {"exit_code", gate_code},
          {"reason", gate_reason}};
}

bool RecordBaselineVerdict(const std::string& run_dir, const nlohmann::json& baseline,
                           const RunVerdict& verdict, std::string* error) {
  const std::string path = run_dir + "/run.json";
  std::ifstream in(path, std::ios::binary);
  std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  // RunRecordTail ends the record with its verdict, the top-level object's last member.
  const size_t at = text.rfind("\n  \"verdict\": {");
  if (!in || at == std::string::npos) {
    *error = "cannot record the baseline gate in " + path +
             ": the file is missing or has no verdict; run the suite again";
    return false;
  }
  auto member = [](const char* key, const nlohmann::json& value) {
    std::string dumped = value.dump(2);
    std::string indented;
    for (char c : dumped) {
      indented += c;
      if (c == '\n') indented += "  ";
    }
    return std::string("\n  \"") + key + "\": " + indented;
  };
  text.resize(at);
  text += member("baseline", baseline) + "," +
          member("verdict", {{"exit_code", verdict.code}, {"reason", verdict.reason}}) + "\n}\n";
  return WriteFileAtomically(path, text, error);
}

std::string NowIso8601() {
  const std::time_t now = std::time(nullptr);
  std::tm utc{};
  gmtime_r(&now, &utc);
  char buffer[32];
  std::strftime(buffer, sizeof buffer, "%Y-%m-%dT%H:%M:%SZ", &utc);
  return buffer;
}

double SecondsBetween(const std::string& start, const std::string& end) {
  std::tm a{}, b{};
  if (strptime(start.c_str(), "%Y-%m-%dT%H:%M:%SZ", &a) == nullptr ||
      strptime(end.c_str(), "%Y-%m-%dT%H:%M:%SZ", &b) == nullptr) {
    return 0;
  }
  return std::difftime(timegm(&b), timegm(&a));
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
