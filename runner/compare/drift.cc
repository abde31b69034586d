#include "runner/compare/drift.h"

#include <fmt/format.h>

#include <algorithm>
#include <atomic>
#include <cmath>
#include <cstring>
#include <functional>
#include <limits>
#include <map>
#include <memory>
#include <set>
#include <system_error>
#include <thread>
#include <unordered_map>

#include "metrics/binomial_sampler.h"
#include "metrics/detectable_effect.h"
#include "metrics/grouped_bootstrap.h"
#include "metrics/paired_bootstrap.h"
#include "metrics/paired_mean_ratio.h"
#include "metrics/paired_tests.h"
#include "metrics/percentile.h"
#include "metrics/seeded_random.h"
#include "metrics/unpaired_bootstrap.h"
#include "metrics/windowed_quantile_ratio.h"
#include "runner/base/parallel_chunks.h"
#include "runner/run/exit_code.h"
#include "runner/run/failure_reason.h"
#include "runner/run/run_aggregates.h"

namespace plumb {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
/// PairedCases::cand_row of a case the candidate lacks (counted as lost, see drift.h).
constexpr uint32_t kMissingRow = std::numeric_limits<uint32_t>::max();

bool IsBinaryKind(const std::string& metric) {
  static const std::set<std::string> kBinary = {"exact_match",  "correct",     "pattern_match",
                                                "number_match", "covers_gold", "pass_rate",
                                                "fresh",        "stale"};
  return kBinary.count(metric) > 0;
}

std::string StringAt(const nlohmann::json& object, const char* key) {
  if (!object.is_object()) return "";
  auto it = object.find(key);
  return it != object.end() && it->is_string() ? it->get<std::string>() : "";
}

const nlohmann::json& ObjectAt(const nlohmann::json& object, const char* key) {
  static const nlohmann::json kNull;
  if (!object.is_object()) return kNull;
  auto it = object.find(key);
  return it == object.end() ? kNull : *it;
}

RunIdentity IdentityOf(const RunValues& run) {
  const nlohmann::json& r = run.record;
  RunIdentity id;
  id.dir = run.dir;
  id.pipeline = StringAt(ObjectAt(r, "pipeline"), "name");
  const nlohmann::json& labels = ObjectAt(r, "labels");
  if (labels.is_object()) {
    for (auto it = labels.begin(); it != labels.end(); ++it) {
      id.labels[it.key()] = it->is_string() ? it->get<std::string>() : it->dump();
    }
  }
  id.suite_name = StringAt(ObjectAt(r, "suite"), "name");
  id.suite_hash = StringAt(ObjectAt(r, "suite"), "hash");
  id.corpus_fingerprint = StringAt(r, "corpus_fingerprint");
  id.started_at = StringAt(r, "started_at");
  return id;
}

/// One run's cases as the report's metrics see them: the run's own metric indices behind the
/// report's (names), pass_rate from the pass flags of the repeats.
struct RunCases {
  const RunValues* run = nullptr;
  std::vector<int> local;  // report metric -> run metric, -1 when the run never scored it
  size_t pass_rate = 0;    // report index of pass_rate
  std::unordered_map<std::string_view, uint32_t> row_of;
  std::map<std::string, double> case_pass;  // the suite's, as run.json records it

  double Value(uint32_t row, size_t m) const {
    const int k = local[m];
    if (m == pass_rate) {  // the pass flags, and any journal score of that name with them
      const double sum = run->passes[row] + (k >= 0 ? run->sums[k][row] : 0.0);
      const double count = run->repeats[row] + (k >= 0 ? run->counts[k][row] : 0u);
      return count > 0 ? sum / count : kNaN;
    }
    return k < 0 ? kNaN : run->Value(row, static_cast<size_t>(k));
  }
  bool Passed(uint32_t row) const {
    return run->repeats[row] > 0 && run->passes[row] == run->repeats[row];
  }
  bool Unstable(uint32_t row) const {
    return run->passes[row] > 0 && run->passes[row] < run->repeats[row];
  }
  double Latency(uint32_t row) const {
    return run->latency_count[row] > 0 ? run->latency_sum[row] / run->latency_count[row] : kNaN;
  }
  const std::string& GoldHash(uint32_t row) const { return run->gold_hashes[row]; }
};

RunCases SummarizeCases(const RunValues& run, const std::vector<std::string>& names) {
  RunCases cases;
  cases.run = &run;
  cases.local.assign(names.size(), -1);
  for (size_t m = 0; m < names.size(); ++m) {
    if (names[m] == "pass_rate") cases.pass_rate = m;
    for (size_t k = 0; k < run.metrics.size(); ++k) {
      if (run.metrics[k] == names[m]) cases.local[m] = static_cast<int>(k);
    }
  }
  cases.row_of.reserve(run.rows());
  for (uint32_t r = 0; r < run.rows(); ++r) cases.row_of.emplace(run.ids[r], r);
  cases.case_pass = run.CasePass();
  return cases;
}

// --- The paired bootstrap ---------------------------------------------------------------------

metrics::Interval PercentileInterval(std::vector<double>* values) {
  // Resamples that drew no case of the statistic's subset have no value (NaN) and are left out.
  values->erase(
      std::remove_if(values->begin(), values->end(), [](double v) { return std::isnan(v); }),
      values->end());
  if (values->empty()) return {kNaN, kNaN};
  std::sort(values->begin(), values->end());
  const double tail = (1 - kDriftConfidence) / 2;
  return {metrics::PercentileSorted(*values, 100 * tail),
          metrics::PercentileSorted(*values, 100 * (1 - tail))};
}

/// Every bootstrap interval of a drift report (see drift.h), each drawn the grouped way: for a
/// mean over a case subset, how many of a resample's n draws land in the subset (one binomial,
/// shared by the statistics over the same subset), then how often each distinct difference is
/// drawn (metrics::GroupedSum); for a latency ratio, metrics::WindowedQuantileRatio. Each subset
/// and each latency percentile is a job with its own stream, metrics::SeededRandom(seed), so the
/// jobs run on as many threads as there are CPUs and the intervals are the same either way.
class SharedBootstrap {
 public:
  SharedBootstrap(size_t n, int resamples, uint64_t seed)
      : n_(n), resamples_(resamples), seed_(seed) {}

