#include "runner/run/failure_cause.h"

#include <algorithm>
#include <array>

#include "runner/run/case_scores.h"

namespace plumb {
namespace {

struct CauseName {
  FailureCause cause;
  std::string_view id;
  std::string_view label;
};

constexpr std::array<CauseName, 8> kNames = {{
    {FailureCause::kErrored, "errored", "errored"},
    {FailureCause::kRetrievalMiss, "retrieval_miss", "retrieval miss"},
    {FailureCause::kCitationMiss, "citation_miss", "citation miss"},
    {FailureCause::kReadingMiss, "reading_miss", "reading miss"},
    {FailureCause::kFalseAbstention, "false_abstention", "false abstention"},
    {FailureCause::kAnsweredUnanswerable, "answered_unanswerable", "answered unanswerable"},
    {FailureCause::kGradeBelowFloor, "grade_below_floor", "grade below floor"},
    {FailureCause::kBelowCasePass, "below_case_pass", "below a case_pass minimum"},
}};

const CauseName* NameOf(FailureCause cause) {
  for (const CauseName& name : kNames) {
    if (name.cause == cause) return &name;
  }
  return nullptr;
}

bool IsAnswerMetric(const std::string& metric) {
  static const std::array<std::string_view, 7> kAnswer = {
      "correct",     "exact_match",   "token_f1",    "token_recall",
      "covers_gold", "pattern_match", "number_match"};
  return std::find(kAnswer.begin(), kAnswer.end(), metric) != kAnswer.end();
}

bool AnswerCorrect(const CaseScores& scores, const std::map<std::string, double>& case_pass) {
  bool named = false;
  for (const auto& [metric, minimum] : case_pass) {
    if (!IsAnswerMetric(metric)) continue;
    named = true;
    auto it = scores.values.find(metric);
    if (it != scores.values.end() && it->second < minimum) return false;
  }
  if (named) return true;
  auto correct = scores.values.find("correct");
  return correct != scores.values.end() && correct->second >= 1;
}

bool GradeBelowFloor(const CaseScores& scores, const std::map<std::string, double>& case_pass) {
  for (const auto& [metric, minimum] : case_pass) {
    if (metric.rfind("grade.", 0) != 0) continue;
    auto it = scores.values.find(metric);
    if (it != scores.values.end() && it->second < minimum) return true;
  }
  return false;
}

}  // namespace

const std::vector<FailureCause>& FailureCauses() {
  static const std::vector<FailureCause> kAll = [] {
    std::vector<FailureCause> all;
    for (const CauseName& name : kNames) all.push_back(name.cause);
    return all;
  }();
  return kAll;
}

std::string_view FailureCauseId(FailureCause cause) {
  const CauseName* name = NameOf(cause);
  return name == nullptr ? std::string_view() : name->id;
}

std::string_view FailureCauseLabel(FailureCause cause) {
  const CauseName* name = NameOf(cause);
  return name == nullptr ? std::string_view() : name->label;
}

bool ParseFailureCause(std::string_view id, FailureCause* cause) {
  for (const CauseName& name : kNames) {
    if (name.id != id) continue;
    *cause = name.cause;
    return true;
  }
  return false;
}

FailureCause ClassifyFailure(const CaseScores& scores,
                             const std::map<std::string, double>& case_pass) {
  if (scores.pass) return FailureCause::kNone;
  if (scores.errored) return FailureCause::kErrored;
  const MetricValues& v = scores.values;
  auto citation_recall = v.find("citation_recall");
  const bool has_gold_spans = citation_recall != v.end();
  auto mrr = v.find("mrr");
  if (has_gold_spans && mrr != v.end() && mrr->second == 0) return FailureCause::kRetrievalMiss;
  const bool correct = AnswerCorrect(scores, case_pass);
  if (correct && has_gold_spans && citation_recall->second == 0) {
    return FailureCause::kCitationMiss;
  }
  const bool answerable = !scores.abstention_case;
  if (!correct && answerable) {
    return scores.abstained ? FailureCause::kFalseAbstention : FailureCause::kReadingMiss;
  }
  if (!answerable && !scores.abstained) return FailureCause::kAnsweredUnanswerable;
  if (GradeBelowFloor(scores, case_pass)) return FailureCause::kGradeBelowFloor;
  return FailureCause::kBelowCasePass;
}

}  // namespace plumb
