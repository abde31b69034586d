#include "runner/run/failure_reason.h"

#include <fmt/format.h>

#include <cmath>

namespace plumb {
namespace {

std::string Value(const CaseScores& scores, const char* metric) {
  auto it = scores.values.find(metric);
  return it == scores.values.end() ? std::string("n/a") : fmt::format("{:.3g}", it->second);
}

/// "citation_recall 0.5 < 1, grade.faithful 0.2 < 0.5": the minimums that broke.
std::string BrokenMinimums(const CaseScores& scores, const std::map<std::string, double>& case_pass,
                           bool grades_only) {
  std::string out;
  for (const auto& [metric, minimum] : case_pass) {
    if (grades_only && metric.rfind("grade.", 0) != 0) continue;
    auto it = scores.values.find(metric);
    if (it == scores.values.end() || it->second >= minimum) continue;
    out +=
        fmt::format("{}{} {:.3g} < {:.3g}", out.empty() ? "" : ", ", metric, it->second, minimum);
  }
  return out;
}

}  // namespace

std::string FailureReason(const CaseRecord& r, const std::map<std::string, double>& case_pass) {
  const CaseScores& s = r.scores;
  const size_t retrieved = r.parsed.retrieved.size();
  const size_t cited = r.parsed.citations.size();
  switch (s.cause) {
    case FailureCause::kNone:
      return "";
    case FailureCause::kErrored:
      return r.error;
    case FailureCause::kRetrievalMiss:
      return fmt::format("none of {} retrieved item{} hits a gold span", retrieved,
                         retrieved == 1 ? "" : "s");
    case FailureCause::kCitationMiss:
      return cited == 0 ? "correct answer, no citation"
                        : fmt::format("correct answer; none of {} citation{} hits a gold span",
                                      cited, cited == 1 ? "" : "s");
    case FailureCause::kReadingMiss: {
      std::string out = "wrong answer (token_f1 " + Value(s, "token_f1") + ")";
      auto mrr = s.values.find("mrr");
      if (mrr != s.values.end() && mrr->second > 0) {
        out += fmt::format("; a gold span was retrieved at rank {}",
                           static_cast<int64_t>(std::llround(1 / mrr->second)));
      } else if (!r.parsed.has_retrieved) {
        out += "; no retrieved list reported";
      }
      return out;
    }
    case FailureCause::kFalseAbstention:
      return "abstained on an answerable question";
    case FailureCause::kAnsweredUnanswerable:
      return "answered; the gold is to abstain";
    case FailureCause::kGradeBelowFloor:
      return BrokenMinimums(s, case_pass, true);
    case FailureCause::kBelowCasePass:
      return BrokenMinimums(s, case_pass, false);
  }
  return "";
}

}  // namespace plumb