  /// Registers the mean of `differences` over `subset` (ascending paired positions, differences
  /// aligned with them); returns the statistic's id.
  size_t AddMean(const std::vector<uint32_t>& subset, const std::vector<double>& differences) {
    Mean m;
    bool finite = true;
    for (double d : differences) finite = finite && std::isfinite(d);
    if (finite && !differences.empty()) m.sum = std::make_unique<metrics::GroupedSum>(differences);
    auto same = std::find_if(domains_.begin(), domains_.end(),
                             [&](const Domain& d) { return d.subset == subset; });
    if (same == domains_.end()) {
      domains_.push_back({subset, {}});
      same = domains_.end() - 1;
    }
    same->stats.push_back(means_.size());
    means_.push_back(std::move(m));
    return means_.size() - 1;
  }

  /// Registers the latency ratios over `subset`, with the cases' latencies in each run.
  void SetLatency(const std::vector<uint32_t>& subset, const std::vector<double>& base,
                  const std::vector<double>& cand) {
    latency_size_ = subset.size();
    latency_base_ = base;
    latency_cand_ = cand;
  }

  void Run();

  metrics::Interval MeanInterval(size_t id) const { return means_[id].interval; }
  metrics::Interval LatencyInterval(int which) const { return latency_interval_[which]; }

 private:
  struct Mean {
    std::unique_ptr<metrics::GroupedSum> sum;  // null: a difference is not finite
    metrics::Interval interval{kNaN, kNaN};
  };
  struct Domain {
    std::vector<uint32_t> subset;
    std::vector<size_t> stats;
  };

  void RunDomain(const Domain& domain, const metrics::BinomialTables& tables);
  void RunLatency(int which, const metrics::BinomialTables& tables);

  size_t n_;
  int resamples_;
  uint64_t seed_;
  std::vector<Mean> means_;
  std::vector<Domain> domains_;
  size_t latency_size_ = 0;
  std::vector<double> latency_base_, latency_cand_;
  metrics::Interval latency_interval_[2] = {{kNaN, kNaN}, {kNaN, kNaN}};
};

void SharedBootstrap::RunDomain(const Domain& domain, const metrics::BinomialTables& tables) {
  const size_t resamples = static_cast<size_t>(resamples_);
  const uint64_t size = domain.subset.size();
  const metrics::BinomialOdds in_subset(static_cast<double>(size) / static_cast<double>(n_));
  std::vector<std::vector<double>> values(domain.stats.size(),
                                          std::vector<double>(resamples, kNaN));
  metrics::SeededRandom random(seed_);
  for (size_t r = 0; r < resamples; ++r) {
    const uint64_t drawn = size == n_ ? n_ : metrics::SampleBinomial(random, n_, in_subset, tables);
    if (drawn == 0) continue;  // no case of the subset drawn: the values stay NaN
    for (size_t k = 0; k < domain.stats.size(); ++k) {
      const Mean& m = means_[domain.stats[k]];
      if (m.sum == nullptr) continue;
      values[k][r] = m.sum->Sum(drawn, random, tables) / static_cast<double>(drawn);
    }
  }
  for (size_t k = 0; k < domain.stats.size(); ++k) {
    if (means_[domain.stats[k]].sum == nullptr) continue;
    means_[domain.stats[k]].interval = PercentileInterval(&values[k]);
  }
}

void SharedBootstrap::RunLatency(int which, const metrics::BinomialTables& tables) {
  const metrics::WindowedQuantileRatio ratio(latency_base_, latency_cand_, n_,
                                             which == 0 ? 50.0 : 95.0);
  std::vector<double> ratios(static_cast<size_t>(resamples_));
  metrics::SeededRandom random(seed_);
  for (double& r : ratios) r = ratio.Draw(random, tables);
  latency_interval_[which] = PercentileInterval(&ratios);
}

void SharedBootstrap::Run() {
  if (n_ == 0 || resamples_ < 1 || n_ > std::numeric_limits<uint32_t>::max()) return;
  const metrics::BinomialTables tables(n_);
  std::vector<std::function<void()>> jobs;
  if (latency_size_ > 0) {
    for (int which = 0; which < 2; ++which)
      jobs.push_back([&, which] { RunLatency(which, tables); });
  }
  for (const Domain& d : domains_) jobs.push_back([&] { RunDomain(d, tables); });
  std::atomic<size_t> next{0};
  auto work = [&] {
    for (size_t j = next++; j < jobs.size(); j = next++) jobs[j]();
  };
  std::vector<std::thread> helpers;
  const size_t threads = std::min<size_t>(static_cast<size_t>(WorkerCount()), jobs.size());
  for (size_t t = 1; t < threads; ++t) {
    try {
      helpers.emplace_back(work);
    } catch (const std::system_error&) {  // no thread to be had: this one does the rest
      break;
    }
  }
  work();
  for (std::thread& h : helpers) h.join();
}

// --- Report assembly ------------------------------------------------------------------------

double MeanOf(const std::vector<double>& v) {
  double total = 0;
  for (double x : v) total += x;
  return v.empty() ? 0 : total / static_cast<double>(v.size());
}

/// Metric ids scored in either run, plus pass_rate, in display order.
std::vector<std::string> MetricIds(const RunValues& base, const RunValues& cand) {
  std::vector<std::string> names = {"pass_rate"};
  for (const RunValues* run : {&base, &cand}) {
    names.insert(names.end(), run->metrics.begin(), run->metrics.end());
  }
  return MetricDisplayOrder(names);
}

/// The cases both runs hold with the same gold, in id order (the bootstrap's case order), with
/// each run's per-case values side by side.
struct PairedCases {
  std::vector<std::string> names;  // metric ids; m indexes them
  std::vector<uint32_t> base_row, cand_row;
  std::vector<double> base_values, cand_values;  // [i * names.size() + m], NaN: undefined

