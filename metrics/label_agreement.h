#ifndef PLUMB_METRICS_LABEL_AGREEMENT_H_
#define PLUMB_METRICS_LABEL_AGREEMENT_H_

/// How well a grader agrees with a person who labelled the same answers (grader calibration,
/// `plumb calibrate`): the 2x2 table of pass/fail verdicts, raw agreement and Cohen's kappa with
/// seeded bootstrap intervals, sensitivity and specificity with Wilson intervals, and for
/// numeric scales Spearman's rho and the mean absolute difference. Pure functions; safe from any
/// thread. An undefined value is NaN (the caller prints "n/a" and a gate treats it as failed).

#include <cstdint>
#include <vector>

#include "metrics/interval.h"

namespace plumb::metrics {

/// Rows are the person's verdict, columns the grader's.
struct AgreementTable {
  int64_t pass_pass = 0;  // person pass, grader pass
  int64_t pass_fail = 0;  // person pass, grader fail (the grader missed a right answer)
  int64_t fail_pass = 0;  // person fail, grader pass (the grader let a wrong answer through)
  int64_t fail_fail = 0;  // person fail, grader fail
  int64_t n() const { return pass_pass + pass_fail + fail_pass + fail_fail; }
};

/// Counts the pairs; `person` and `grader` are parallel (true = pass). Sizes must be equal.
AgreementTable CountAgreement(const std::vector<bool>& person, const std::vector<bool>& grader);

/// Cohen's kappa of the table, (p_o - p_e) / (1 - p_e) with p_e from the two margins (Cohen
/// 1960; sklearn.metrics.cohen_kappa_score). NaN when p_e is 1 (both gave one verdict
/// throughout, n = 1 included) or the table is empty: agreement beyond chance is then not
/// measurable.
double CohenKappa(const AgreementTable& table);

struct AgreementSummary {
  AgreementTable table;
  int64_t n = 0;
  double base_rate = 0;         // the person's pass rate
  double grader_pass_rate = 0;  // the grader's pass rate
  double agreement = 0;         // share of pairs with the same verdict
  Interval agreement_interval;
  double kappa = 0;
  Interval kappa_interval;  // either end NaN when the resamples cannot place it (see below)
  double sensitivity = 0;   // grader pass among the person's passes
  Interval sensitivity_interval;
  double specificity = 0;  // grader fail among the person's fails
  Interval specificity_interval;
};

/// The summary of a table. Agreement's and kappa's intervals are percentile bootstrap intervals
/// over the labelled pairs (resampled with replacement): each of `resamples` resamples draws the
/// four cells' counts from Multinomial(n; table / n), exactly as drawing n pairs by index would,
/// as a chain of conditional binomials on one SeededRandom(seed) stream (SampleBinomial: cell
/// pass_pass, then pass_fail, then fail_pass of what is left). The ends are the definition-7
/// percentiles (percentile.h) at 100 (1 - confidence) / 2 and 100 (1 + confidence) / 2. A
/// resample whose kappa is undefined sorts below every defined one, so an end that falls on or
/// next to such resamples is NaN: a gate on the lower bound then fails rather than reading a
/// value the data cannot give. Sensitivity and specificity take Wilson intervals (NaN values
/// and {0, 1} intervals when their margin is empty). An empty table gives NaN throughout.
AgreementSummary SummarizeAgreement(const AgreementTable& table, int resamples = 10000,
                                    uint64_t seed = 20261201, double confidence = 0.95);

/// Spearman's rank correlation of parallel `x` and `y`: Pearson's r of their ranks, ties given
/// their average rank (scipy.stats.spearmanr). NaN when n < 2 or either side is constant.
double SpearmanRho(const std::vector<double>& x, const std::vector<double>& y);

/// The mean of |x_i - y_i|; NaN when empty.
double MeanAbsoluteDifference(const std::vector<double>& x, const std::vector<double>& y);

/// Share of items whose repeated grades are all equal: `grades[i]` holds item i's grades, one
/// per repeat. Items with fewer than two grades are left out; NaN when none is left.
double SelfConsistency(const std::vector<std::vector<double>>& grades);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_LABEL_AGREEMENT_H_
