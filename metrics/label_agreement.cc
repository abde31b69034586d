#include "metrics/label_agreement.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>

#include "metrics/binomial_sampler.h"
#include "metrics/percentile.h"
#include "metrics/seeded_random.h"

namespace plumb::metrics {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

double Share(int64_t part, int64_t whole) {
  return whole > 0 ? static_cast<double>(part) / static_cast<double>(whole) : kNaN;
}

double Agreement(const AgreementTable& t) { return Share(t.pass_pass + t.fail_fail, t.n()); }

// A NaN end of an interval stays NaN; an end interpolated next to -inf (an undefined resample) is
// -inf or NaN, and both read as "cannot be placed".
double FiniteOrNaN(double value) { return std::isfinite(value) ? value : kNaN; }

std::vector<double> AverageRanks(const std::vector<double>& values) {
  std::vector<size_t> order(values.size());
  std::iota(order.begin(), order.end(), size_t{0});
  std::stable_sort(order.begin(), order.end(),
                   [&](size_t a, size_t b) { return values[a] < values[b]; });
  std::vector<double> ranks(values.size());
  for (size_t i = 0; i < order.size();) {
    size_t j = i;
    while (j + 1 < order.size() && values[order[j + 1]] == values[order[i]]) ++j;
    const double rank = (static_cast<double>(i) + static_cast<double>(j)) / 2.0 + 1.0;
    for (size_t k = i; k <= j; ++k) ranks[order[k]] = rank;
    i = j + 1;
  }
  return ranks;
}

}  // namespace

AgreementTable CountAgreement(const std::vector<bool>& person, const std::vector<bool>& grader) {
  AgreementTable t;
  const size_t n = std::min(person.size(), grader.size());
  for (size_t i = 0; i < n; ++i) {
    if (person[i]) {
      (grader[i] ? t.pass_pass : t.pass_fail) += 1;
    } else {
      (grader[i] ? t.fail_pass : t.fail_fail) += 1;
    }
  }
  return t;
}

double CohenKappa(const AgreementTable& t) {
  const int64_t n = t.n();
  if (n == 0) return kNaN;
  const double nn = static_cast<double>(n);
  const double person_pass = static_cast<double>(t.pass_pass + t.pass_fail) / nn;
  const double grader_pass = static_cast<double>(t.pass_pass + t.fail_pass) / nn;
  const double observed = static_cast<double>(t.pass_pass + t.fail_fail) / nn;
  const double expected = person_pass * grader_pass + (1 - person_pass) * (1 - grader_pass);
  if (expected >= 1.0) return kNaN;
  return (observed - expected) / (1.0 - expected);
}