  size_t size() const { return base_row.size(); }
  double Base(size_t i, size_t m) const { return base_values[i * names.size() + m]; }
  double Cand(size_t i, size_t m) const { return cand_values[i * names.size() + m]; }
};

/// Pairs the runs' cases and fills the report's paired, only_in_base, only_in_cand and
/// gold_changed lists.
PairedCases PairCases(const RunCases& base, const RunCases& cand,
                      const std::vector<std::string>& names, bool allow_missing,
                      DriftReport* report) {
  struct Pair {
    const std::string* id;
    uint32_t base, cand;
  };
  std::vector<Pair> pairs;
  for (uint32_t row = 0; row < base.run->rows(); ++row) {
    const std::string& id = base.run->ids[row];
    auto it = cand.row_of.find(id);
    if (it == cand.row_of.end()) {
      report->only_in_base.push_back(id);
      if (!allow_missing) pairs.push_back({&id, row, kMissingRow});
    } else if (cand.GoldHash(it->second) != base.GoldHash(row)) {
      report->gold_changed.push_back(id);
    } else {
      pairs.push_back({&id, row, it->second});
    }
  }
  for (const std::string& id : cand.run->ids) {
    if (!base.row_of.count(id)) report->only_in_cand.push_back(id);
  }
  std::sort(pairs.begin(), pairs.end(), [](const Pair& a, const Pair& b) { return *a.id < *b.id; });
  for (auto* list : {&report->only_in_base, &report->only_in_cand, &report->gold_changed}) {
    std::sort(list->begin(), list->end());
  }
  PairedCases paired;
  paired.names = names;
  const size_t metrics = names.size();
  paired.base_values.resize(pairs.size() * metrics);
  paired.cand_values.resize(pairs.size() * metrics);
  report->missing_counted = !allow_missing && !report->only_in_base.empty();
  report->paired.reserve(pairs.size());
  for (size_t i = 0; i < pairs.size(); ++i) {
    report->paired.push_back(*pairs[i].id);
    paired.base_row.push_back(pairs[i].base);
    paired.cand_row.push_back(pairs[i].cand);
    for (size_t m = 0; m < metrics; ++m) {
      paired.base_values[i * metrics + m] = base.Value(pairs[i].base, m);
      const double b = base.Value(pairs[i].base, m);
      // A missing case scores 0 wherever the base defines the metric: an errored case's scores.
      paired.cand_values[i * metrics + m] = pairs[i].cand == kMissingRow
                                                ? (std::isnan(b) ? kNaN : 0.0)
                                                : cand.Value(pairs[i].cand, m);
    }
  }
  return paired;
}

/// Per metric: tested as 0/1 (McNemar) when it is of that kind and every paired value is 0 or 1.
std::vector<bool> BinaryMetrics(const PairedCases& paired) {
  std::vector<bool> binary(paired.names.size());
  for (size_t m = 0; m < paired.names.size(); ++m) {
    bool all01 = IsBinaryKind(paired.names[m]);
    for (size_t i = 0; i < paired.size() && all01; ++i) {
      for (const double v : {paired.Base(i, m), paired.Cand(i, m)}) {
        if (!std::isnan(v) && v != 0 && v != 1) all01 = false;
      }
    }
    binary[m] = all01;
  }
  return binary;
}

/// One metric over one scope, registered with the bootstrap, waiting for its interval.
struct PendingMetric {
  size_t metric;                 // index into PairedCases::names
  std::vector<uint32_t> subset;  // paired positions where both runs define it
  std::vector<double> base, cand;
  size_t stat = 0;  // SharedBootstrap id
};

/// Registers every metric over `members` (nullptr: every paired case) with the bootstrap.
std::vector<PendingMetric> RegisterScope(const PairedCases& paired,
                                         const std::vector<uint32_t>* members,
                                         SharedBootstrap* bootstrap) {
  std::vector<PendingMetric> pending;
  for (size_t m = 0; m < paired.names.size(); ++m) {
    PendingMetric p;
    p.metric = m;
    const size_t most = members == nullptr ? paired.size() : members->size();
    p.subset.reserve(most);
    p.base.reserve(most);
    p.cand.reserve(most);
    auto consider = [&](uint32_t i) {
      const double b = paired.Base(i, m), c = paired.Cand(i, m);
      if (std::isnan(b) || std::isnan(c)) return;
      p.subset.push_back(i);
      p.base.push_back(b);
      p.cand.push_back(c);
    };
    if (members == nullptr) {
      for (uint32_t i = 0; i < paired.size(); ++i) consider(i);
    } else {
      for (uint32_t i : *members) consider(i);
    }
    if (p.subset.empty()) continue;
    std::vector<double> differences(p.subset.size());
    for (size_t k = 0; k < differences.size(); ++k) differences[k] = p.cand[k] - p.base[k];
    p.stat = bootstrap->AddMean(p.subset, differences);
    pending.push_back(std::move(p));
  }
  return pending;
}

/// The p50/p95 latency of the paired cases with a positive latency in both runs; registers
/// their ratios with the bootstrap.
void RegisterLatency(const PairedCases& paired, const RunCases& base, const RunCases& cand,
                     DriftReport* report, SharedBootstrap* bootstrap) {
  std::vector<uint32_t> subset;
  std::vector<double> lb, lc;
  for (uint32_t i = 0; i < paired.size(); ++i) {
    if (paired.cand_row[i] == kMissingRow) continue;
    const double b = base.Latency(paired.base_row[i]), c = cand.Latency(paired.cand_row[i]);
    if (!(std::isfinite(b) && b > 0 && std::isfinite(c) && c > 0)) continue;
    subset.push_back(i);
    lb.push_back(b);
    lc.push_back(c);
    if (base.run->latency_bounds[paired.base_row[i]] +
            cand.run->latency_bounds[paired.cand_row[i]] >
        0) {
      report->latency_lower_bounds += 1;
    }
  }
  report->latency_n = static_cast<int64_t>(subset.size());
  if (subset.empty()) return;
  std::vector<double> sb = lb, sc = lc;
  std::sort(sb.begin(), sb.end());
  std::sort(sc.begin(), sc.end());
  for (int which = 0; which < 2; ++which) {
    LatencyDrift& l = which == 0 ? report->latency_p50 : report->latency_p95;
    const double p = which == 0 ? 50.0 : 95.0;
    l.available = true;
    l.base = metrics::PercentileSorted(sb, p);
    l.cand = metrics::PercentileSorted(sc, p);
    l.ratio = l.cand / l.base;
  }
  bootstrap->SetLatency(subset, lb, lc);
}

/// The warm-up ratio of the two runs' workers (see WarmupDrift).
WarmupDrift CompareWarmups(const RunValues& base, const RunValues& cand,
                           const DriftOptions& options) {
  WarmupDrift w;
  const std::vector<WorkerWarmup> b =
      WarmupsFromJson(ObjectAt(ObjectAt(base.record, "aggregates"), "warmup"));
  const std::vector<WorkerWarmup> c =
      WarmupsFromJson(ObjectAt(ObjectAt(cand.record, "aggregates"), "warmup"));
  if (b.empty() || c.empty()) return w;
  std::vector<double> bms, cms;
  for (const WorkerWarmup& x : b) bms.push_back(x.ms);
  for (const WorkerWarmup& x : c) cms.push_back(x.ms);
  const metrics::RatioResult ratio = metrics::UnpairedBootstrapMeanRatio(
      bms, cms, options.resamples, options.seed, kDriftConfidence);
  if (!std::isfinite(ratio.ratio)) return w;
  const WarmupSummary bs = SummarizeWarmups(b), cs = SummarizeWarmups(c);
  w.available = true;
  w.base_signal = bs.signal;
  w.cand_signal = cs.signal;
  w.base_n = bs.n;
  w.cand_n = cs.n;
  w.base_mean_ms = bs.mean_ms;
  w.cand_mean_ms = cs.mean_ms;
  w.ratio = ratio.ratio;
  w.interval = ratio.interval;
  return w;
}

/// Time to first token, tokens and cost of the paired cases (drift.h): each over the cases where
/// both runs have it, with its own seeded bootstrap (streamed and priced runs only, so the
/// shared stream of the metrics is left as it was).
void CompareStreamAndUsage(const PairedCases& paired, const RunCases& base, const RunCases& cand,
                           const DriftOptions& options, DriftReport* report) {
  auto per_row = [](const std::vector<double>& sum, const std::vector<int>& count, uint32_t row) {
    return count[row] > 0 ? sum[row] / count[row] : kNaN;
  };
  std::vector<double> tb, tc;
  std::vector<double> in_b, in_c, out_b, out_c, cost_b, cost_c;
  for (uint32_t i = 0; i < paired.size(); ++i) {
    if (paired.cand_row[i] == kMissingRow) continue;
    const RunValues& b = *base.run;
    const RunValues& c = *cand.run;
    const uint32_t rb = paired.base_row[i], rc = paired.cand_row[i];
    const double ttft_b = per_row(b.ttft_sum, b.ttft_count, rb);
    const double ttft_c = per_row(c.ttft_sum, c.ttft_count, rc);
    if (ttft_b > 0 && ttft_c > 0) {
      tb.push_back(ttft_b);
      tc.push_back(ttft_c);
    }
    if (b.usage_count[rb] > 0 && c.usage_count[rc] > 0) {
      in_b.push_back(per_row(b.input_tokens_sum, b.usage_count, rb));
      in_c.push_back(per_row(c.input_tokens_sum, c.usage_count, rc));
      out_b.push_back(per_row(b.output_tokens_sum, b.usage_count, rb));
      out_c.push_back(per_row(c.output_tokens_sum, c.usage_count, rc));
    }
    if (b.cost_count[rb] > 0 && c.cost_count[rc] > 0) {
      cost_b.push_back(per_row(b.cost_sum, b.cost_count, rb));
      cost_c.push_back(per_row(c.cost_sum, c.cost_count, rc));
    }
  }
  report->ttft_n = static_cast<int64_t>(tb.size());
  for (int which = 0; which < 2 && !tb.empty(); ++which) {
    LatencyDrift& l = which == 0 ? report->ttft_p50 : report->ttft_p95;
    const double p = which == 0 ? 50.0 : 95.0;
    const metrics::RatioResult r = metrics::PairedBootstrapQuantileRatio(
        tb, tc, p, options.resamples, options.seed, kDriftConfidence);
    if (!std::isfinite(r.ratio)) continue;
    std::vector<double> sb = tb, sc = tc;
    std::sort(sb.begin(), sb.end());
    std::sort(sc.begin(), sc.end());
    l.available = true;
    l.base = metrics::PercentileSorted(sb, p);
    l.cand = metrics::PercentileSorted(sc, p);
    l.ratio = r.ratio;
    l.interval = r.interval;
  }
  auto amount = [&](const std::vector<double>& vb, const std::vector<double>& vc) {
    AmountDrift a;
    const metrics::RatioResult r = metrics::PairedBootstrapMeanRatio(
        vb, vc, options.resamples, options.seed, kDriftConfidence);
    if (!std::isfinite(r.ratio)) return a;
    a.available = true;
    a.n = static_cast<int64_t>(vb.size());
    a.base_mean = MeanOf(vb);
    a.cand_mean = MeanOf(vc);
    a.ratio = r.ratio;
    a.interval = r.interval;
    return a;
  };
  report->input_tokens = amount(in_b, in_c);
  report->output_tokens = amount(out_b, out_c);
  const std::optional<TokenPrice> pb =
      PriceFromConfig(ObjectAt(ObjectAt(base.run->record, "pipeline"), "config"));
  const std::optional<TokenPrice> pc =
      PriceFromConfig(ObjectAt(ObjectAt(cand.run->record, "pipeline"), "config"));
  if (pb && pc && pb->currency != pc->currency) {
    report->cost_note =
        fmt::format("not compared: the base is priced in {} and the candidate in {}",
                    pb->currency.empty() ? "no currency" : pb->currency,
                    pc->currency.empty() ? "no currency" : pc->currency);
  } else if (pb && pc) {
    report->cost_currency = pb->currency;
    report->cost = amount(cost_b, cost_c);
  } else if (pb || pc) {
    report->cost_note =
        fmt::format("not compared: only the {} has a price", pb ? "base" : "candidate");
  }
}

/// `stale` (issue 23) is the one per-case metric where a rise is worse: its verdict is turned
/// round, so more stale answers read "regressed".
Verdict Oriented(const std::string& metric, Verdict verdict) {
  if (metric != "stale") return verdict;
  if (verdict == Verdict::kImproved) return Verdict::kRegressed;
  if (verdict == Verdict::kRegressed) return Verdict::kImproved;
  return verdict;
}

/// Refresh times per update in both runs (see RefreshDrift).
std::vector<RefreshDrift> CompareRefreshes(const RunValues& base, const RunValues& cand) {
  std::vector<RefreshDrift> out;
  const std::vector<UpdateFreshness> b =
      FreshnessFromJson(ObjectAt(ObjectAt(base.record, "aggregates"), "freshness"));
  const std::vector<UpdateFreshness> c =
      FreshnessFromJson(ObjectAt(ObjectAt(cand.record, "aggregates"), "freshness"));
  for (const UpdateFreshness& bu : b) {
    for (const UpdateFreshness& cu : c) {
      if (cu.update != bu.update) continue;
      const std::optional<double> bms = bu.MeanRefreshMs(), cms = cu.MeanRefreshMs();
      if (!bms || !cms || *bms <= 0) continue;
      RefreshDrift d;
      d.update = bu.update;
      d.base_ms = *bms;
      d.cand_ms = *cms;
      for (const RefreshRecord& r : bu.refreshes) d.base_n += r.called ? 1 : 0;
      for (const RefreshRecord& r : cu.refreshes) d.cand_n += r.called ? 1 : 0;
      d.ratio = *cms / *bms;
      out.push_back(d);
    }
  }
  return out;
}

/// A metric's drift once the bootstrap has run: means, delta, interval, test, verdict.
MetricDrift FinishMetric(const PendingMetric& p, const PairedCases& paired,
                         const std::vector<bool>& binary, const SharedBootstrap& bootstrap,
                         const DriftOptions& options, std::vector<double>* differences) {
  MetricDrift d;
  d.metric = paired.names[p.metric];
  d.n = static_cast<int64_t>(p.subset.size());
  d.base_mean = MeanOf(p.base);
  d.cand_mean = MeanOf(p.cand);
  differences->resize(p.subset.size());
  for (size_t k = 0; k < p.subset.size(); ++k) (*differences)[k] = p.cand[k] - p.base[k];
  d.delta = MeanOf(*differences);
  d.interval = bootstrap.MeanInterval(p.stat);
  d.mcnemar = binary[p.metric];
  if (d.mcnemar) {
    for (double x : *differences) {
      d.lost += x < 0 ? 1 : 0;
      d.gained += x > 0 ? 1 : 0;
    }
    d.p_value = metrics::McNemarExactP(d.lost, d.gained);
  } else {
    d.p_value = metrics::WilcoxonSignedRankP(*differences);
  }
  d.p_holm = d.p_value;
  d.needed_more = std::max<int64_t>(0, metrics::FewestPairsForSignificance(kDriftAlpha) - d.n);
  d.verdict = d.needed_more > 0 ? Verdict::kTooFewCases
                                : DecideVerdict(d.delta, d.interval, options.min_effect, d.p_value);
  d.verdict = Oriented(d.metric, d.verdict);
  d.gated = std::find(options.gate.begin(), options.gate.end(), d.metric) != options.gate.end();
  return d;
}

/// Holm over the gated run-level metrics that have enough cases, and every run-level verdict
/// from its (adjusted) p; names the correction in the report.
void JudgeGatedFamily(const DriftOptions& options, DriftReport* report) {
  std::vector<MetricDrift*> family;
  for (MetricDrift& d : report->metrics) {
    if (d.gated && d.verdict != Verdict::kTooFewCases) family.push_back(&d);
  }
  std::vector<double> p;
  for (const MetricDrift* d : family) p.push_back(d->p_value);
  const std::vector<double> adjusted = metrics::HolmAdjust(p);
  for (size_t k = 0; k < family.size(); ++k) {
    family[k]->p_holm = adjusted[k];
    report->family.push_back(family[k]->metric);
  }
  for (MetricDrift& d : report->metrics) {
    if (d.verdict == Verdict::kTooFewCases) continue;
    d.verdict =
        Oriented(d.metric, DecideVerdict(d.delta, d.interval, options.min_effect, d.p_holm));
  }
  std::string names;
  for (const std::string& m : report->family) names += (names.empty() ? "" : ", ") + m;
  if (family.size() > 1) {
    report->correction = fmt::format("Holm over the {} gated metrics {} (family-wise alpha {})",
                                     family.size(), names, kDriftAlpha);
  } else if (family.size() == 1) {
    report->correction = fmt::format(
        "none needed: one gated metric with enough cases ({}), alpha {}", names, kDriftAlpha);
  } else {
    report->correction = "none: no gated metric has enough cases to be tested";
  }
}

/// The metric's detectable drop (drift.h): at the level Holm's first step leaves a gated metric
/// (alpha over the family size), alpha for one outside the family.
double DetectableDrop(const MetricDrift& d, const std::vector<double>& differences,
                      const DriftReport& report) {
  if (d.verdict == Verdict::kTooFewCases || d.n < 1) return kNaN;
  const bool in_family =
      std::find(report.family.begin(), report.family.end(), d.metric) != report.family.end();
  const double level =
      in_family ? kDriftAlpha / static_cast<double>(report.family.size()) : kDriftAlpha;
  const double range = d.base_mean;  // every per-case metric lies in [0, 1]
  if (d.mcnemar) {
    // Half a discordant case added: with the observed rate itself, runs that happen to show few
    // flips promise a drop too small on average (0.77-0.80 power for N = 30-2000 under the
    // simulation's model, tests/bench/gate_simulation.cc); with (D + 1/2) / n, 0.80-0.82.
    const double discordant =
        (static_cast<double>(d.lost + d.gained) + 0.5) / static_cast<double>(d.n);
    return metrics::McNemarDetectableDrop(d.n, discordant, level, report.options.min_effect,
                                          kDriftPower, range);
  }
  return metrics::ShiftDetectableDrop(differences, level, report.options.min_effect, kDriftPower,
                                      range);
}

/// Holm over the tags, metric by metric; a tag's verdict must survive the adjustment.
void AdjustTags(const std::vector<std::string>& names, double min_effect,
                std::vector<TagDrift>* tags) {
  for (const std::string& metric : names) {
    std::vector<MetricDrift*> family;  // tags with enough cases to be tested at all
    for (TagDrift& t : *tags) {
      for (MetricDrift& d : t.metrics) {
        if (d.metric == metric && d.verdict != Verdict::kTooFewCases) family.push_back(&d);
      }
    }
    std::vector<double> p;
    for (const MetricDrift* d : family) p.push_back(d->p_value);
    const std::vector<double> adjusted = metrics::HolmAdjust(p);
    for (size_t k = 0; k < family.size(); ++k) {
      MetricDrift& d = *family[k];
      d.p_holm = adjusted[k];
      d.verdict = Oriented(d.metric, DecideVerdict(d.delta, d.interval, min_effect, d.p_holm));
    }
  }
}

/// Lost (pass -> fail) and gained cases, largest change of the gated metrics first; each with the
/// answer and error of its lowest repeat, read back through RunValues::FirstRecord. False with a
/// sentence when a journal cannot be read back.
bool ListChangedCases(const PairedCases& paired, const RunCases& base, const RunCases& cand,
                      const std::vector<std::string>& gate, DriftReport* report,
                      std::string* error) {
  CaseRecord first;
  for (size_t i = 0; i < paired.size(); ++i) {
    const bool missing = paired.cand_row[i] == kMissingRow;
    const bool was = base.Passed(paired.base_row[i]);
    const bool is = !missing && cand.Passed(paired.cand_row[i]);
    if (was == is) continue;
    CaseChange change;
    change.id = report->paired[i];
    for (size_t m = 0; m < paired.names.size(); ++m) {
      const double b = paired.Base(i, m), c = paired.Cand(i, m);
      if (!std::isnan(b) && !std::isnan(c)) change.deltas[paired.names[m]] = c - b;
    }
    if (missing) change.cand_error = "missing from the candidate run (counted as lost)";
    // A case the candidate lacks is scored as an errored case (drift.h), so that is its cause.
    const uint32_t base_row = paired.base_row[i], cand_row = paired.cand_row[i];
    if (base.run->HasFailedRecord(base_row)) {
      if (!base.run->FirstFailedRecord(base_row, &first, error)) return false;
      change.base_cause = first.scores.cause;
      change.base_reason = FailureReason(first, base.case_pass);
    }
    if (missing) {
      change.cand_cause = FailureCause::kErrored;
      change.cand_reason = change.cand_error;
    } else if (cand.run->HasFailedRecord(cand_row)) {
      if (!cand.run->FirstFailedRecord(cand_row, &first, error)) return false;
      change.cand_cause = first.scores.cause;
      change.cand_reason = FailureReason(first, cand.case_pass);
    }
    nlohmann::json gold;
    if (!base.run->Gold(base_row, &gold, error)) return false;
    if (gold.is_object() && gold.contains("answers")) {
      for (const nlohmann::json& answer : gold["answers"]) {
        if (answer.is_string()) change.gold.push_back(answer.get<std::string>());
      }
    }
    for (int run = 0; run < 2; ++run) {
      if (run == 1 && missing) continue;
      const RunValues& values = *(run == 0 ? base : cand).run;
      const uint32_t row = run == 0 ? base_row : cand_row;
      if (!values.HasRecord(row)) continue;
      if (!values.FirstRecord(row, &first, error)) return false;
      (run == 0 ? change.base_answer : change.cand_answer) = first.parsed.answer;
      (run == 0 ? change.base_error : change.cand_error) = first.error;
    }
    (was ? report->lost : report->gained).push_back(std::move(change));
  }
  auto gated_sum = [&](const CaseChange& c) {
    double total = 0;
    for (const std::string& metric : gate) {
      auto it = c.deltas.find(metric);
      if (it != c.deltas.end()) total += it->second;
    }
    return total;
  };
  std::sort(report->lost.begin(), report->lost.end(),
            [&](const CaseChange& a, const CaseChange& b) {
              const double sa = gated_sum(a), sb = gated_sum(b);
              return sa != sb ? sa < sb : a.id < b.id;
            });
  std::sort(report->gained.begin(), report->gained.end(),
            [&](const CaseChange& a, const CaseChange& b) {
              const double sa = gated_sum(a), sb = gated_sum(b);
              return sa != sb ? sa > sb : a.id < b.id;
            });
  return true;
}

std::string FloorText(const nlohmann::json& t) {
  const std::string tag = StringAt(t, "tag");
  const std::string metric = StringAt(t, "metric");
  const std::string scope = tag.empty() ? metric : "tag " + tag + " " + metric;
  const bool ceiling = StringAt(t, "kind") == "ceiling";
  const nlohmann::json& value = ObjectAt(t, "value");
  const nlohmann::json& limit = ObjectAt(t, "limit");
  const double limit_value = limit.is_number() ? limit.get<double>() : kNaN;
  if (!value.is_number()) return fmt::format("{} was not measured by any case", scope);
  return fmt::format("{} {:.4g} {} {:.4g}", scope, value.get<double>(), ceiling ? ">" : "<",
                     limit_value);
}

DriftGate DecideGate(const DriftReport& report, const RunValues& cand) {
  DriftGate gate;
  gate.metrics = report.options.gate;
  std::vector<std::string> states;
  for (const std::string& metric : gate.metrics) {
    if (metric == kLatencyGate) continue;  // judged below, on the p95 ratio
    const MetricDrift* m = report.Find(metric);
    if (m == nullptr) {
      states.push_back(metric + " not measured");
      continue;
    }
    states.push_back(metric + " " + VerdictName(m->verdict) +
                     (m->verdict == Verdict::kTooFewCases
                          ? fmt::format(" ({} paired, {} more needed)", m->n, m->needed_more)
                          : ""));
    if (m->verdict == Verdict::kRegressed) gate.regressed.push_back(metric);
  }
  const LatencyGateVerdict& lg = report.latency_gate;
  if (lg.gated) {
    const LatencyDrift& l = report.latency_p95;
    if (!lg.measured) {
      states.push_back(std::string(kLatencyGate) + " not measured");
    } else {
      states.push_back(fmt::format("{} {} (p95 x{:.3f}, 95% [{:.3f}, {:.3f}], limit x{:.3f})",
                                   kLatencyGate, lg.regressed ? "regressed" : "steady", l.ratio,
                                   l.interval.low, l.interval.high, lg.limit));
      if (lg.regressed) gate.regressed.push_back(kLatencyGate);
    }
  }
  const nlohmann::json& thresholds = ObjectAt(cand.record, "thresholds");
  int floors = 0, ceilings = 0, broken_floors = 0, broken_ceilings = 0;
  if (thresholds.is_array()) {
    for (const nlohmann::json& t : thresholds) {
      const bool ceiling = StringAt(t, "kind") == "ceiling";
      ++(ceiling ? ceilings : floors);
      const nlohmann::json& held = ObjectAt(t, "held");
      if (held.is_boolean() && !held.get<bool>()) {
        gate.broken_floors.push_back(FloorText(t));
        ++(ceiling ? broken_ceilings : broken_floors);
      }
    }
  }
  std::vector<std::string> parts;
  std::vector<std::string> regressed_metrics;  // per-case metrics; the latency is worded apart
  for (const std::string& r : gate.regressed) {
    if (r != kLatencyGate) regressed_metrics.push_back(r);
  }
  if (lg.regressed) {
    const LatencyDrift& l = report.latency_p95;
    parts.push_back(fmt::format(
        "{} regressed (p95 {:.1f} -> {:.1f} ms, x{:.3f}, 95% [{:.3f}, {:.3f}] wholly above the "
        "limit x{:.3f} = 1 + --max-slowdown {:g})",
        kLatencyGate, l.base, l.cand, l.ratio, l.interval.low, l.interval.high, lg.limit,
        report.options.max_slowdown));
  }
  if (!regressed_metrics.empty()) {
    const MetricDrift& m = *report.Find(regressed_metrics.front());
    std::string names;
    for (const std::string& r : regressed_metrics) names += (names.empty() ? "" : ", ") + r;
    parts.push_back(
        fmt::format("{} regressed ({} {:.4f} -> {:.4f}, delta {:+.4f}, 95% [{:+.4f}, "
                    "{:+.4f}], p {:.3g}{})",
                    names, m.metric, m.base_mean, m.cand_mean, m.delta, m.interval.low,
                    m.interval.high, m.p_holm, report.family.size() > 1 ? " Holm-adjusted" : ""));
    if (report.missing_counted) {
      parts.back() += fmt::format("; {} case(s) missing from the candidate counted as lost",
                                  report.only_in_base.size());
    }
  }
  if (!gate.broken_floors.empty()) {
    // "candidate floor broken: ...", "candidate 2 floors and 1 ceiling broken: ..."
    std::string count = CountFloorsAndCeilings(broken_floors, broken_ceilings);
    if (gate.broken_floors.size() == 1) count = count.substr(2);
    std::string all;  // every one, in full: a reason is never cut short
    for (const std::string& b : gate.broken_floors) all += (all.empty() ? "" : ", ") + b;
    parts.push_back(fmt::format("candidate {} broken: {}", count, all));
  }
  if (!parts.empty()) {
    gate.exit_code = kExitFloorBroken;
    gate.reason = parts.front();
    for (size_t i = 1; i < parts.size(); ++i) gate.reason += "; " + parts[i];
    return gate;
  }
  gate.exit_code = kExitOk;
  std::string list;
  for (const std::string& s : states) list += (list.empty() ? "" : ", ") + s;
  gate.reason =
      "no gated metric regressed (" + (list.empty() ? std::string("none gated") : list) + "); " +
      (floors + ceilings == 0
           ? std::string("the candidate sets no floors or ceilings")
           : "all " + CountFloorsAndCeilings(floors, ceilings) + " of the candidate held");
  return gate;
}

}  // namespace

