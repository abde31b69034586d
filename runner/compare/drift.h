#ifndef PLUMB_RUNNER_COMPARE_DRIFT_H_
#define PLUMB_RUNNER_COMPARE_DRIFT_H_

/// DriftReport is the comparison of a candidate run with a base run of the same suite (SPEC §7):
/// cases paired by id, per-metric and per-tag deltas with paired-bootstrap intervals and p-values,
/// verdicts, lost and gained cases, latency ratios, and the merge gate's exit code. `plumb drift`
/// and `plumb run --baseline` build one with ComputeDrift and hand it to the JSON, terminal,
/// Markdown and HTML writers. Computation over two runs' per-case values (RunValues, which
/// `plumb drift` streams from the run directories); the only I/O is reading back, through
/// RunValues, the records and gold of the cases whose outcome changed.
///
/// The statistics, stated once here so every writer can point to them:
/// - Pairing: a case is paired when both runs' run.json list it with the same gold hash; cases
///   in one run only, and cases whose gold changed, are listed apart and left out of every
///   statistic. Paired cases are ordered by id (bytewise), and that order is the bootstrap's
///   case index. With --repeat, a case's value of a metric is its mean over the repeats that
///   define it, its latency the mean over repeats that did not error or timed out (a timeout
///   counts at its timeout, a lower bound), and it passes when every repeat passed.
/// - A metric is paired on a case when both runs define it there. It is tested as a 0/1 metric
///   (exact McNemar on the discordant pairs) when it is one of exact_match, correct,
///   pattern_match, number_match, pass_rate and every paired value is exactly 0 or 1; otherwise
///   with the Wilcoxon signed-rank test on the differences (cand - base). See
///   metrics/paired_tests.h for both.
/// - Paired bootstrap: B resamples of the n paired cases, each n case indices drawn uniformly
///   with replacement; a statistic over a subset of the cases (a tag, or a metric defined on
///   some cases only) is its mean over the drawn cases of that subset (each counted as often as
///   drawn), and a resample that draws none of them is left out. Interval ends are the
///   definition-7 percentiles at 2.5 and 97.5 of the kept resamples. Only each statistic's own
///   resample distribution enters its interval, and that is drawn without drawing n indices:
///   the number of draws landing in a subset of s cases is Binomial(n, s / n) (none drawn when
///   s == n), and given that number K the draws are uniform over the subset, so the mean is the
///   mean of K draws from its differences, drawn by counts per distinct difference
///   (metrics::GroupedSum, grouped_bootstrap.h); the latency p50 and p95 ratios come from
///   metrics::WindowedQuantileRatio, which draws one by one only the cases near the percentile.
///   Both have exactly the index bootstrap's distribution (their headers say why). Streams: each
///   distinct subset has its own metrics::SeededRandom(seed), which per resample draws K, then
///   each statistic over that subset in registration order (the run-level metrics in display
///   order, then tag by tag); each latency percentile has its own SeededRandom(seed). So the
///   first statistic over every paired case has exactly metrics::GroupedBootstrapMean(its
///   differences, B, seed). The subsets and percentiles run on up to WorkerCount() threads with
///   the same values as on one. tests/reference/drift_reference.py transcribes every draw.
/// - Missing cases: a case in the base but not in the candidate is, unless
///   DriftOptions::allow_missing, paired with a candidate that scored 0 on every metric the base
///   defines there and failed (as an errored case scores): it counts as lost, and the report lists
///   it in only_in_base with missing_counted set. With allow_missing it is left out as above.
/// - Tests: a metric's p-value is exact McNemar (0/1) or Wilcoxon signed-rank (exact up to 50
///   non-zero differences, ties and zeros included). A metric with fewer paired cases than
///   metrics::FewestPairsForSignificance(alpha) (6 at 0.05) cannot reach p <= alpha whatever
///   happened: its verdict is `too few cases`, needed_more says how many more it needs, and it
///   takes no part in the family below.
/// - Family correction: the gated run-level metrics that have enough cases form one family; their
///   p-values are Holm-adjusted together (p_holm), so the gate's false-alarm rate over the whole
///   family stays at or below alpha = 0.05. A metric that is not gated is judged on its own p.
///   Per tag, each metric's p-values are Holm-adjusted over the tags that have it.
/// - Verdict: regressed when all hold: the interval's upper end is below 0, delta <=
///   -min_effect, and the (adjusted) p <= alpha; improved symmetrically; otherwise steady. For a
///   0/1 metric the exact McNemar test decides (whenever it rejects, the percentile interval of
///   the same discordant pairs lies on the same side of 0 in practice), so the verdict does not
///   depend on --seed.
/// - Detectable effect (min_detectable_effect, per metric with its own n): the smallest drop the
///   gate as configured catches with power 0.8: the metric's test at the level Holm's first step
///   leaves it (alpha / family size for a gated metric, alpha otherwise) together with
///   min_effect. 0/1 metrics: exact binomial power, the observed flips (D of n, taken as
///   (D + 1/2) / n so that runs showing few flips by chance do not over-promise) kept as noise
///   and the drop added as lost cases (metrics::McNemarDetectableDrop); continuous metrics: the
///   normal approximation of a paired test from the spread of the differences
///   (metrics::ShiftDetectableDrop). Capped at the base mean (the candidate cannot fall below 0):
///   NaN ("n/a") when no drop within that range reaches the power, with too few cases, or, for a
///   continuous metric on which no paired case changed, with no spread to estimate from.