AgreementSummary SummarizeAgreement(const AgreementTable& table, int resamples, uint64_t seed,
                                    double confidence) {
  AgreementSummary s;
  s.table = table;
  s.n = table.n();
  s.base_rate = Share(table.pass_pass + table.pass_fail, s.n);
  s.grader_pass_rate = Share(table.pass_pass + table.fail_pass, s.n);
  s.agreement = Agreement(table);
  s.kappa = CohenKappa(table);
  const int64_t person_pass = table.pass_pass + table.pass_fail;
  const int64_t person_fail = table.fail_pass + table.fail_fail;
  s.sensitivity = Share(table.pass_pass, person_pass);
  s.specificity = Share(table.fail_fail, person_fail);
  s.sensitivity_interval = person_pass > 0
                               ? WilsonInterval(table.pass_pass, person_pass, confidence)
                               : Interval{kNaN, kNaN};
  s.specificity_interval = person_fail > 0
                               ? WilsonInterval(table.fail_fail, person_fail, confidence)
                               : Interval{kNaN, kNaN};
  if (s.n == 0 || resamples < 1) {
    s.agreement_interval = {s.agreement, s.agreement};
    s.kappa_interval = {s.kappa, s.kappa};
    return s;
  }
  const uint64_t n = static_cast<uint64_t>(s.n);
  const BinomialTables tables(n);
  const double nn = static_cast<double>(n);
  // Conditional probabilities of the chain: cell 1 of all, cell 2 of the rest, cell 3 of the rest.
  const double c1 = static_cast<double>(table.pass_pass);
  const double c2 = static_cast<double>(table.pass_fail);
  const double c3 = static_cast<double>(table.fail_pass);
  auto conditional = [](double cell, double rest) {
    return rest > 0 ? std::min(1.0, cell / rest) : 0.0;
  };
  const BinomialOdds p1(conditional(c1, nn));
  const BinomialOdds p2(conditional(c2, nn - c1));
  const BinomialOdds p3(conditional(c3, nn - c1 - c2));
  SeededRandom random(seed);
  std::vector<double> agreements(static_cast<size_t>(resamples));
  std::vector<double> kappas(static_cast<size_t>(resamples));
  for (int b = 0; b < resamples; ++b) {
    AgreementTable r;
    uint64_t left = n;
    const uint64_t k1 = SampleBinomial(random, left, p1, tables);
    left -= k1;
    const uint64_t k2 = SampleBinomial(random, left, p2, tables);
    left -= k2;
    const uint64_t k3 = SampleBinomial(random, left, p3, tables);
    r.pass_pass = static_cast<int64_t>(k1);
    r.pass_fail = static_cast<int64_t>(k2);
    r.fail_pass = static_cast<int64_t>(k3);
    r.fail_fail = static_cast<int64_t>(left - k3);
    agreements[static_cast<size_t>(b)] = Agreement(r);
    const double kappa = CohenKappa(r);
    kappas[static_cast<size_t>(b)] =
        std::isnan(kappa) ? -std::numeric_limits<double>::infinity() : kappa;
  }
  std::sort(agreements.begin(), agreements.end());
  std::sort(kappas.begin(), kappas.end());
  const double low_p = 100.0 * (1.0 - confidence) / 2.0;
  const double high_p = 100.0 * (1.0 + confidence) / 2.0;
  s.agreement_interval = {PercentileSorted(agreements, low_p),
                          PercentileSorted(agreements, high_p)};
  s.kappa_interval = {FiniteOrNaN(PercentileSorted(kappas, low_p)),
                      FiniteOrNaN(PercentileSorted(kappas, high_p))};
  return s;
}

double SpearmanRho(const std::vector<double>& x, const std::vector<double>& y) {
  const size_t n = std::min(x.size(), y.size());
  if (n < 2) return kNaN;
  const std::vector<double> rx = AverageRanks(std::vector<double>(x.begin(), x.begin() + n));
  const std::vector<double> ry = AverageRanks(std::vector<double>(y.begin(), y.begin() + n));
  const double mean = (static_cast<double>(n) + 1.0) / 2.0;  // the mean of any average ranks
  double sxy = 0, sxx = 0, syy = 0;
  for (size_t i = 0; i < n; ++i) {
    const double dx = rx[i] - mean, dy = ry[i] - mean;
    sxy += dx * dy;
    sxx += dx * dx;
    syy += dy * dy;
  }
  if (sxx == 0 || syy == 0) return kNaN;
  return std::clamp(sxy / std::sqrt(sxx * syy), -1.0, 1.0);
}

double MeanAbsoluteDifference(const std::vector<double>& x, const std::vector<double>& y) {
  const size_t n = std::min(x.size(), y.size());
  if (n == 0) return kNaN;
  double sum = 0;
  for (size_t i = 0; i < n; ++i) sum += std::fabs(x[i] - y[i]);
  return sum / static_cast<double>(n);
}

double SelfConsistency(const std::vector<std::vector<double>>& grades) {
  int64_t items = 0, same = 0;
  for (const std::vector<double>& g : grades) {
    if (g.size() < 2) continue;
    items += 1;
    same += std::all_of(g.begin(), g.end(), [&](double v) { return v == g[0]; }) ? 1 : 0;
  }
  return Share(same, items);
}

}  // namespace plumb::metrics
