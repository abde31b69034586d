// Times a whole drift report (runner/compare/drift.h) at a large suite's scale: by default 100,000
// paired cases, B = 10000 resamples, a dozen metrics (some defined on part of the cases only),
// eight tags with one or two per case, latencies, and a candidate that changes a few percent of the
// outcomes and most token F1 values a little. Prints wall and CPU seconds so figures can be
// compared across changes. Not a test: the machine's load changes the numbers. With "light" as
// the third argument the runs carry only the three default gated metrics and no tags.
// Usage: drift_bench [PAIRS] [RESAMPLES] [light]
#include <time.h>

#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <string>
#include <vector>

#include "metrics/seeded_random.h"
#include "runner/compare/drift.h"

namespace {

double CpuSeconds() {
  timespec t{};
  clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
  return static_cast<double>(t.tv_sec) + 1e-9 * static_cast<double>(t.tv_nsec);
}

/// Two invented runs of one suite; `cand` differs from `base` as described above.
void MakeRuns(size_t pairs, bool light, plumb::LoadedRun* base, plumb::LoadedRun* cand) {
  plumb::metrics::SeededRandom random(11);
  auto uniform = [&] { return static_cast<double>(random.Next() >> 11) * 0x1.0p-53; };
  const char* tags[] = {"boarding",  "fares",         "vehicles", "safety",
                        "timetable", "accessibility", "freight",  "numeric"};
  for (plumb::LoadedRun* run : {base, cand}) {
    run->record = {{"plumb_run", 1},
                   {"suite", {{"name", "bench"}, {"hash", "h"}}},
                   {"pipeline", {{"name", "p"}, {"config", nlohmann::json::object()}}},
                   {"repeat", 1},
                   {"thresholds", nlohmann::json::array()},
                   {"cases", nlohmann::json::object()}};
    run->records.reserve(pairs);
  }
  base->dir = "base";
  cand->dir = "cand";
  for (size_t i = 0; i < pairs; ++i) {
    const std::string id = "case-" + std::to_string(i);
    nlohmann::json case_tags = nlohmann::json::array();
    if (!light) case_tags.push_back(tags[i % 8]);
    if (!light && i % 3 == 0) case_tags.push_back(tags[(i / 3 + 5) % 8]);
    const nlohmann::json gold = {{"gold_hash", "g" + std::to_string(i)}, {"tags", case_tags}};
    base->record["cases"][id] = gold;
    cand->record["cases"][id] = gold;

    plumb::CaseRecord b;
    b.id = id;
    const bool right = uniform() < 0.8;
    const double f1 = right ? 0.7 + 0.3 * uniform() : 0.4 * uniform();
    b.scores.values = {
        {"correct", right ? 1 : 0}, {"exact_match", right ? 1 : 0}, {"token_f1", f1}};
    if (i % 10 == 0) b.scores.values["pattern_match"] = right ? 1 : 0;
    if (i % 5 == 0) b.scores.values["number_match"] = right ? 1 : 0;
    const bool spans = i % 20 != 0;
    if (spans) {
      const double recall = uniform() < 0.7 ? 1 : 0.5 * uniform();
      b.scores.values["citation_recall"] = recall;
      b.scores.values["citation_f1"] = recall * 0.9;
      b.scores.values["recall@1"] = uniform() < 0.6 ? 1 : 0;
      b.scores.values["recall@5"] = uniform() < 0.9 ? 1 : 0;
      b.scores.values["mrr"] = 1.0 / (1 + static_cast<int>(4 * uniform()));
    }
    if (uniform() < 0.9) b.scores.values["citation_precision"] = uniform() < 0.8 ? 1 : 0.5;
    b.scores.pass = right;
    b.latency_ms = 200 + 300 * uniform();

    plumb::CaseRecord c = b;
    const double u = uniform();
    if (u < 0.02 && right) {  // lost
      c.scores.values["correct"] = c.scores.values["exact_match"] = 0;
      c.scores.pass = false;
    } else if (u < 0.035 && !right) {  // gained
      c.scores.values["correct"] = c.scores.values["exact_match"] = 1;
      c.scores.pass = true;
    }
    if (uniform() < 0.6) {
      c.scores.values["token_f1"] = std::fmin(1.0, std::fmax(0.0, f1 + 0.1 * (uniform() - 0.52)));
    }
    if (spans && uniform() < 0.1) c.scores.values["citation_recall"] = uniform();
    if (uniform() < 0.05) c.scores.values.erase("citation_precision");
    c.latency_ms = b.latency_ms * (0.9 + 0.3 * uniform());
    if (light) {
      for (plumb::CaseRecord* r : {&b, &c}) {
        for (const char* metric : {"exact_match", "pattern_match", "number_match", "citation_f1",
                                   "recall@1", "recall@5", "mrr", "citation_precision"}) {
          r->scores.values.erase(metric);
        }
      }
    }
    base->records.push_back(std::move(b));
    cand->records.push_back(std::move(c));
  }
}

}  // namespace

int main(int argc, char** argv) {
  const size_t pairs = argc > 1 ? std::strtoull(argv[1], nullptr, 10) : 100000;
  plumb::DriftOptions options;
  options.resamples = argc > 2 ? std::atoi(argv[2]) : 10000;
  const bool light = argc > 3 && std::string(argv[3]) == "light";
  plumb::LoadedRun base, cand;
  MakeRuns(pairs, light, &base, &cand);

  const auto wall_start = std::chrono::steady_clock::now();
  const double cpu_start = CpuSeconds();
  plumb::DriftReport report;
  std::string error;
  if (!plumb::ComputeDrift(base, cand, options, &report, &error)) {
    std::fprintf(stderr, "drift_bench: %s\n", error.c_str());
    return 1;
  }
  const double cpu = CpuSeconds() - cpu_start;
  const double wall =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - wall_start).count();
  size_t statistics = report.metrics.size();
  for (const plumb::TagDrift& t : report.tags) statistics += t.metrics.size();
  std::printf("drift_bench: %zu paired cases, B = %d, %zu metrics, %zu tags, %zu statistics\n",
              report.paired.size(), options.resamples, report.metrics.size(), report.tags.size(),
              statistics);
  std::printf("ComputeDrift  %.3f s wall  %.3f s CPU  (%.2f ns CPU per resampled case)\n", wall,
              cpu, 1e9 * cpu / (static_cast<double>(pairs) * options.resamples));
  for (const plumb::MetricDrift& m : report.metrics) {
    std::printf("  %-20s n %7lld  delta %+.5f [%+.5f, %+.5f]  p %.3g  %s\n", m.metric.c_str(),
                static_cast<long long>(m.n), m.delta, m.interval.low, m.interval.high, m.p_value,
                plumb::VerdictName(m.verdict));
  }
  std::printf("  latency p50 x%.4f [%.4f, %.4f]  p95 x%.4f [%.4f, %.4f]\n",
              report.latency_p50.ratio, report.latency_p50.interval.low,
              report.latency_p50.interval.high, report.latency_p95.ratio,
              report.latency_p95.interval.low, report.latency_p95.interval.high);
  std::printf("  lost %zu, gained %zu\n", report.lost.size(), report.gained.size());
  return 0;
}