const char* VerdictName(Verdict verdict) {
  switch (verdict) {
    case Verdict::kRegressed:
      return "regressed";
    case Verdict::kImproved:
      return "improved";
    case Verdict::kTooFewCases:
      return "too few cases";
    default:
      return "steady";
  }
}

Verdict DecideVerdict(double delta, const metrics::Interval& interval, double min_effect, double p,
                      double alpha) {
  if (!(p <= alpha)) return Verdict::kSteady;
  if (interval.high < 0 && delta <= -min_effect) return Verdict::kRegressed;
  if (interval.low > 0 && delta >= min_effect) return Verdict::kImproved;
  return Verdict::kSteady;
}

const MetricDrift* DriftReport::Find(const std::string& metric) const {
  for (const MetricDrift& m : metrics) {
    if (m.metric == metric) return &m;
  }
  return nullptr;
}

bool IsKnownCaseMetric(const std::string& metric) {
  static const std::set<std::string> kKnown = {
      "correct",      "exact_match",        "token_f1",        "token_recall",
      "covers_gold",  "knowledge_f1",       "cited_support",   "pattern_match",
      "number_match", "citation_precision", "citation_recall", "citation_f1",
      "mrr",          "pass_rate",          "fresh",           "stale"};
  if (kKnown.count(metric)) return true;
  if (metric.rfind("grade.", 0) == 0 && metric.size() > 6) return true;
  const std::string prefix = "recall@";
  if (metric.size() <= prefix.size() || metric.compare(0, prefix.size(), prefix) != 0) {
    return false;
  }
  return metric.find_first_not_of("0123456789", prefix.size()) == std::string::npos;
}

