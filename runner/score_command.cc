#include "runner/score_command.h"

#include <chrono>
#include <cstdio>
#include <fstream>
#include <map>
#include <memory>

#include "runner/prepared_suite.h"
#include "runner/run_command.h"
#include "runner/run_journal.h"
#include "runner/run_reader.h"
#include "runner/run_summary.h"
#include "runner/scheduler.h"

namespace plumb {
namespace {

/// Where a prediction's line is in the file: replies are read back one at a time while
/// scoring, so memory grows with the number of cases, not with the size of the replies.
struct Prediction {
  std::streamoff offset = 0;
  size_t length = 0;
  double latency_ms = 0;
};

/// Reads every prediction, keyed by (id, repeat). False after printing every bad line.
bool ReadPredictions(const std::string& path,
                     std::map<std::pair<std::string, int>, Prediction>* out) {
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    std::fprintf(stderr, "plumb: cannot read predictions file %s\n", path.c_str());
    return false;
  }
  std::string line;
  int line_number = 0;
  int problems = 0;
  std::streamoff offset = 0;
  auto problem = [&](int column, const std::string& message) {
    std::fprintf(stderr, "%s:%d:%d: error: %s\n", path.c_str(), line_number, column,
                 message.c_str());
    ++problems;
  };
  while (std::getline(in, line)) {
    ++line_number;
    const std::streamoff line_offset = offset;
    offset += static_cast<std::streamoff>(line.size()) + 1;
    if (line.find_first_not_of(" \t\r") == std::string::npos) continue;
    nlohmann::json json;
    try {
      json = nlohmann::json::parse(line);
    } catch (const nlohmann::json::parse_error& e) {
      problem(static_cast<int>(e.byte), std::string("not valid JSON (") + e.what() +
                                            "); each line must hold one reply object");
      continue;
    }
    if (!json.is_object() || !json.contains("id") || !json["id"].is_string()) {
      problem(1, "a prediction must be a JSON object with a string \"id\" naming its case");
      continue;
    }
    int repeat = 0;
    if (json.contains("repeat")) {
      if (!json["repeat"].is_number_integer() || json["repeat"].get<int>() < 0) {
        problem(1, "\"repeat\" must be a non-negative integer");
        continue;
      }
      repeat = json["repeat"].get<int>();
    }
    Prediction p;
    if (json.contains("latency_ms") && json["latency_ms"].is_number()) {
      p.latency_ms = json["latency_ms"].get<double>();
    }
    p.offset = line_offset;
    p.length = line.size();
    const std::string id = json["id"].get<std::string>();
    if (!out->emplace(std::make_pair(id, repeat), std::move(p)).second) {
      problem(1, "a second prediction for case '" + id + "' repeat " + std::to_string(repeat) +
                     "; keep one line per case and repeat");
    }
  }
  if (problems > 0) {
    std::fprintf(stderr, "plumb: %d problem%s in %s; nothing was scored\n", problems,
                 problems == 1 ? "" : "s", path.c_str());
    return false;
  }
  return true;
}

}  // namespace

int ScoreCommand(const ScoreOptions& options) {
  PreparedSuite prepared;
  if (!PrepareSuite(options.suite_path, "", /*expand_env=*/false, &prepared)) return 2;
  const Suite& suite = prepared.suite;
  std::map<std::pair<std::string, int>, Prediction> predictions;
  if (!ReadPredictions(options.predictions_path, &predictions)) return 2;

  const auto start = std::chrono::steady_clock::now();
  const std::string run_dir = RunDirectory(options.out_dir, suite.name, "predictions", false);
  std::string error;
  if (!MakeDirectories(run_dir, &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return 2;
  }
  std::unique_ptr<RunJournal> journal = RunJournal::Open(run_dir + "/cases.jsonl", -1, &error);
  if (journal == nullptr) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return 2;
  }

  std::map<std::string, size_t> index_of;
  std::vector<size_t> selected;
  for (size_t i = 0; i < suite.cases.size(); ++i) {
    index_of[suite.cases[i].id] = i;
    selected.push_back(i);
  }
  int max_repeat = 0;
  for (const auto& [key, p] : predictions) {
    if (!index_of.count(key.first)) {
      std::fprintf(stderr,
                   "%s: warning: prediction for '%s', which the suite does not have; "
                   "ignored\n",
                   options.predictions_path.c_str(), key.first.c_str());
    }
    max_repeat = std::max(max_repeat, key.second);
  }

  std::ifstream replies(options.predictions_path, std::ios::binary);
  const PipelineConfig recorded;  // replies in the protocol's own shape, offsets in code points
  std::vector<CaseOutcome> outcomes;
  outcomes.reserve(suite.cases.size());
  for (size_t i = 0; i < suite.cases.size(); ++i) {
    const Case& c = suite.cases[i];
    for (int repeat = 0; repeat <= max_repeat; ++repeat) {
      auto it = predictions.find({c.id, repeat});
      if (it == predictions.end() && repeat > 0) continue;
      CallResult call;
      if (it == predictions.end()) {
        call.error = "no prediction for this case in " + options.predictions_path;
      } else {
        call.body.resize(it->second.length);
        replies.seekg(it->second.offset);
        replies.read(call.body.data(), static_cast<std::streamsize>(call.body.size()));
        call.latency_ms = it->second.latency_ms;
      }
      CaseRecord record = MakeCaseRecord(c, repeat, call, recorded, *prepared.scorer, i);
      if (!journal->Append(CaseRecordToJson(record), &error)) {
        std::fprintf(stderr, "plumb: %s\n", error.c_str());
        return 2;
      }
      outcomes.push_back(OutcomeOf(record, i));
    }
  }

  RunContext context;
  context.suite = &suite;
  context.selected = selected;
  context.pipeline_name = "predictions";
  context.pipeline_config = {{"predictions", options.predictions_path}};
  context.corpus_fingerprint = prepared.corpus_fingerprint;
  context.labels = options.labels;
  context.started_at = NowIso8601();
  context.repeat = max_repeat + 1;
  const double seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  FinishedRun finished;
  if (!FinishRun(context, outcomes, false, run_dir, options.json, seconds, &finished, &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return 2;
  }
  if (!options.outputs.empty()) {
    LoadedRun run;
    if (!LoadRun(run_dir, &run, &error) || !WriteRunOutputs(run, options.outputs, &error)) {
      std::fprintf(stderr, "plumb: %s\n", error.c_str());
      return 2;
    }
  }
  if (options.json) std::printf("%s\n", finished.record.dump(2).c_str());
  return finished.verdict.code;
}

}  // namespace plumb
