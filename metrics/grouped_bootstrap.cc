#include "metrics/grouped_bootstrap.h"

#include <algorithm>
#include <cmath>
#include <cstring>
#include <functional>

#include "metrics/binomial_sampler.h"
#include "metrics/percentile.h"
#include "metrics/resample_sum.h"
#include "metrics/seeded_random.h"

namespace plumb::metrics {
namespace {

struct DistinctValue {
  double value;
  uint64_t count;
};

// The distinct values of `values` with their multiplicities, in order of first appearance.
// Counted in an open-addressing table keyed by the value's bits, since sorting all n values
// would cost more than the resampling itself when there are few distinct ones; -0.0 is counted
// as +0.0 (adding +0.0 turns the one into the other), so equal values form one group.
std::vector<DistinctValue> CountDistinct(const std::vector<double>& values) {
  std::vector<DistinctValue> distinct;
  std::vector<size_t> slots(64, 0);  // 1 + index into `distinct`; 0 marks an empty slot
  int shift = 64 - 6;
  for (double v : values) {
    v += 0.0;
    uint64_t bits;
    std::memcpy(&bits, &v, sizeof bits);
    size_t slot = static_cast<size_t>((bits * 0x9E3779B97F4A7C15u) >> shift);
    for (;;) {
      const size_t entry = slots[slot];
      if (entry == 0) {
        distinct.push_back({v, 1});
        slots[slot] = distinct.size();
        break;
      }
      if (distinct[entry - 1].value == v) {
        ++distinct[entry - 1].count;
        break;
      }
      slot = (slot + 1) & (slots.size() - 1);
    }
    if (2 * distinct.size() > slots.size()) {  // keep the table at most half full
      slots.assign(2 * slots.size(), 0);
      --shift;
      for (size_t i = 0; i < distinct.size(); ++i) {
        std::memcpy(&bits, &distinct[i].value, sizeof bits);
        slot = static_cast<size_t>((bits * 0x9E3779B97F4A7C15u) >> shift);
        while (slots[slot] != 0) slot = (slot + 1) & (slots.size() - 1);
        slots[slot] = i + 1;
      }
    }
  }
  return distinct;
}

// The plan over n cases by the cost rule in the header, from the multiplicities alone, in
// descending order (which of several equal multiplicities comes first changes no cost).
GroupedBootstrapPlan ChoosePlan(const std::vector<uint64_t>& counts, uint64_t n) {
  GroupedBootstrapPlan plan;
  const size_t d = counts.size();
  double best = static_cast<double>(n);  // index resampling
  double chain = 0;                      // the binomial draws of the first j values
  uint64_t remaining = n;                // M_{j+1}: cases of the values from j on
  for (size_t j = 0; j < d; ++j) {
    const uint64_t tail = j + 1 == d ? 0 : remaining;
    if (chain + static_cast<double>(tail) < best) {
      best = chain + static_cast<double>(tail);
      plan.index_resampling = false;
      plan.binomial_values = j;
      plan.tail_cases = tail;
    }
    const uint64_t m = counts[j];
    chain += kBinomialDrawCost + kBinomialSdCost * std::sqrt(static_cast<double>(m) *
                                                             static_cast<double>(remaining - m) /
                                                             static_cast<double>(remaining));
    remaining -= m;
  }
  plan.distinct_values = d;
  if (plan.index_resampling) plan.binomial_values = plan.tail_cases = 0;
  return plan;
}

// The plan for `values` (n >= 2, all finite); `*distinct` gets the distinct values, in plan
// order unless the plan is index resampling (then it is not needed and left unsorted).
GroupedBootstrapPlan MakePlan(const std::vector<double>& values,
                              std::vector<DistinctValue>* distinct) {
  *distinct = CountDistinct(values);
  std::vector<uint64_t> counts(distinct->size());
  for (size_t i = 0; i < counts.size(); ++i) counts[i] = (*distinct)[i].count;
  std::sort(counts.begin(), counts.end(), std::greater<uint64_t>());
  const GroupedBootstrapPlan plan = ChoosePlan(counts, values.size());
  if (!plan.index_resampling) {
    std::sort(distinct->begin(), distinct->end(),
              [](const DistinctValue& a, const DistinctValue& b) {
                return a.count != b.count ? a.count > b.count : a.value < b.value;
              });
  }
  return plan;
}

bool AllFinite(const std::vector<double>& values) {
  for (double v : values) {
    if (!std::isfinite(v)) return false;
  }
  return true;
}

}  // namespace

GroupedBootstrapPlan PlanGroupedBootstrap(const std::vector<double>& values) {
  if (values.size() < 2 || !AllFinite(values)) return {};
  std::vector<DistinctValue> distinct;
  return MakePlan(values, &distinct);
}

Interval GroupedBootstrapMean(const std::vector<double>& values, int resamples, uint64_t seed,
                              double confidence) {
  const size_t n = values.size();
  if (n == 0) return {0, 0};
  if (n == 1) return {values[0], values[0]};
  // A non-finite value would make every resample mean NaN or infinite, and NaN cannot be sorted.
  if (!AllFinite(values)) return {std::nan(""), std::nan("")};
  if (resamples < 1) {
    double total = 0;
    for (double v : values) total += v;
    const double mean = total / static_cast<double>(n);
    return {mean, mean};
  }
  const GroupedSum grouped(values);
  if (grouped.plan().index_resampling) {
    return PercentileBootstrapMean(values, resamples, seed, confidence);
  }
  const BinomialTables tables(grouped.plan().binomial_values > 0 ? n : 0);
  SeededRandom random(seed);
  std::vector<double> means(static_cast<size_t>(resamples));
  for (double& resample_mean : means) {
    resample_mean = grouped.Sum(n, random, tables) / static_cast<double>(n);
  }
  std::sort(means.begin(), means.end());
  const double tail_share = (1 - confidence) / 2;
  return {PercentileSorted(means, 100 * tail_share),
          PercentileSorted(means, 100 * (1 - tail_share))};
}

GroupedSum::GroupedSum(const std::vector<double>& values) {
  std::vector<DistinctValue> distinct;
  plan_ = values.size() < 2 ? GroupedBootstrapPlan{} : MakePlan(values, &distinct);
  if (plan_.index_resampling) {
    values_ = values;
    return;
  }
  const size_t chain = plan_.binomial_values;
  uint64_t remaining = values.size();
  for (size_t j = 0; j < chain; ++j) {
    odds_.emplace_back(static_cast<double>(distinct[j].count) / static_cast<double>(remaining));
    remaining -= distinct[j].count;
  }
  for (const DistinctValue& d : distinct) values_.push_back(d.value);
  if (plan_.tail_cases > 0) {
    tail_.reserve(plan_.tail_cases);
    for (size_t j = chain; j < distinct.size(); ++j) {
      tail_.insert(tail_.end(), distinct[j].count, distinct[j].value);
    }
  }
}

double GroupedSum::Sum(uint64_t draws, SeededRandom& random, const BinomialTables& tables) const {
  if (plan_.index_resampling)
    return SumOfUniformDraws(values_.data(), values_.size(), draws, random);
  double sum = 0;
  uint64_t left = draws;
  for (size_t j = 0; j < odds_.size(); ++j) {
    const uint64_t count = SampleBinomial(random, left, odds_[j], tables);
    sum += static_cast<double>(count) * values_[j];
    left -= count;
  }
  if (tail_.empty()) return sum + static_cast<double>(left) * values_.back();
  return sum + SumOfUniformDraws(tail_.data(), tail_.size(), left, random);
}

}  // namespace plumb::metrics
