#include "metrics/windowed_quantile_ratio.h"

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>

#include "metrics/percentile.h"

namespace plumb::metrics {
namespace {

constexpr double kWindowSds = 7;

/// Rank of each position when the values are sorted ascending, equal values by position; and
/// the sorted values.
void RankOf(const std::vector<double>& values, std::vector<uint32_t>* rank,
            std::vector<double>* sorted) {
  std::vector<uint32_t> order(values.size());
  for (uint32_t k = 0; k < order.size(); ++k) order[k] = k;
  std::stable_sort(order.begin(), order.end(),
                   [&](uint32_t x, uint32_t y) { return values[x] < values[y]; });
  rank->assign(values.size(), 0);
  sorted->resize(values.size());
  for (uint32_t r = 0; r < order.size(); ++r) {
    (*rank)[order[r]] = r;
    (*sorted)[r] = values[order[r]];
  }
}

int Class(uint32_t rank, uint64_t a, uint64_t b) { return rank < a ? 0 : rank < b ? 1 : 2; }

}  // namespace

WindowedQuantileRatio::WindowedQuantileRatio(const std::vector<double>& base,
                                             const std::vector<double>& cand, uint64_t n, double p)
    : n_(n),
      size_(base.size()),
      p_(p),
      in_subset_(n == 0 ? 0.0 : static_cast<double>(base.size()) / static_cast<double>(n)) {
  RankOf(base, &base_rank_, &base_sorted_);
  RankOf(cand, &cand_rank_, &cand_sorted_);
  const double q = p / 100;
  const double half =
      std::ceil(kWindowSds * std::sqrt(static_cast<double>(size_) * q * (1 - q))) + 2;
  const double center = std::floor(static_cast<double>(size_ > 0 ? size_ - 1 : 0) * q);
  a_ = static_cast<uint64_t>(std::max(0.0, center - half));
  b_ = static_cast<uint64_t>(std::min(static_cast<double>(size_), center + half + 2));
  std::array<Cell, 9> all;
  for (int c = 0; c < 9; ++c) all[c].number = c;
  for (uint32_t k = 0; k < size_; ++k) {
    all[3 * Class(base_rank_[k], a_, b_) + Class(cand_rank_[k], a_, b_)].cases.push_back(k);
  }
  for (Cell& c : all) {
    if (!c.cases.empty()) cells_.push_back(std::move(c));
  }
  std::stable_sort(cells_.begin(), cells_.end(),
                   [](const Cell& x, const Cell& y) { return x.cases.size() < y.cases.size(); });
  uint64_t remaining = size_;
  for (size_t j = 0; j + 1 < cells_.size(); ++j) {
    odds_.emplace_back(static_cast<double>(cells_[j].cases.size()) /
                       static_cast<double>(remaining));
    remaining -= cells_[j].cases.size();
  }
}

double WindowedQuantileRatio::Quantile(const std::vector<uint32_t>& count_by_rank,
                                       const std::vector<double>& sorted, uint64_t t) const {
  // count_by_rank covers every rank here; Draw passes the window's slice through the same walk.
  const PercentileRank rank = PercentileRankType7(static_cast<size_t>(t), p_);
  const uint64_t upper = std::min<uint64_t>(rank.lower + 1, t - 1);
  uint64_t seen = 0;
  size_t k = 0;
  while (seen + count_by_rank[k] <= rank.lower) seen += count_by_rank[k++];
  const double below = sorted[k];
  while (seen + count_by_rank[k] <= upper) seen += count_by_rank[k++];
  const double above = sorted[k];
  if (rank.lower + 1 >= t) return below;
  return InterpolateBetween(below, above, rank.gamma);
}

double WindowedQuantileRatio::Draw(SeededRandom& random, const BinomialTables& tables) const {
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  if (size_ == 0) return kNaN;
  const uint64_t t = size_ == n_ ? n_ : SampleBinomial(random, n_, in_subset_, tables);
  if (t == 0) return kNaN;
  std::array<uint64_t, 9> count{};  // by cell number
  std::array<int, 9> chain_of;      // cell number -> index into cells_, -1 when empty
  chain_of.fill(-1);
  uint64_t left = t;
  for (size_t j = 0; j < cells_.size(); ++j) {
    const uint64_t c =
        j + 1 == cells_.size() ? left : SampleBinomial(random, left, odds_[j], tables);
    count[cells_[j].number] = c;
    chain_of[cells_[j].number] = static_cast<int>(j);
    left -= c;
  }
  // The window cells' draws, then the counts below and inside each window.
  std::vector<uint32_t> drawn;
  auto draw_cell = [&](int number) {
    if (chain_of[number] < 0) return;
    const std::vector<uint32_t>& cases = cells_[chain_of[number]].cases;
    for (uint64_t k = 0; k < count[number]; ++k) {
      drawn.push_back(cases[random.UniformIndex(cases.size())]);
    }
  };
  for (int number = 0; number < 9; ++number) {
    if (number / 3 == 1 || number % 3 == 1) draw_cell(number);
  }
  uint64_t base_below = 0, cand_below = 0, base_inside = 0, cand_inside = 0;
  for (int number = 0; number < 9; ++number) {
    if (number / 3 == 0) base_below += count[number];
    if (number / 3 == 1) base_inside += count[number];
    if (number % 3 == 0) cand_below += count[number];
    if (number % 3 == 1) cand_inside += count[number];
  }
  const PercentileRank rank = PercentileRankType7(static_cast<size_t>(t), p_);
  const uint64_t upper = std::min<uint64_t>(rank.lower + 1, t - 1);
  const bool base_in = base_below <= rank.lower && upper < base_below + base_inside;
  const bool cand_in = cand_below <= rank.lower && upper < cand_below + cand_inside;
  if (base_in && cand_in) {
    // Read off the window: the draws below it shift the ranks; the sorted values start at a.
    const uint64_t width = b_ - a_;
    std::vector<uint32_t> base_count(width + 1, 0), cand_count(width + 1, 0);
    for (uint32_t k : drawn) {
      if (base_rank_[k] >= a_ && base_rank_[k] < b_) ++base_count[base_rank_[k] - a_];
      if (cand_rank_[k] >= a_ && cand_rank_[k] < b_) ++cand_count[cand_rank_[k] - a_];
    }
    auto windowed = [&](const std::vector<uint32_t>& counts, const std::vector<double>& sorted,
                        uint64_t below) {
      uint64_t seen = below;
      size_t k = 0;
      while (seen + counts[k] <= rank.lower) seen += counts[k++];
      const double low = sorted[a_ + k];
      while (seen + counts[k] <= upper) seen += counts[k++];
      const double high = sorted[a_ + k];
      return rank.lower + 1 >= t ? low : InterpolateBetween(low, high, rank.gamma);
    };
    return windowed(cand_count, cand_sorted_, cand_below) /
           windowed(base_count, base_sorted_, base_below);
  }
  // Outside the window: draw the other cells' indices too and read off every case.
  for (int number = 0; number < 9; ++number) {
    if (number / 3 != 1 && number % 3 != 1) draw_cell(number);
  }
  std::vector<uint32_t> base_count(size_, 0), cand_count(size_, 0);
  for (uint32_t k : drawn) {
    ++base_count[base_rank_[k]];
    ++cand_count[cand_rank_[k]];
  }
  return Quantile(cand_count, cand_sorted_, t) / Quantile(base_count, base_sorted_, t);
}

}  // namespace plumb::metrics
