#include "runner/cli/drift_command.h"

#include <algorithm>
#include <cmath>
#include <cstdio>

#include "runner/compare/drift_json.h"
#include "runner/compare/drift_table.h"
#include "runner/run/exit_code.h"
#include "runner/suite/did_you_mean.h"

namespace plumb {
namespace {

/// A gated metric must be one plumb can measure; one the runs do not measure (citation_recall
/// on a suite without gold spans) is allowed and reported as "not measured".
bool CheckGateAgainstRuns(const DriftOptions& options, const LoadedRun& base, const LoadedRun& cand,
                          std::string* error) {
  std::vector<std::string> measured;
  for (const LoadedRun* run : {&base, &cand}) {
    for (const CaseRecord& r : run->records) {
      for (const auto& entry : r.scores.values) {
        if (std::find(measured.begin(), measured.end(), entry.first) == measured.end()) {
          measured.push_back(entry.first);
        }
      }
    }
  }
  for (const std::string& metric : options.gate) {
    if (IsKnownCaseMetric(metric) ||
        std::find(measured.begin(), measured.end(), metric) != measured.end()) {
      continue;
    }
    std::vector<std::string> known = {
        "correct",         "exact_match",   "token_f1",      "token_recall", "covers_gold",
        "knowledge_f1",    "cited_support", "pattern_match", "number_match", "citation_precision",
        "citation_recall", "citation_f1",   "mrr",           "pass_rate"};
    known.insert(known.end(), measured.begin(), measured.end());
    *error = "--gate " + metric + ": not a per-case metric id; " +
             DidYouMeanHint(metric, MetricDisplayOrder(known), "metric ids");
    return false;
  }
  return true;
}

}  // namespace

bool ParseGate(const std::string& text, std::vector<std::string>* gate, std::string* error) {
  gate->clear();
  size_t start = 0;
  while (start <= text.size()) {
    const size_t comma = text.find(',', start);
    const size_t end = comma == std::string::npos ? text.size() : comma;
    std::string metric = text.substr(start, end - start);
    while (!metric.empty() && metric.front() == ' ') metric.erase(0, 1);
    while (!metric.empty() && metric.back() == ' ') metric.pop_back();
    if (!metric.empty()) gate->push_back(metric);
    if (comma == std::string::npos) break;
    start = comma + 1;
  }
  if (gate->empty()) {
    *error = "--gate takes a comma-separated list of metric ids, e.g. --gate correct,token_f1";
    return false;
  }
  return true;
}

bool CheckDriftOptions(const DriftOptions& options, std::string* error) {
  if (!(options.min_effect >= 0) || !std::isfinite(options.min_effect)) {
    *error = "--min-effect must be a number at or above 0 (a difference of means, e.g. 0.005)";
    return false;
  }
  if (options.resamples < 1) {
    *error = "--resamples must be at least 1 (10000 by default)";
    return false;
  }
  return true;
}

int RunDrift(const LoadedRun& base, const LoadedRun& cand, const DriftCommandOptions& options,
             nlohmann::json* json_out) {
  std::string error;
  if (!CheckDriftOptions(options.drift, &error) ||
      !CheckGateAgainstRuns(options.drift, base, cand, &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return kExitUsage;
  }
  DriftReport report;
  if (!ComputeDrift(base, cand, options.drift, &report, &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return kExitUsage;
  }
  if (!options.outputs.empty() && !WriteDriftOutputs(report, base, cand, options.outputs, &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return kExitUsage;
  }
  *json_out = DriftReportToJson(report);
  if (!options.json) {
    std::fputs(FormatDriftTable(report, options.colour, options.exit_line).c_str(), stdout);
    std::fflush(stdout);
  }
  return report.gate.exit_code;
}

int DriftCommand(const DriftCommandOptions& options) {
  LoadedRun base, cand;
  std::string error;
  for (auto [dir, run] :
       {std::pair{&options.base_dir, &base}, std::pair{&options.cand_dir, &cand}}) {
    if (!LoadRun(*dir, run, &error)) {
      std::fprintf(stderr, "plumb: %s\n", error.c_str());
      return kExitUsage;
    }
    for (const std::string& w : run->warnings) {
      std::fprintf(stderr, "%s: warning: %s\n", dir->c_str(), w.c_str());
    }
  }
  nlohmann::json json;
  const int code = RunDrift(base, cand, options, &json);
  if (options.json && code != kExitUsage) std::printf("%s\n", json.dump(2).c_str());
  return code;
}

}  // namespace plumb