#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "metrics/interval.h"
#include "runner/run/cause_breakdown.h"
#include "runner/run/failure_cause.h"
#include "runner/run/freshness.h"
#include "runner/run/run_reader.h"
#include "runner/run/run_values.h"

namespace plumb {

struct DriftOptions {
  std::vector<std::string> gate = {"correct", "token_f1", "citation_recall"};
  double min_effect = 0.005;
  int resamples = 10000;
  uint64_t seed = 20261201;
  bool allow_missing = false;  // --allow-missing: cases the candidate lacks are left out
  /// --max-slowdown: with latency_p95 gated, the p95 ratio's interval must lie wholly above
  /// 1 + max_slowdown for the latency to count as regressed (issue 21).
  double max_slowdown = 0.10;
};

/// The gate id of the latency p95 (not a per-case metric): `--gate latency_p95`.
inline constexpr const char* kLatencyGate = "latency_p95";

/// The level, power and confidence every drift uses (SPEC §7: 95% intervals; the issue: alpha
/// 0.05 and power 0.8 for the detectable effect).
inline constexpr double kDriftConfidence = 0.95;
inline constexpr double kDriftAlpha = 0.05;
inline constexpr double kDriftPower = 0.8;

enum class Verdict { kSteady, kRegressed, kImproved, kTooFewCases };
/// "steady", "regressed", "improved", "too few cases"
const char* VerdictName(Verdict verdict);

/// The verdict rule for one delta, its interval and its p-value after the family correction:
/// regressed when interval.high < 0, delta <= -min_effect and p <= alpha; improved
/// symmetrically; steady otherwise (NaN anywhere -> steady).
Verdict DecideVerdict(double delta, const metrics::Interval& interval, double min_effect, double p,
                      double alpha = kDriftAlpha);

struct MetricDrift {
  std::string metric;
  int64_t n = 0;  // paired cases where both runs define the metric
  double base_mean = 0;
  double cand_mean = 0;
  double delta = 0;  // cand_mean - base_mean, the mean of the paired differences
  metrics::Interval interval;
  bool mcnemar = false;  // false: Wilcoxon signed-rank
  int64_t lost = 0;      // McNemar's discordant pairs: base 1, cand 0
  int64_t gained = 0;    // base 0, cand 1
  double p_value = 1;
  /// The p-value the verdict used: Holm-adjusted over the gated family (gated run-level
  /// metrics) or over the tags that have this metric (tag rows); p_value otherwise.
  double p_holm = 1;
  int64_t needed_more = 0;  // more paired cases needed before a verdict is possible
  Verdict verdict = Verdict::kSteady;
  bool gated = false;
};

struct TagDrift {
  std::string tag;
  int64_t cases = 0;  // paired cases with the tag
  std::vector<MetricDrift> metrics;
};

/// A latency percentile of the paired cases and the candidate's ratio to the base. `available`
/// is false when no paired case has a positive latency in both runs (e.g. scored predictions
/// without latency_ms); the numbers are then meaningless.
struct LatencyDrift {
  bool available = false;
  double base = 0;
  double cand = 0;
  double ratio = 0;
  metrics::Interval interval;
};

/// The workers' mean warm-up (run.json's aggregates.warmup) in both runs and the candidate's
/// ratio to the base, with metrics::UnpairedBootstrapMeanRatio's interval (a run's workers are
/// not paired with the other's). `available` is false unless both runs recorded warm-ups.
struct WarmupDrift {
  bool available = false;
  std::string base_signal, cand_signal;  // "ready_line", "ready_url", "first_call"
  int64_t base_n = 0, cand_n = 0;        // workers (restarts included)
  double base_mean_ms = 0, cand_mean_ms = 0;
  double ratio = 0;
  metrics::Interval interval;
};

/// An amount per case (tokens in, tokens out, cost; issue 21) over the paired cases where both
/// runs have it: both runs' means and the candidate's ratio to the base, with
/// metrics::PairedBootstrapMeanRatio's interval (seeded like the rest of the report).
/// `available` is false when no paired case has it in both runs (or the base's sum is 0).
struct AmountDrift {
  bool available = false;
  int64_t n = 0;
  double base_mean = 0, cand_mean = 0;
  double ratio = 0;
  metrics::Interval interval;
};

/// The latency p95 as a gated quantity (`--gate latency_p95`): regressed when the p95 ratio's
/// interval lies wholly above 1 + max_slowdown. `measured` is false without a p95 ratio.
struct LatencyGateVerdict {
  bool gated = false;
  bool measured = false;
  bool regressed = false;
  double limit = 1.10;  // 1 + max_slowdown
};

/// A corpus update's refresh time (issue 23) in both runs and the candidate's ratio to the
/// base: the mean refresh_ms of each run's refreshes (one per run, one per shard when merged).
/// Only updates both runs refreshed for are listed. No interval: a run refreshes once.
struct RefreshDrift {
  std::string update;
  double base_ms = 0, cand_ms = 0;
  int64_t base_n = 0, cand_n = 0;  // refreshes averaged (shards)
  double ratio = 0;
};

/// One paired case whose pass/fail outcome changed.
struct CaseChange {
  std::string id;
  std::map<std::string, double> deltas;    // cand - base, metrics both runs define on the case
  std::optional<std::string> base_answer;  // first repeat's answer; none on abstention or error
  std::optional<std::string> cand_answer;
  std::string base_error;  // first repeat's error, empty when it did not error
  std::string cand_error;
  /// Why the run that failed the case failed it (runner/run/failure_cause.h): cand_cause for a
  /// lost case, base_cause for a gained one; kNone on the side that passed.
  FailureCause base_cause = FailureCause::kNone;
  FailureCause cand_cause = FailureCause::kNone;
  std::string base_reason;  // FailureReason of the failing side (runner/run/failure_reason.h)
  std::string cand_reason;
  std::vector<std::string> gold;  // the base's gold answers; empty: the gold is to abstain
};

/// What identifies a run in the report.
struct RunIdentity {
  std::string dir;
  std::string pipeline;
  std::map<std::string, std::string> labels;
  std::string suite_name;
  std::string suite_hash;
  std::string corpus_fingerprint;
  std::string started_at;
};

struct DriftGate {
  std::vector<std::string> metrics;  // the gated metric ids
  std::vector<std::string> regressed;
  std::vector<std::string> broken_floors;  // the candidate's floors and ceilings that broke
  int exit_code = 0;                       // kExitOk or kExitFloorBroken
  std::string reason;                      // one line
};

struct DriftReport {
  DriftOptions options;
  RunIdentity base;
  RunIdentity cand;
  bool suite_changed = false;
  bool corpus_changed = false;
  bool pipeline_config_changed = false;
  std::vector<std::string> paired;  // by id
  std::vector<std::string> only_in_base;
  bool missing_counted = false;  // only_in_base entered the statistics as lost (no --allow-missing)
  std::vector<std::string> only_in_cand;
  std::vector<std::string> gold_changed;
  std::vector<MetricDrift> metrics;  // in display order
  std::vector<TagDrift> tags;        // sorted by tag
  int64_t latency_n = 0;             // paired cases with a latency in both runs
  int64_t latency_lower_bounds = 0;  // of latency_n: a timeout (a lower bound) in either run
  LatencyDrift latency_p50;
  LatencyDrift latency_p95;
  LatencyGateVerdict latency_gate;
  /// Streamed replies' time to first token (issue 21): paired cases with one in both runs, and
  /// the p50/p95 ratios with metrics::PairedBootstrapQuantileRatio's intervals.
  int64_t ttft_n = 0;
  LatencyDrift ttft_p50;
  LatencyDrift ttft_p95;
  AmountDrift input_tokens;
  AmountDrift output_tokens;
  AmountDrift cost;
  /// The currency of both runs' prices; cost is compared only when both runs have a price in
  /// the same currency (cost_note says why not otherwise, empty when neither has a price).
  std::string cost_currency;
  std::string cost_note;
  WarmupDrift warmup;
  std::vector<RefreshDrift> refreshes;  // per update both runs refreshed for, in base order
  std::map<std::string, double> min_detectable_effect;  // NaN: n/a, see above
  /// The family correction, one sentence for the reports, e.g. "Holm over the 3 gated metrics
  /// correct, token_f1, citation_recall".
  std::string correction;
  std::vector<std::string> family;  // the gated metrics Holm adjusted together
  std::vector<CaseChange> lost;     // pass -> fail, largest drop of the gated metrics first
  std::vector<CaseChange> gained;   // fail -> pass, largest gain first
  /// The lost cases counted by their candidate cause (shares and intervals of the lost count).
  CauseBreakdown lost_causes;
  std::vector<std::string> unstable;  // pass/fail differs between repeats, in either run
  int base_repeat = 1;
  int cand_repeat = 1;
  DriftGate gate;

  const MetricDrift* Find(const std::string& metric) const;
};

/// Compares `cand` with `base`. False with a sentence when the runs are of different suites
/// (their suite names differ): such runs have no cases in common worth pairing; or when the
/// records or gold of a changed case cannot be read back (RunValues::FirstRecord).
bool ComputeDrift(const RunValues& base, const RunValues& cand, const DriftOptions& options,
                  DriftReport* report, std::string* error);
/// The same over runs already loaded in full (RunValuesOf each): the same report.
bool ComputeDrift(const LoadedRun& base, const LoadedRun& cand, const DriftOptions& options,
                  DriftReport* report, std::string* error);

/// Metric ids in the order every report shows them: the answer metrics, citation metrics,
/// recall@k by k, mrr, pass_rate, then any other id alphabetically.
std::vector<std::string> MetricDisplayOrder(std::vector<std::string> metrics);

/// True for the metric ids SPEC §6 defines per case (recall@K for any K), so a misspelt --gate
/// can be refused.
bool IsKnownCaseMetric(const std::string& metric);

}  // namespace plumb

#endif  // PLUMB_RUNNER_COMPARE_DRIFT_H_
