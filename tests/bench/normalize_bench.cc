// Times the squad profile's per-case answer work on short English answers like the ones a large
// suite scores: NormalizeGold (once per case at suite load, two gold answers), ScoreAnswer (once
// per reply), NormalizeSquadTokens and TokenF1 alone, plus one non-ASCII set for the general
// path. Inputs are 1024 invented cases of ~4 words, cycled. Not a test: the machine's load
// changes the figures; compare medians, e.g.
//   normalize_bench --benchmark_repetitions=9 --benchmark_report_aggregates_only=true
#include <benchmark/benchmark.h>

#include <optional>
#include <string>
#include <vector>

#include "metrics/answer_metrics.h"
#include "metrics/normalize.h"
#include "metrics/seeded_random.h"

namespace {

using plumb::metrics::NormalizationProfile;

struct BenchCase {
  std::optional<std::string> prediction;
  std::vector<std::string> gold;
};

// A few words from a small vocabulary, sometimes capitalized, sometimes with an article or a
// trailing period; with `accents` one word in three carries a non-ASCII letter.
std::string InventAnswer(plumb::metrics::SeededRandom* random, bool accents) {
  static const char* const kWords[] = {
      "ferry",  "boarding", "closes",  "ten",    "minutes", "before",   "departure", "vehicle",
      "deck",   "two",      "tickets", "return", "harbour", "pier",     "north",     "island",
      "cabins", "freight",  "daily",   "summer", "winter",  "crossing", "lane",      "gate"};
  static const char* const kAccented[] = {"café", "Zürich", "São", "naïve"};
  const size_t n = 3 + random->Next() % 3;
  std::string out;
  for (size_t i = 0; i < n; ++i) {
    if (i > 0) out.push_back(' ');
    const uint64_t r = random->Next();
    if (r % 7 == 0) out += (r % 2 == 0) ? "the " : "The ";
    if (accents && r % 3 == 1) {
      out += kAccented[(r >> 8) % 4];
    } else {
      std::string word = kWords[(r >> 8) % (sizeof kWords / sizeof kWords[0])];
      if ((r >> 16) % 5 == 0) word[0] = static_cast<char>(word[0] - 'a' + 'A');
      out += word;
    }
  }
  if (random->Next() % 4 == 0) out.push_back('.');
  return out;
}

// The prediction shares most words with the first gold answer, so F1 lands between 0 and 1.
std::vector<BenchCase> InventCases(bool accents) {
  plumb::metrics::SeededRandom random(accents ? 29 : 17);
  std::vector<BenchCase> cases(1024);
  for (BenchCase& c : cases) {
    c.gold = {InventAnswer(&random, accents), InventAnswer(&random, accents)};
    const uint64_t r = random.Next() % 4;
    if (r == 0) {
      c.prediction = c.gold[0];
    } else if (r == 1) {
      c.prediction = "the " + c.gold[0].substr(c.gold[0].find(' ') + 1) + " daily";
    } else {
      c.prediction = InventAnswer(&random, accents);
    }
  }
  return cases;
}

const std::vector<BenchCase>& Cases(bool accents) {
  static const std::vector<BenchCase> ascii = InventCases(false);
  static const std::vector<BenchCase> mixed = InventCases(true);
  return accents ? mixed : ascii;
}

void BM_NormalizeGold(benchmark::State& state) {
  const std::vector<BenchCase>& cases = Cases(state.range(0) != 0);
  size_t i = 0;
  for (auto _ : state) {
    auto gold = plumb::metrics::NormalizeGold(cases[i].gold, NormalizationProfile::kSquad, "en");
    benchmark::DoNotOptimize(gold);
    i = (i + 1) % cases.size();
  }
}

void BM_ScoreAnswer(benchmark::State& state) {
  const std::vector<BenchCase>& cases = Cases(state.range(0) != 0);
  std::vector<plumb::metrics::NormalizedGold> golds;
  for (const BenchCase& c : cases) {
    golds.push_back(plumb::metrics::NormalizeGold(c.gold, NormalizationProfile::kSquad, "en"));
  }
  size_t i = 0;
  for (auto _ : state) {
    auto scores = plumb::metrics::ScoreAnswer(cases[i].prediction, golds[i],
                                              NormalizationProfile::kSquad, "en");
    benchmark::DoNotOptimize(scores);
    i = (i + 1) % cases.size();
  }
}

void BM_NormalizeSquadTokens(benchmark::State& state) {
  const std::vector<BenchCase>& cases = Cases(state.range(0) != 0);
  size_t i = 0;
  for (auto _ : state) {
    auto tokens = plumb::metrics::NormalizeSquadTokens(*cases[i].prediction);
    benchmark::DoNotOptimize(tokens);
    i = (i + 1) % cases.size();
  }
}

void BM_TokenF1(benchmark::State& state) {
  const std::vector<BenchCase>& cases = Cases(false);
  std::vector<std::vector<std::string>> preds, golds;
  for (const BenchCase& c : cases) {
    preds.push_back(plumb::metrics::NormalizeSquadTokens(*c.prediction));
    golds.push_back(plumb::metrics::NormalizeSquadTokens(c.gold[0]));
  }
  size_t i = 0;
  for (auto _ : state) {
    benchmark::DoNotOptimize(plumb::metrics::TokenF1(preds[i], golds[i]));
    i = (i + 1) % cases.size();
  }
}

// Argument 0: plain ASCII answers; 1: one word in three with a non-ASCII letter.
BENCHMARK(BM_NormalizeGold)->Arg(0)->Arg(1);
BENCHMARK(BM_ScoreAnswer)->Arg(0)->Arg(1);
BENCHMARK(BM_NormalizeSquadTokens)->Arg(0)->Arg(1);
BENCHMARK(BM_TokenF1);

}  // namespace

BENCHMARK_MAIN();