std::vector<std::string> MetricDisplayOrder(std::vector<std::string> metrics) {
  static const std::vector<std::string> kFirst = {
      "correct",      "exact_match",  "token_f1",           "token_recall",
      "covers_gold",  "knowledge_f1", "cited_support",      "pattern_match",
      "number_match", "grade.",       "citation_precision", "citation_recall",
      "citation_f1"};
  auto rank = [](const std::string& m) -> std::pair<int, long> {
    for (size_t i = 0; i < kFirst.size(); ++i) {
      if (kFirst[i] == m || (kFirst[i] == "grade." && m.rfind("grade.", 0) == 0)) {
        return {0, static_cast<long>(i)};
      }
    }
    if (m.rfind("recall@", 0) == 0 && IsKnownCaseMetric(m)) {
      return {1, std::strtol(m.c_str() + 7, nullptr, 10)};
    }
    if (m == "mrr") return {2, 0};
    if (m == "pass_rate") return {3, 0};
    return {4, 0};
  };
  std::sort(metrics.begin(), metrics.end(), [&](const std::string& a, const std::string& b) {
    const auto ra = rank(a), rb = rank(b);
    return ra != rb ? ra < rb : a < b;
  });
  metrics.erase(std::unique(metrics.begin(), metrics.end()), metrics.end());
  return metrics;
}

