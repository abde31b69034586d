// ClassifyFailure on hand-built scores, one case per cause and the orders between them, as
// runner/run/failure_cause.h defines them. The scores are shaped as CaseScorer writes them:
// citation_recall on every case with gold spans, mrr only when the reply reported `retrieved`.
#include "runner/run/failure_cause.h"

#include <catch2/catch.hpp>
#include <map>
#include <string>

#include "runner/run/case_scores.h"

using plumb::CaseScores;
using plumb::ClassifyFailure;
using plumb::FailureCause;

namespace {

const std::map<std::string, double> kCorrect = {{"correct", 1.0}};
const std::map<std::string, double> kCorrectAndCited = {{"correct", 1.0}, {"citation_recall", 1.0}};

CaseScores Failed(std::initializer_list<std::pair<const std::string, double>> values) {
  CaseScores s;
  s.values = plumb::MetricValues(std::map<std::string, double>(values));
  s.pass = false;
  return s;
}

}  // namespace

TEST_CASE("a passing case has no cause") {
  CaseScores s = Failed({{"correct", 1}});
  s.pass = true;
  CHECK(ClassifyFailure(s, kCorrect) == FailureCause::kNone);
}

TEST_CASE("an errored case is errored whatever its scores say") {
  CaseScores s = Failed({{"correct", 0}, {"citation_recall", 0}, {"mrr", 0}});
  s.errored = true;
  CHECK(ClassifyFailure(s, kCorrect) == FailureCause::kErrored);
}

TEST_CASE("retrieval miss when gold spans exist and nothing retrieved hits one") {
  // Before citation miss and reading miss: the reader never saw the gold.
  CHECK(ClassifyFailure(Failed({{"correct", 0}, {"citation_recall", 0}, {"mrr", 0}}), kCorrect) ==
        FailureCause::kRetrievalMiss);
  CHECK(ClassifyFailure(Failed({{"correct", 1}, {"citation_recall", 0}, {"mrr", 0}}),
                        kCorrectAndCited) == FailureCause::kRetrievalMiss);
  // An abstention on a missed retrieval is the retriever's failure first.
  CaseScores abstained = Failed({{"correct", 0}, {"citation_recall", 0}, {"mrr", 0}});
  abstained.abstained = true;
  CHECK(ClassifyFailure(abstained, kCorrect) == FailureCause::kRetrievalMiss);
}

TEST_CASE("no retrieved list or a gold span retrieved makes a wrong answer a reading miss") {
  // No mrr: the pipeline reported no `retrieved` (a preloaded-context pipeline).
  CHECK(ClassifyFailure(Failed({{"correct", 0}, {"citation_recall", 1}}), kCorrect) ==
        FailureCause::kReadingMiss);
  // The third item hit a gold span.
  CHECK(ClassifyFailure(Failed({{"correct", 0}, {"citation_recall", 0}, {"mrr", 1.0 / 3}}),
                        kCorrect) == FailureCause::kReadingMiss);
  // No gold spans at all: nothing says the retriever missed.
  CHECK(ClassifyFailure(Failed({{"correct", 0}}), kCorrect) == FailureCause::kReadingMiss);
}

TEST_CASE("citation miss when the answer is correct and no citation hits a gold span") {
  CHECK(ClassifyFailure(Failed({{"correct", 1}, {"citation_recall", 0}, {"mrr", 0.5}}),
                        kCorrectAndCited) == FailureCause::kCitationMiss);
  CHECK(ClassifyFailure(Failed({{"correct", 1}, {"citation_recall", 0}}), kCorrectAndCited) ==
        FailureCause::kCitationMiss);
  // A citation that hits one of two gold spans is not a citation miss: the case broke its
  // citation_recall minimum, the catch-all.
  CHECK(ClassifyFailure(Failed({{"correct", 1}, {"citation_recall", 0.5}}), kCorrectAndCited) ==
        FailureCause::kBelowCasePass);
}

TEST_CASE("false abstention on an answerable question the pipeline abstained on") {
  CaseScores s = Failed({{"correct", 0}, {"citation_recall", 0}, {"mrr", 1}});
  s.abstained = true;
  CHECK(ClassifyFailure(s, kCorrect) == FailureCause::kFalseAbstention);
  CaseScores no_spans = Failed({{"correct", 0}});
  no_spans.abstained = true;
  CHECK(ClassifyFailure(no_spans, kCorrect) == FailureCause::kFalseAbstention);
}

TEST_CASE("answered unanswerable when the gold is to abstain and the pipeline answered") {
  CaseScores s = Failed({{"correct", 0}});
  s.abstention_case = true;
  CHECK(ClassifyFailure(s, kCorrect) == FailureCause::kAnsweredUnanswerable);
}

TEST_CASE("grade below floor when a grader's case_pass minimum broke and the answer is right") {
  const std::map<std::string, double> with_grade = {{"correct", 1.0}, {"grade.faithful", 0.5}};
  CHECK(ClassifyFailure(Failed({{"correct", 1}, {"grade.faithful", 0.25}}), with_grade) ==
        FailureCause::kGradeBelowFloor);
  // A wrong answer is a reading miss first.
  CHECK(ClassifyFailure(Failed({{"correct", 0}, {"grade.faithful", 0.25}}), with_grade) ==
        FailureCause::kReadingMiss);
}

TEST_CASE("the answer is judged by the case_pass minimums on answer metrics when there are any") {
  // case_pass {token_f1: 0.5}: an answer of F1 0.6 is right though `correct` is 0, so a
  // failure on citation_recall is a citation miss, not a reading miss.
  const std::map<std::string, double> f1 = {{"token_f1", 0.5}, {"citation_recall", 1.0}};
  CHECK(ClassifyFailure(Failed({{"correct", 0}, {"token_f1", 0.6}, {"citation_recall", 0}}), f1) ==
        FailureCause::kCitationMiss);
  CHECK(ClassifyFailure(Failed({{"correct", 0}, {"token_f1", 0.4}, {"citation_recall", 0}}), f1) ==
        FailureCause::kReadingMiss);
}

TEST_CASE("cause ids and labels are stable and read back") {
  CHECK(plumb::FailureCauses().size() == 8);
  for (FailureCause cause : plumb::FailureCauses()) {
    FailureCause read = FailureCause::kNone;
    REQUIRE(plumb::ParseFailureCause(plumb::FailureCauseId(cause), &read));
    CHECK(read == cause);
  }
  CHECK(plumb::FailureCauseId(FailureCause::kRetrievalMiss) == "retrieval_miss");
  CHECK(plumb::FailureCauseLabel(FailureCause::kReadingMiss) == "reading miss");
  FailureCause unknown = FailureCause::kNone;
  CHECK_FALSE(plumb::ParseFailureCause("retriever_missed", &unknown));
  CHECK_FALSE(plumb::ParseFailureCause("", &unknown));
}
