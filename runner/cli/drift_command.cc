#include "runner/cli/drift_command.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <tuple>

#include "runner/compare/drift_json.h"
#include "runner/compare/drift_table.h"
#include "runner/run/calibration.h"
#include "runner/run/exit_code.h"
#include "runner/suite/did_you_mean.h"

namespace plumb {
namespace {

/// A grade gates a drift only when the candidate run recorded its grader as calibrated (a fresh
/// record with enough labels and kappa's lower bound at min_kappa; runner/run/calibration.h).
bool GradeMayGate(const std::string& metric, const RunValues& cand, std::string* error) {
  const std::string name = metric.substr(6);
  const nlohmann::json grading = cand.record.value("grading", nlohmann::json());
  nlohmann::json grader;
  if (grading.is_object() && grading.value("graders", nlohmann::json()).is_object()) {
    grader = grading["graders"].value(name, nlohmann::json());
  }
  if (!grader.is_object()) return true;  // not a grade of this run: reported as not measured
  const nlohmann::json calibration = grader.value("calibration", nlohmann::json());
  if (calibration.is_object() && calibration.value("gate", false)) return true;
  const nlohmann::json suite = cand.record.value("suite", nlohmann::json::object());
  const std::string suite_path =
      suite.is_object() ? suite.value("path", std::string("SUITE")) : std::string("SUITE");
  const std::string why = calibration.is_object()
                              ? calibration.value("why_not", std::string("is not calibrated"))
                              : std::string("has no calibration recorded in the run");
  *error = "--gate " + metric + ": a grade may gate only once it is calibrated, and in " +
           cand.dir + " grader '" + name + "' " + why +
           ". Label answers (plumb label RUN_DIR "
           "--out FILE), run `" +
           CalibrateCommandLine(suite_path, name) +
           " --labels FILE`, "
           "then `plumb grade " +
           cand.dir + "` to record it; or take " + metric + " out of --gate";
  return false;
}

/// A gated metric must be one plumb can measure; one the runs do not measure (citation_recall
/// on a suite without gold spans) is allowed and reported as "not measured".
bool CheckGateAgainstRuns(const DriftOptions& options, const RunValues& base, const RunValues& cand,
                          std::string* error) {
  std::vector<std::string> measured;
  for (const RunValues* run : {&base, &cand}) {
    for (const std::string& metric : run->metrics) {
      if (std::find(measured.begin(), measured.end(), metric) == measured.end()) {
        measured.push_back(metric);
      }
    }
  }
  for (const std::string& metric : options.gate) {
    if (metric.rfind("grade.", 0) == 0 && !GradeMayGate(metric, cand, error)) return false;
    if (metric == kLatencyGate || IsKnownCaseMetric(metric) ||
        std::find(measured.begin(), measured.end(), metric) != measured.end()) {
      continue;
    }
    std::vector<std::string> known = {
        "correct",         "exact_match",   "token_f1",      "token_recall", "covers_gold",
        "knowledge_f1",    "cited_support", "pattern_match", "number_match", "citation_precision",
        "citation_recall", "citation_f1",   "mrr",           "pass_rate",    kLatencyGate};
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
  if (!(options.max_slowdown >= 0) || !std::isfinite(options.max_slowdown)) {
    *error =
        "--max-slowdown must be a number at or above 0 (a fraction: 0.10 allows the p95 to "
        "grow by 10%)";
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
  RunValues base_values, cand_values;
  RunValuesOf(base, &base_values);
  RunValuesOf(cand, &cand_values);
  return RunDrift(base_values, cand_values, &base, &cand, options, json_out);
}

int RunDrift(const RunValues& base, const RunValues& cand, const LoadedRun* base_run,
             const LoadedRun* cand_run, const DriftCommandOptions& options,
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
  if (!options.outputs.empty()) {
    static const LoadedRun kNone;  // the Markdown summary reads the report alone
    if (!WriteDriftOutputs(report, base_run != nullptr ? *base_run : kNone,
                           cand_run != nullptr ? *cand_run : kNone, options.outputs, &error)) {
      std::fprintf(stderr, "plumb: %s\n", error.c_str());
      return kExitUsage;
    }
  }
  *json_out = DriftReportToJson(report);
  if (!options.json) {
    std::fputs(FormatDriftTable(report, options.colour, options.exit_line).c_str(), stdout);
    std::fflush(stdout);
  }
  return report.gate.exit_code;
}

int DriftCommand(const DriftCommandOptions& options) {
  // The HTML page and the JUnit file show whole records; the rest needs only per-case values,
  // which are streamed (RunValues) instead of holding every record.
  const bool records = !options.outputs.html.empty() || !options.outputs.junit.empty();
  LoadedRun base_run, cand_run;
  RunValues base, cand;
  std::string error;
  for (auto [dir, run, values] : {std::tuple{&options.base_dir, &base_run, &base},
                                  std::tuple{&options.cand_dir, &cand_run, &cand}}) {
    if (records) {
      if (!LoadRun(*dir, run, &error)) {
        std::fprintf(stderr, "plumb: %s\n", error.c_str());
        return kExitUsage;
      }
      RunValuesOf(*run, values);
    } else if (!LoadRunValues(*dir, values, &error)) {
      std::fprintf(stderr, "plumb: %s\n", error.c_str());
      return kExitUsage;
    }
    for (const std::string& w : values->warnings) {
      std::fprintf(stderr, "%s: warning: %s\n", dir->c_str(), w.c_str());
    }
  }
  nlohmann::json json;
  const int code = RunDrift(base, cand, records ? &base_run : nullptr,
                            records ? &cand_run : nullptr, options, &json);
  if (options.json && code != kExitUsage) std::printf("%s\n", json.dump(2).c_str());
  return code;
}

}  // namespace plumb
