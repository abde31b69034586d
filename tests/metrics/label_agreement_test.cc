#include "metrics/label_agreement.h"

#include <catch2/catch.hpp>
#include <cmath>
#include <cstdio>
#include <vector>

#include "metrics/seeded_random.h"

using plumb::metrics::AgreementSummary;
using plumb::metrics::AgreementTable;
using plumb::metrics::CohenKappa;
using plumb::metrics::CountAgreement;
using plumb::metrics::MeanAbsoluteDifference;
using plumb::metrics::SeededRandom;
using plumb::metrics::SelfConsistency;
using plumb::metrics::SpearmanRho;
using plumb::metrics::SummarizeAgreement;

TEST_CASE("Cohen's kappa of the 50 rated proposals example", "[label_agreement]") {
  // Two raters, 50 items: both yes 20, first yes second no 5, first no second yes 10, both no 15.
  // sklearn.metrics.cohen_kappa_score on these vectors (Debian 12's python3-sklearn 1.2.1)
  // prints 0.4, and confusion_matrix(labels=[1, 0]) [[20, 5], [10, 15]].
  std::vector<bool> person, grader;
  auto add = [&](int count, bool p, bool g) {
    for (int i = 0; i < count; ++i) {
      person.push_back(p);
      grader.push_back(g);
    }
  };
  add(20, true, true);
  add(5, true, false);
  add(10, false, true);
  add(15, false, false);
  const AgreementTable t = CountAgreement(person, grader);
  CHECK(t.pass_pass == 20);
  CHECK(t.pass_fail == 5);
  CHECK(t.fail_pass == 10);
  CHECK(t.fail_fail == 15);
  CHECK(CohenKappa(t) == Approx(0.4).epsilon(1e-12));
  const AgreementSummary s = SummarizeAgreement(t);
  CHECK(s.n == 50);
  CHECK(s.base_rate == 0.5);
  CHECK(s.grader_pass_rate == 0.6);
  CHECK(s.agreement == 0.7);
  CHECK(s.sensitivity == 0.8);
  CHECK(s.specificity == 0.6);
  CHECK(s.kappa_interval.low < 0.4);
  CHECK(s.kappa_interval.high > 0.4);
  CHECK(s.agreement_interval.low < 0.7);
  CHECK(s.agreement_interval.high > 0.7);
  // Seeded: the same table gives the same interval.
  const AgreementSummary again = SummarizeAgreement(t);
  CHECK(again.kappa_interval.low == s.kappa_interval.low);
  CHECK(again.kappa_interval.high == s.kappa_interval.high);
}

TEST_CASE("Kappa is undefined when both sides give one verdict throughout", "[label_agreement]") {
  // sklearn's cohen_kappa_score([1, 1, 1], [1, 1, 1]) is nan (0 / 0).
  AgreementTable all_pass;
  all_pass.pass_pass = 3;
  CHECK(std::isnan(CohenKappa(all_pass)));
  AgreementTable one;
  one.fail_fail = 1;
  CHECK(std::isnan(CohenKappa(one)));
  const AgreementSummary s = SummarizeAgreement(all_pass);
  CHECK(s.agreement == 1);
  CHECK(std::isnan(s.kappa));
  CHECK(std::isnan(s.kappa_interval.low));
  CHECK(std::isnan(s.specificity));  // no failing answer to be specific about
  CHECK(s.sensitivity == 1);
  CHECK(std::isnan(CohenKappa(AgreementTable{})));
}

TEST_CASE("Perfect agreement with both verdicts present is kappa 1", "[label_agreement]") {
  AgreementTable t;
  t.pass_pass = 30;
  t.fail_fail = 30;
  CHECK(CohenKappa(t) == 1.0);
  const AgreementSummary s = SummarizeAgreement(t);
  CHECK(s.kappa_interval.low == 1.0);
  CHECK(s.kappa_interval.high == 1.0);
}

TEST_CASE("A rare verdict leaves the lower bound of kappa unplaced", "[label_agreement]") {
  // One failing answer in 60: a resample without it has an undefined kappa, and more than 2.5%
  // of resamples lack it (e^-1 of them), so the lower end cannot be read: NaN, never a number.
  AgreementTable t;
  t.pass_pass = 59;
  t.fail_fail = 1;
  CHECK(CohenKappa(t) == 1.0);
  const AgreementSummary s = SummarizeAgreement(t);
  CHECK(std::isnan(s.kappa_interval.low));
}

TEST_CASE("Spearman's rho with ties matches scipy.stats.spearmanr", "[label_agreement]") {
  // scipy.stats.spearmanr([1, 2, 2, 3, 5, 4], [1, 3, 2, 2, 5, 5]).statistic (scipy 1.10.1).
  CHECK(SpearmanRho({1, 2, 2, 3, 5, 4}, {1, 3, 2, 2, 5, 5}) ==
        Approx(0.8508410434878082).epsilon(1e-12));
  CHECK(std::isnan(SpearmanRho({1, 1, 1}, {1, 2, 3})));
  CHECK(std::isnan(SpearmanRho({1}, {1})));
  CHECK(MeanAbsoluteDifference({1, 2, 5}, {2, 2, 3}) == 1.0);
}

TEST_CASE("Self-consistency counts answers graded alike on every repeat", "[label_agreement]") {
  CHECK(SelfConsistency({{1, 1}, {0, 1}, {0, 0, 0}, {1}}) == Approx(2.0 / 3.0));
  CHECK(std::isnan(SelfConsistency({{1}})));
}

TEST_CASE("Kappa's 95% interval covers the true kappa in 93-97% of simulated label sets",
          "[label_agreement]") {
  // A grader with known error rates: people pass 40% of answers, the grader passes 85% of
  // those (sensitivity) and fails 90% of the others (specificity). The population table is
  // (0.34, 0.06, 0.06, 0.54): p_o = 0.88, both pass rates 0.4, p_e = 0.52, kappa = 0.75.
  // 1,000 label sets of 200 answers each; the share whose interval covers 0.75 must lie in
  // [0.93, 0.97] (the binomial spread of a 95% rate over 1,000 sets is 0.7 points).
  const double true_kappa = (0.88 - 0.52) / (1 - 0.52);
  SeededRandom random(7);
  int covered = 0, sets = 1000;
  for (int s = 0; s < sets; ++s) {
    std::vector<bool> person, grader;
    for (int i = 0; i < 200; ++i) {
      const bool pass = random.UniformIndex(100) < 40;
      const bool grader_pass = pass ? random.UniformIndex(100) < 85 : random.UniformIndex(100) < 10;
      person.push_back(pass);
      grader.push_back(grader_pass);
    }
    const AgreementSummary summary =
        SummarizeAgreement(CountAgreement(person, grader), 10000, 20261201 + s);
    if (summary.kappa_interval.low <= true_kappa && true_kappa <= summary.kappa_interval.high) {
      covered += 1;
    }
  }
  const double coverage = static_cast<double>(covered) / sets;
  std::printf("kappa interval coverage: %d of %d simulated label sets (%.1f%%)\n", covered, sets,
              100.0 * coverage);
  CHECK(coverage >= 0.93);
  CHECK(coverage <= 0.97);
}
