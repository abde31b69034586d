#include "runner/cli/report_command.h"

#include <cstdio>

#include "runner/compare/drift.h"
#include "runner/report/summary_table.h"
#include "runner/run/calibration.h"
#include "runner/run/error_reasons.h"
#include "runner/run/exit_code.h"
#include "runner/run/run_failures.h"
#include "runner/run/run_record.h"

namespace plumb {
namespace {

const nlohmann::json& At(const nlohmann::json& object, const char* key) {
  static const nlohmann::json kNull;
  if (!object.is_object()) return kNull;
  auto it = object.find(key);
  return it == object.end() ? kNull : *it;
}

double Number(const nlohmann::json& object, const char* key) {
  const nlohmann::json& v = At(object, key);
  return v.is_number() ? v.get<double>() : 0;
}

int64_t Integer(const nlohmann::json& object, const char* key) {
  const nlohmann::json& v = At(object, key);
  return v.is_number() ? v.get<int64_t>() : 0;
}

std::string Text(const nlohmann::json& object, const char* key) {
  const nlohmann::json& v = At(object, key);
  return v.is_string() ? v.get<std::string>() : "";
}

std::vector<MetricAggregate> MetricsFrom(const nlohmann::json& metrics) {
  std::vector<MetricAggregate> out;
  if (!metrics.is_object()) return out;
  std::vector<std::string> names;
  for (auto it = metrics.begin(); it != metrics.end(); ++it) names.push_back(it.key());
  for (const std::string& name : MetricDisplayOrder(names)) {
    const nlohmann::json& m = metrics[name];
    MetricAggregate a;
    a.metric = name;
    a.summary.mean = Number(m, "mean");
    a.summary.n = Integer(m, "n");
    const nlohmann::json& interval = At(m, "interval");
    if (interval.is_array() && interval.size() == 2 && interval[0].is_number() &&
        interval[1].is_number()) {
      a.summary.interval = {interval[0].get<double>(), interval[1].get<double>()};
    }
    a.summary.wilson = Text(m, "interval_method") == "wilson";
    out.push_back(a);
  }
  return out;
}

}  // namespace

RunAggregates AggregatesFromRecord(const nlohmann::json& record) {
  const nlohmann::json& a = At(record, "aggregates");
  RunAggregates run;
  run.cases = Integer(a, "cases");
  run.items = Integer(a, "items");
  run.errored = Integer(a, "errored");
  run.passed = Integer(a, "passed");
  run.metrics = MetricsFrom(At(a, "metrics"));
  const nlohmann::json& tags = At(a, "tags");
  if (tags.is_object()) {
    for (auto it = tags.begin(); it != tags.end(); ++it) {
      TagAggregate t;
      t.tag = it.key();
      t.cases = Integer(*it, "cases");
      t.metrics = MetricsFrom(At(*it, "metrics"));
      run.tags.push_back(std::move(t));
    }
  }
  const nlohmann::json& l = At(a, "latency_ms");
  run.latency.n = Integer(l, "n");
  run.latency.p50 = Number(l, "p50");
  run.latency.p90 = Number(l, "p90");
  run.latency.p95 = Number(l, "p95");
  run.latency.p99 = Number(l, "p99");
  run.latency.mean = Number(l, "mean");
  run.latency.max = Number(l, "max");
  // Runs written before timeouts entered the latency have neither key: no lower bounds.
  run.latency.lower_bounds = Integer(l, "lower_bounds");
  const nlohmann::json& at_least = At(l, "at_least");
  if (at_least.is_array()) {
    for (const nlohmann::json& key : at_least) {
      run.latency.p50_at_least |= key == "p50";
      run.latency.p90_at_least |= key == "p90";
      run.latency.p95_at_least |= key == "p95";
      run.latency.p99_at_least |= key == "p99";
    }
  }
  run.input_tokens = Integer(At(a, "usage"), "input_tokens");
  run.output_tokens = Integer(At(a, "usage"), "output_tokens");
  run.usage_items = Integer(At(a, "usage"), "items");
  const nlohmann::json& t = At(a, "ttft_ms");
  run.ttft.n = Integer(t, "n");
  run.ttft.p50 = Number(t, "p50");
  run.ttft.p90 = Number(t, "p90");
  run.ttft.p95 = Number(t, "p95");
  run.ttft.p99 = Number(t, "p99");
  run.ttft.mean = Number(t, "mean");
  run.ttft.max = Number(t, "max");
  for (auto [key, interval] : {std::pair{"p50_interval", &run.ttft_p50_interval},
                               std::pair{"p95_interval", &run.ttft_p95_interval}}) {
    const nlohmann::json& i = At(t, key);
    if (i.is_array() && i.size() == 2 && i[0].is_number() && i[1].is_number()) {
      *interval = {i[0].get<double>(), i[1].get<double>()};
    }
  }
  run.price = PriceFromConfig(At(At(record, "pipeline"), "config"));
  const nlohmann::json& cost = At(a, "cost");
  run.cost_items = Integer(cost, "items");
  run.cost_total = Number(cost, "total");
  run.cost_per_case.mean = Number(cost, "mean");
  run.cost_per_case.n = Integer(cost, "n");
  if (const nlohmann::json& i = At(cost, "interval");
      i.is_array() && i.size() == 2 && i[0].is_number() && i[1].is_number()) {
    run.cost_per_case.interval = {i[0].get<double>(), i[1].get<double>()};
  }
  run.warmups = WarmupsFromJson(At(a, "warmup"));
  run.sessions = SessionsFromJson(At(record, "sessions"));
  run.freshness = FreshnessFromJson(At(a, "freshness"));
  const nlohmann::json& unstable = At(a, "unstable_cases");
  if (unstable.is_array()) {
    for (const nlohmann::json& id : unstable) {
      if (id.is_string()) run.unstable_cases.push_back(id.get<std::string>());
    }
  }
  return run;
}

std::vector<ThresholdOutcome> ThresholdsFromRecord(const nlohmann::json& record) {
  std::vector<ThresholdOutcome> out;
  const nlohmann::json& list = At(record, "thresholds");
  if (!list.is_array()) return out;
  for (const nlohmann::json& t : list) {
    ThresholdOutcome o;
    o.tag = Text(t, "tag");
    o.metric = Text(t, "metric");
    o.limit = Number(t, "limit");
    o.ceiling = Text(t, "kind") == "ceiling";
    if (At(t, "value").is_number()) o.value = At(t, "value").get<double>();
    o.held = At(t, "held").is_boolean() && At(t, "held").get<bool>();
    out.push_back(o);
  }
  return out;
}

namespace {

/// run.json's verdict.exit_code when it is one a finished run can have (0, 1 or 3); 0 for a
/// record without one (written before verdicts were recorded).
int RecordedExitCode(const nlohmann::json& record) {
  const nlohmann::json& code = At(At(record, "verdict"), "exit_code");
  if (!code.is_number_integer()) return kExitOk;
  const int value = code.get<int>();
  return value == kExitFloorBroken || value == kExitCaseErrors ? value : kExitOk;
}

}  // namespace

int ReportCommand(const ReportOptions& options) {
  LoadedRun run;
  std::string error;
  if (!LoadRun(options.run_dir, &run, &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return kExitUsage;
  }
  for (const std::string& w : run.warnings) {
    std::fprintf(stderr, "%s: warning: %s\n", options.run_dir.c_str(), w.c_str());
  }
  if (!WriteRunOutputs(run, options.outputs, &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return kExitUsage;
  }
  // The recorded verdict is the exit code: after `run --baseline` it includes the gate.
  const int recorded = RecordedExitCode(run.record);
  if (options.json) {
    // A run recorded before causes were gets its breakdown computed from the journal.
    if (!run.record.contains("failures")) run.record["failures"] = RunFailures(run);
    std::printf("%s\n", run.record.dump(2).c_str());
    return recorded;
  }
  const nlohmann::json& r = run.record;
  SummaryHeader header;
  header.suite = Text(At(r, "suite"), "name");
  header.pipeline = Text(At(r, "pipeline"), "name");
  header.seconds = SecondsBetween(Text(r, "started_at"), Text(r, "finished_at"));
  header.repeat = At(r, "repeat").is_number_integer() ? At(r, "repeat").get<int>() : 1;
  header.grade_notes = GradeCalibrationNotes(r);
  RunVerdict verdict;
  verdict.code = static_cast<int>(Integer(At(r, "verdict"), "exit_code"));
  verdict.reason = Text(At(r, "verdict"), "reason");
  // The note goes first, so the verdict stays the last line, as after the run itself.
  std::printf("recorded run %s (started %s); nothing was re-run\n\n", options.run_dir.c_str(),
              Text(r, "started_at").c_str());
  RunAggregates aggregates = AggregatesFromRecord(r);
  aggregates.causes = RunCauseBreakdown(run);
  std::string reasons;
  if (aggregates.errored > 0) {
    reasons = FormatErrorReasons(CountErrorReasons(options.run_dir + "/cases.jsonl", 5),
                                 aggregates.errored);
  }
  std::fputs(FormatSummary(header, aggregates, ThresholdsFromRecord(r), verdict, UseColour(stdout),
                           /*exit_line=*/true, reasons)
                 .c_str(),
             stdout);
  return recorded;
}

}  // namespace plumb
