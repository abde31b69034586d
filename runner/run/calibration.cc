#include "runner/run/calibration.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "metrics/label_agreement.h"
#include "runner/run/grader_identity.h"

namespace plumb {
namespace {

nlohmann::json Number(double value) {
  return std::isfinite(value) ? nlohmann::json(value) : nlohmann::json();
}

nlohmann::json IntervalJson(const metrics::Interval& interval) {
  return nlohmann::json::array({Number(interval.low), Number(interval.high)});
}

nlohmann::json Estimate(double value, const metrics::Interval& interval) {
  return {{"value", Number(value)}, {"interval", IntervalJson(interval)}};
}

// A grade on the grader's own scale, as a person reads it (1-5 back from 0..1).
double OnScale(double grade, GradeScale scale) {
  return scale == GradeScale::kOneToFive ? 1 + 4 * grade : grade;
}

double JsonDouble(const nlohmann::json& j) {
  return j.is_number() ? j.get<double>() : std::nan("");
}

std::string Fixed(double value, int digits = 2) {
  return std::isfinite(value) ? fmt::format("{:.{}f}", value, digits) : std::string("n/a");
}

}  // namespace

std::string CalibrationRecordPath(const std::string& suite_path, const std::string& grader) {
  const std::filesystem::path dir = std::filesystem::path(suite_path).parent_path();
  return (dir / "calibration" / (grader + ".json")).lexically_normal().generic_string();
}

std::string CalibrateCommandLine(const std::string& suite_path, const std::string& grader) {
  return "plumb calibrate " + suite_path + " --grader " + grader;
}

double CalibrationPassAt(const Suite& suite, const GraderConfig& grader) {
  auto it = suite.case_pass.find("grade." + grader.name);
  return it != suite.case_pass.end() ? it->second : 0.5;
}

nlohmann::json CalibrationRecordJson(const CalibrationInputs& in) {
  const GraderConfig& grader = *in.grader;
  const double pass_at = CalibrationPassAt(*in.suite, grader);
  std::vector<bool> person, machine;
  std::vector<double> person_scale, machine_scale;
  std::vector<std::vector<double>> rounds;
  std::vector<const GradedLabel*> disagreements;
  nlohmann::json failed = nlohmann::json::array();
  for (const GradedLabel& g : in.graded) {
    if (g.rounds.empty()) {
      failed.push_back({{"id", g.label->id}, {"line", g.label->line}, {"error", g.reason}});
      continue;
    }
    const bool p = g.label->grade >= pass_at;
    const bool m = g.rounds[0] >= pass_at;
    person.push_back(p);
    machine.push_back(m);
    person_scale.push_back(OnScale(g.label->grade, grader.scale));
    machine_scale.push_back(OnScale(g.rounds[0], grader.scale));
    rounds.push_back(g.rounds);
    if (p != m || (grader.scale != GradeScale::kPassFail && g.label->grade != g.rounds[0])) {
      disagreements.push_back(&g);
    }
  }
  std::stable_sort(disagreements.begin(), disagreements.end(),
                   [](const GradedLabel* a, const GradedLabel* b) {
                     const double da = std::fabs(a->rounds[0] - a->label->grade);
                     const double db = std::fabs(b->rounds[0] - b->label->grade);
                     if (da != db) return da > db;
                     // A wrong answer let through is the costlier mistake on a gate.
                     const bool a_through = a->rounds[0] > a->label->grade;
                     const bool b_through = b->rounds[0] > b->label->grade;
                     if (a_through != b_through) return a_through;
                     return a->label->line < b->label->line;
                   });
  const metrics::AgreementSummary s = metrics::SummarizeAgreement(
      metrics::CountAgreement(person, machine), kCalibrationResamples, kCalibrationSeed);

  nlohmann::json listed = nlohmann::json::array();
  for (const GradedLabel* g : disagreements) {
    listed.push_back({{"id", g->label->id},
                      {"line", g->label->line},
                      {"answer", g->label->answer},
                      {"label", g->label->written},
                      {"grade", OnScale(g->rounds[0], grader.scale)},
                      {"reason", g->reason},
                      {"by", g->label->by},
                      {"note", g->label->note}});
  }
  nlohmann::json record = {
      {"plumb_calibration", 1},
      {"grader", grader.name},
      {"identity", in.identity},
      {"suite", in.suite->path},
      {"scale", GradeScaleName(grader.scale)},
      {"rubric", grader.rubric_path},
      {"created_at", in.created_at},
      {"labels",
       {{"file", in.labels->path},
        {"sha256", in.labels->sha256},
        {"labelled", in.labels->labelled.size()},
        {"unlabelled", in.labels->unlabelled}}},
      {"pass_at", pass_at},
      {"n", s.n},
      {"base_rate", Number(s.base_rate)},
      {"grader_pass_rate", Number(s.grader_pass_rate)},
      {"agreement", Estimate(s.agreement, s.agreement_interval)},
      {"kappa", Estimate(s.kappa, s.kappa_interval)},
      {"sensitivity", Estimate(s.sensitivity, s.sensitivity_interval)},
      {"specificity", Estimate(s.specificity, s.specificity_interval)},
      {"table",
       {{"pass_pass", s.table.pass_pass},
        {"pass_fail", s.table.pass_fail},
        {"fail_pass", s.table.fail_pass},
        {"fail_fail", s.table.fail_fail}}},
      {"bootstrap", {{"resamples", kCalibrationResamples}, {"seed", kCalibrationSeed}}},
  };
  if (grader.scale != GradeScale::kPassFail) {
    record["spearman_rho"] = Number(metrics::SpearmanRho(person_scale, machine_scale));
    record["mean_absolute_difference"] =
        Number(metrics::MeanAbsoluteDifference(person_scale, machine_scale));
  }
  if (in.repeat >= 2) {
    record["self_consistency"] = {{"repeats", in.repeat},
                                  {"answers", rounds.size()},
                                  {"value", Number(metrics::SelfConsistency(rounds))}};
  } else {
    record["self_consistency"] = nullptr;
  }
  record["grader_failed"] = failed;
  record["disagreements"] = listed;
  return record;
}

std::string CalibrationStatus::Word() const {
  switch (state) {
    case State::kCalibrated:
      return "calibrated";
    case State::kStale:
      return "stale";
    case State::kTooFewLabels:
    case State::kKappaTooLow:
      return "below the bar";
    case State::kMissing:
    case State::kUnreadable:
      return "uncalibrated";
  }
  return "uncalibrated";
}

CalibrationStatus AssessCalibration(const std::string& suite_path, const GraderConfig& grader,
                                    const std::string& identity) {
  CalibrationStatus status;
  status.record_path = CalibrationRecordPath(suite_path, grader.name);
  std::ifstream in(status.record_path, std::ios::binary);
  if (!in) {
    status.state = CalibrationStatus::State::kMissing;
    status.why_not = "has no calibration record (" + status.record_path + ")";
    return status;
  }
  std::stringstream buffer;
  buffer << in.rdbuf();
  nlohmann::json record = nlohmann::json::parse(buffer.str(), nullptr, false);
  if (!record.is_object() || !record.contains("identity") || !record["identity"].is_string()) {
    status.state = CalibrationStatus::State::kUnreadable;
    status.why_not = "has an unreadable calibration record (" + status.record_path + ")";
    return status;
  }
  status.record = record;
  if (record["identity"].get<std::string>() != identity) {
    status.state = CalibrationStatus::State::kStale;
    status.why_not = "has a stale calibration record (" + status.record_path +
                     "): its rubric or config changed since it was calibrated";
    return status;
  }
  const int64_t n = record.value("n", int64_t{0});
  const nlohmann::json kappa = record.value("kappa", nlohmann::json::object());
  const nlohmann::json interval = kappa.value("interval", nlohmann::json::array());
  const double low = interval.is_array() && !interval.empty() ? JsonDouble(interval[0]) : NAN;
  if (n < grader.min_labels) {
    status.state = CalibrationStatus::State::kTooFewLabels;
    status.why_not = "was calibrated on " + std::to_string(n) + " labelled answers, fewer than " +
                     "min_labels " + std::to_string(grader.min_labels);
    return status;
  }
  if (!(low >= grader.min_kappa)) {
    status.state = CalibrationStatus::State::kKappaTooLow;
    status.why_not = "agrees with its labels too little: kappa's lower 95% bound " + Fixed(low) +
                     " is below min_kappa " + Fixed(grader.min_kappa) + " (kappa " +
                     Fixed(JsonDouble(kappa.value("value", nlohmann::json()))) + ", base rate " +
                     Fixed(JsonDouble(record.value("base_rate", nlohmann::json()))) + ", n " +
                     std::to_string(n) + ")";
    return status;
  }
  status.state = CalibrationStatus::State::kCalibrated;
  return status;
}

std::map<std::string, CalibrationStatus> AssessSuiteCalibrations(const Suite& suite) {
  std::map<std::string, CalibrationStatus> statuses;
  for (const GraderConfig& grader : suite.graders) {
    const PipelineConfig* pipeline = nullptr;
    for (const PipelineConfig& p : suite.pipelines) {
      if (p.name == grader.pipeline) pipeline = &p;
    }
    if (pipeline == nullptr) continue;
    statuses[grader.name] =
        AssessCalibration(suite.path, grader, GraderIdentity(grader, *pipeline));
  }
  return statuses;
}

nlohmann::json CalibrationSummary(const CalibrationStatus& status, const GraderConfig& grader) {
  nlohmann::json out = {{"status", status.Word()},
                        {"gate", status.AllowsGate()},
                        {"record", status.record_path},
                        {"min_labels", grader.min_labels},
                        {"min_kappa", grader.min_kappa}};
  if (!status.why_not.empty()) out["why_not"] = status.why_not;
  if (status.record.is_object() && status.state != CalibrationStatus::State::kStale) {
    const nlohmann::json kappa = status.record.value("kappa", nlohmann::json::object());
    out["n"] = status.record.value("n", nlohmann::json());
    out["base_rate"] = status.record.value("base_rate", nlohmann::json());
    out["kappa"] = kappa.value("value", nlohmann::json());
    out["kappa_interval"] = kappa.value("interval", nlohmann::json());
  }
  return out;
}

std::vector<std::string> UncalibratedGates(const Suite& suite,
                                           const std::map<std::string, CalibrationStatus>& statuses,
                                           const std::vector<std::string>& extra_gates) {
  // Where each grade metric stands, in the words of the suite's keys.
  std::map<std::string, std::vector<std::string>> places;
  auto note = [&](const std::string& metric, const std::string& place) {
    if (metric.rfind("grade.", 0) != 0) return;
    std::vector<std::string>& list = places[metric];
    if (std::find(list.begin(), list.end(), place) == list.end()) list.push_back(place);
  };
  for (const auto& [metric, limit] : suite.thresholds.metrics) note(metric, "floors");
  for (const auto& [tag, limits] : suite.thresholds.tags) {
    for (const auto& [metric, limit] : limits) note(metric, "floors (tag " + tag + ")");
  }
  for (const auto& [metric, minimum] : suite.case_pass) note(metric, "case_pass");
  for (const std::string& metric : suite.correct_from) note(metric, "correct_from");
  for (const std::string& metric : extra_gates) note(metric, "--gate");
  std::vector<std::string> problems;
  for (const auto& [metric, where] : places) {
    const std::string name = metric.substr(6);
    auto it = statuses.find(name);
    if (it != statuses.end() && it->second.AllowsGate()) continue;
    std::string list;
    for (const std::string& w : where) list += (list.empty() ? "" : ", ") + w;
    const std::string why =
        it != statuses.end() ? it->second.why_not : std::string("has no calibration record");
    int64_t min_labels = 50;
    for (const GraderConfig& g : suite.graders) {
      if (g.name == name) min_labels = g.min_labels;
    }
    problems.push_back(metric + " stands in " + list +
                       ", but a grade may gate only once it is "
                       "calibrated, and grader '" +
                       name + "' " + why + ". Label at least " + std::to_string(min_labels) +
                       " answers (plumb label RUN_DIR --out FILE), "
                       "then run `" +
                       CalibrateCommandLine(suite.path, name) + " --labels FILE`; or take " +
                       metric + " out of " + list);
  }
  return problems;
}

std::map<std::string, std::string> GradeCalibrationNotes(const nlohmann::json& run_record) {
  std::map<std::string, std::string> notes;
  if (!run_record.is_object()) return notes;
  const nlohmann::json grading = run_record.value("grading", nlohmann::json());
  if (!grading.is_object()) return notes;
  const nlohmann::json graders = grading.value("graders", nlohmann::json::object());
  if (!graders.is_object()) return notes;
  for (auto it = graders.begin(); it != graders.end(); ++it) {
    const nlohmann::json c = it.value().is_object()
                                 ? it.value().value("calibration", nlohmann::json())
                                 : nlohmann::json();
    std::string text;
    if (!c.is_object()) {
      text = "uncalibrated";
    } else {
      const std::string status = c.value("status", std::string("uncalibrated"));
      std::string figures;
      if (c.contains("kappa")) {
        const nlohmann::json interval = c.value("kappa_interval", nlohmann::json::array());
        figures = "kappa " + Fixed(JsonDouble(c["kappa"]));
        if (interval.is_array() && interval.size() == 2) {
          figures +=
              " [" + Fixed(JsonDouble(interval[0])) + ", " + Fixed(JsonDouble(interval[1])) + "]";
        }
        figures += ", base rate " + Fixed(JsonDouble(c.value("base_rate", nlohmann::json()))) +
                   ", n " + std::to_string(c.value("n", int64_t{0}));
      }
      if (status == "calibrated") {
        text = figures;
      } else {
        text = figures.empty() ? status : status + ": " + figures;
      }
    }
    notes["grade." + it.key()] = text;
  }
  return notes;
}

}  // namespace plumb