bool ComputeDrift(const LoadedRun& base, const LoadedRun& cand, const DriftOptions& options,
                  DriftReport* report, std::string* error) {
  RunValues base_values, cand_values;
  RunValuesOf(base, &base_values);
  RunValuesOf(cand, &cand_values);
  return ComputeDrift(base_values, cand_values, options, report, error);
}

bool ComputeDrift(const RunValues& base, const RunValues& cand, const DriftOptions& options,
                  DriftReport* report, std::string* error) {
  *report = DriftReport();
  report->options = options;
  report->base = IdentityOf(base);
  report->cand = IdentityOf(cand);
  if (report->base.suite_name != report->cand.suite_name) {
    *error = fmt::format(
        "{} is a run of suite '{}' and {} a run of suite '{}'; drift compares two runs of the "
        "same suite",
        base.dir, report->base.suite_name, cand.dir, report->cand.suite_name);
    return false;
  }
  report->suite_changed = report->base.suite_hash != report->cand.suite_hash;
  report->corpus_changed = report->base.corpus_fingerprint != report->cand.corpus_fingerprint;
  report->pipeline_config_changed = ObjectAt(ObjectAt(base.record, "pipeline"), "config") !=
                                    ObjectAt(ObjectAt(cand.record, "pipeline"), "config");
  for (auto [run, repeat] :
       {std::pair{&base, &report->base_repeat}, {&cand, &report->cand_repeat}}) {
    const nlohmann::json& r = ObjectAt(run->record, "repeat");
    *repeat = r.is_number_integer() ? r.get<int>() : 1;
  }

  const std::vector<std::string> names = MetricIds(base, cand);
  const RunCases base_cases = SummarizeCases(base, names);
  const RunCases cand_cases = SummarizeCases(cand, names);
  const PairedCases paired =
      PairCases(base_cases, cand_cases, names, options.allow_missing, report);
  const std::vector<bool> binary = BinaryMetrics(paired);

  // Scopes: the whole run, then each tag (from the gold, which is equal in both runs).
  std::map<std::string, std::vector<uint32_t>> tag_members;
  for (uint32_t i = 0; i < paired.size(); ++i) {
    const uint32_t row = paired.base_row[i];
    for (uint32_t k = base.tag_begin[row]; k < base.tag_begin[row + 1]; ++k) {
      tag_members[base.tag_names[base.tag_ids[k]]].push_back(i);
    }
  }
  SharedBootstrap bootstrap(paired.size(), options.resamples, options.seed);
  const std::vector<PendingMetric> run_level = RegisterScope(paired, nullptr, &bootstrap);
  std::vector<std::vector<PendingMetric>> per_tag;
  for (const auto& [tag, members] : tag_members) {
    per_tag.push_back(RegisterScope(paired, &members, &bootstrap));
  }
  RegisterLatency(paired, base_cases, cand_cases, report, &bootstrap);
  bootstrap.Run();
  report->latency_p50.interval = bootstrap.LatencyInterval(0);
  report->latency_p95.interval = bootstrap.LatencyInterval(1);
  LatencyGateVerdict& lg = report->latency_gate;
  lg.gated =
      std::find(options.gate.begin(), options.gate.end(), kLatencyGate) != options.gate.end();
  lg.limit = 1 + options.max_slowdown;
  lg.measured = report->latency_p95.available && std::isfinite(report->latency_p95.interval.low);
  lg.regressed = lg.gated && lg.measured && report->latency_p95.interval.low > lg.limit;
  report->warmup = CompareWarmups(base, cand, options);
  CompareStreamAndUsage(paired, base_cases, cand_cases, options, report);
  report->refreshes = CompareRefreshes(base, cand);

  std::vector<double> differences;
  std::vector<std::vector<double>> run_differences;
  for (const PendingMetric& p : run_level) {
    report->metrics.push_back(FinishMetric(p, paired, binary, bootstrap, options, &differences));
    run_differences.push_back(differences);
  }
  JudgeGatedFamily(options, report);
  for (size_t k = 0; k < report->metrics.size(); ++k) {
    const MetricDrift& d = report->metrics[k];
    report->min_detectable_effect[d.metric] = DetectableDrop(d, run_differences[k], *report);
  }
  size_t t = 0;
  for (const auto& [tag, members] : tag_members) {
    TagDrift td;
    td.tag = tag;
    td.cases = static_cast<int64_t>(members.size());
    for (const PendingMetric& p : per_tag[t]) {
      td.metrics.push_back(FinishMetric(p, paired, binary, bootstrap, options, &differences));
      td.metrics.back().gated = false;  // the gate reads run-level verdicts only
    }
    report->tags.push_back(std::move(td));
    ++t;
  }
  AdjustTags(names, options.min_effect, &report->tags);
  if (!ListChangedCases(paired, base_cases, cand_cases, options.gate, report, error)) {
    return false;
  }
  std::vector<FailureCause> lost_causes;
  for (const CaseChange& c : report->lost) lost_causes.push_back(c.cand_cause);
  report->lost_causes = BreakDownCauses(lost_causes);

  std::set<std::string> unstable;
  for (const RunCases* cases : {&base_cases, &cand_cases}) {
    for (uint32_t row = 0; row < cases->run->rows(); ++row) {
      if (cases->Unstable(row)) unstable.insert(cases->run->ids[row]);
    }
  }
  report->unstable.assign(unstable.begin(), unstable.end());
  report->gate = DecideGate(*report, cand);
  return true;
}

}  // namespace plumb
