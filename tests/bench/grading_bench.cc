// Times grading (runner/run/grading.h) at a large suite's scale, as issue 18 sets the targets:
//  - cold: every answer asked of a grader that answers at once (fixtures/demo-grader, a C++
//    program in persistent mode) on JOBS grader slots, each new grade stored in the verdict
//    cache (a real SQLite file); target >= 5,000 grades/s with 4 grader jobs;
//  - warm: the same answers again, every grade from the cache, no grader call; target >=
//    50,000 grades/s on 100,000 graded answers.
// Both passes include what `plumb grade` does per answer in memory: the grader request line,
// its SHA-256 key, the cache lookup, and writing the grade into the record (grade.NAME, the
// "grades" entry, correct and pass). Reading and rewriting the journal are not included.
// The suite is written as a JSONL include into a temporary directory and loaded as plumb
// loads any suite. Prints each figure beside its target. Not a test: the machine's load changes
// the numbers. Usage: grading_bench [ANSWERS] [JOBS] (default 100000 4), from the repository
// root or with PLUMB_DEMO_GRADER naming build/fixtures/demo-grader.
#include <stdlib.h>
#include <unistd.h>

#include <chrono>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include "runner/cli/grader_session.h"
#include "runner/run/grading.h"
#include "runner/run/prepared_suite.h"

namespace {

double Seconds(std::chrono::steady_clock::time_point since) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - since).count();
}

const char* const kWords[] = {"boarding", "closes",  "ten",      "minutes", "before", "departure",
                              "the",      "vehicle", "deck",     "opens",   "fares",  "are",
                              "paid",     "at",      "terminal", "gate",    "B",      "bicycles"};

std::string Sentence(size_t seed, int words) {
  std::string out;
  for (int w = 0; w < words; ++w) {
    if (w > 0) out += ' ';
    out +=
        kWords[(seed * 7919 + static_cast<size_t>(w) * 104729) % (sizeof kWords / sizeof *kWords)];
  }
  return out;
}

}  // namespace

int main(int argc, char** argv) {
  const size_t answers = argc > 1 ? std::strtoull(argv[1], nullptr, 10) : 100000;
  const int jobs = argc > 2 ? std::atoi(argv[2]) : 4;
  const char* grader_env = std::getenv("PLUMB_DEMO_GRADER");
  const std::string grader =
      std::filesystem::absolute(grader_env != nullptr ? grader_env : "build/fixtures/demo-grader")
          .string();
  if (!std::filesystem::exists(grader)) {
    std::fprintf(stderr, "grading_bench: %s not found; run from the repository root\n",
                 grader.c_str());
    return 2;
  }
  char templ[] = "/tmp/plumb-grading-bench-XXXXXX";
  if (mkdtemp(templ) == nullptr) return 2;
  const std::string dir = templ;

  // The suite: one grader pipeline (jobs: JOBS), ANSWERS generated cases.
  {
    std::ofstream suite(dir + "/s.yaml");
    suite << "plumb: 1\nname: grading-bench\ninclude: [cases.jsonl]\n"
          << "graders:\n  correctness: {pipeline: judge}\n"
          << "pipelines:\n  judge: {command: [" << grader << "], jobs: " << jobs << "}\n";
    std::ofstream cases(dir + "/cases.jsonl");
    for (size_t i = 0; i < answers; ++i) {
      cases << "{\"id\": \"case-" << i << "\", \"question\": \"" << Sentence(i, 8)
            << "?\", \"answers\": [\"" << Sentence(i + 1, 3) << "\"]}\n";
    }
  }
  plumb::PreparedSuite prepared;
  if (!plumb::PrepareSuite(dir + "/s.yaml", "", true, &prepared)) return 2;
  plumb::GraderSession session;
  std::string error;
  plumb::GradeCacheOptions cache;
  cache.path = dir + "/grades.sqlite";
  if (!plumb::StartGraders(prepared, {}, cache, "bench", nlohmann::json::object(), &session,
                           &error)) {
    std::fprintf(stderr, "grading_bench: %s\n", error.c_str());
    return 2;
  }

  // The answers: sentences of 15 words, the demo pipeline's median, half of them covering gold.
  std::vector<plumb::CaseRecord> records(answers);
  std::vector<plumb::GradeTarget> targets(answers);
  for (size_t i = 0; i < answers; ++i) {
    records[i].id = prepared.suite.cases[i].id;
    records[i].parsed.answer = Sentence(i + 2, 12) + " " + (i % 2 == 0 ? Sentence(i + 1, 3) : "");
    targets[i] = {&records[i], i};
  }

  std::printf("grading %zu answers with one grader (demo-grader, persistent, %d jobs)\n", answers,
              jobs);
  for (const char* pass : {"cold", "warm"}) {
    plumb::GradingCounts counts;
    bool interrupted = false;
    const auto start = std::chrono::steady_clock::now();
    if (!plumb::GradeRecords(session.inputs, targets, &counts, &interrupted, &error)) {
      std::fprintf(stderr, "grading_bench: %s\n", error.c_str());
      return 1;
    }
    const double seconds = Seconds(start);
    const double rate = static_cast<double>(answers) / seconds;
    const bool cold = std::string(pass) == "cold";
    std::printf(
        "%s: %zu grades in %.2f s = %.0f grades/s (%lld requested, %lld from the cache; "
        "graded %lld, failed %lld)   target >= %s grades/s: %s\n",
        pass, answers, seconds, rate, static_cast<long long>(counts.requested),
        static_cast<long long>(counts.from_cache),
        static_cast<long long>(counts.graded["correctness"]),
        static_cast<long long>(counts.failed["correctness"]), cold ? "5,000" : "50,000",
        rate >= (cold ? 5000 : 50000) ? "met" : "NOT met");
  }
  session.Shutdown();
  std::filesystem::remove_all(dir);
  return 0;
}
