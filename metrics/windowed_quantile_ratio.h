#ifndef PLUMB_METRICS_WINDOWED_QUANTILE_RATIO_H_
#define PLUMB_METRICS_WINDOWED_QUANTILE_RATIO_H_

/// One paired-bootstrap resample of a quantile ratio Q_p(cand) / Q_p(base) (the latency drift of
/// SPEC §7, runner/compare/drift.h) without drawing every case index: only the cases near the
/// quantile in either run are drawn one by one, the rest as counts. Pure; Draw is safe from
/// several threads, each with its own SeededRandom.
///
/// Exactness. A resample draws n indices uniformly with replacement from n cases, `size` of which
/// (the subset S) have latencies. The number t that lands in S is Binomial(n, size / n), and
/// given t the draws are uniform over S. Order S's cases by base latency and by candidate
/// latency (stable: equal latencies by position); base rank and candidate rank each fall below a
/// window [a, b) of ranks around p, inside it, or above it, which puts every case in one of nine
/// cells. Given t, the cell counts are Multinomial(t; cell sizes / size), drawn as a chain of
/// conditional binomials, and given the cell counts, the draws inside each cell are uniform over
/// its cases and independent between cells. So drawing the cell counts, then the case indices
/// of the five cells that touch a window, then (only when needed) those of the other four, gives
/// a resample with exactly the distribution of n index draws. The quantile needs the draws' order
/// statistics at ranks lower and lower + 1 (type 7, percentile.h): when both fall among the
/// window's draws (the counts below the window are known from the cells), they are read off the
/// window's cases; otherwise the other cells' indices are drawn too and the statistics are read
/// off every case. The window (half-width 7 standard deviations of the rank, sqrt(size p (1 -
/// p)), plus 2) changes only how often that happens, never the distribution.

#include <cstdint>
#include <vector>

#include "metrics/binomial_sampler.h"
#include "metrics/seeded_random.h"

namespace plumb::metrics {

class WindowedQuantileRatio {
 public:
  /// `base` and `cand`: the latencies of the subset's cases, aligned (finite, positive, not
  /// empty); `n`: the cases every resample draws from (n >= base.size()); p in [0, 100].
  WindowedQuantileRatio(const std::vector<double>& base, const std::vector<double>& cand,
                        uint64_t n, double p);

  /// One resample's ratio, NaN when no draw landed in the subset. Consumes from `random`, in
  /// order: t (SampleBinomial(n, size / n), none when size == n); the nine cell counts in
  /// ascending order of cell size (ties by cell number 3 * base class + cand class, classes 0
  /// below, 1 inside, 2 above the window), empty cells skipped, each Binomial(trials left,
  /// size / sizes left) and the last non-empty cell the remainder; then for each cell touching
  /// a window, in cell-number order, its count of UniformIndex(cell size) over its cases in
  /// subset order; when a statistic falls outside the window, the same for the other cells.
  /// `tables` must cover n trials.
  double Draw(SeededRandom& random, const BinomialTables& tables) const;

  /// The window's first and one-past-last rank (exposed for tests).
  uint64_t window_begin() const { return a_; }
  uint64_t window_end() const { return b_; }

 private:
  struct Cell {
    int number;
    std::vector<uint32_t> cases;  // subset positions, ascending
  };
  double Quantile(const std::vector<uint32_t>& count_by_rank, const std::vector<double>& sorted,
                  uint64_t t) const;

  uint64_t n_, size_;
  double p_;
  uint64_t a_ = 0, b_ = 0;
  std::vector<double> base_sorted_, cand_sorted_;
  std::vector<uint32_t> base_rank_, cand_rank_;  // by subset position
  std::vector<Cell> cells_;                      // non-empty cells in chain order
  std::vector<BinomialOdds> odds_;               // for every cell but the last
  BinomialOdds in_subset_;
};

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_WINDOWED_QUANTILE_RATIO_H_
