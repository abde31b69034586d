#include "runner/score_command.h"

#include <unistd.h>

#include <cerrno>
#include <chrono>
#include <cstdio>
#include <cstring>
#include <fstream>
#include <memory>
#include <string_view>
#include <unordered_map>
#include <unordered_set>

#include "runner/prepared_suite.h"
#include "runner/run_command.h"
#include "runner/run_journal.h"
#include "runner/run_reader.h"
#include "runner/run_summary.h"
#include "runner/scheduler.h"

namespace plumb {
namespace {

/// Reads the predictions line by line, scoring each as it is read (each reply is parsed once
/// and held only while its case is scored, so memory grows with the number of cases, not with
/// the size of the replies). Records go to `journal`; every bad line is printed, and any bad
/// line makes the whole file count as unusable (false): the caller then discards the journal.
class PredictionReader {
 public:
  PredictionReader(const std::string& path, const PreparedSuite& prepared, RunJournal* journal)
      : path_(path), prepared_(prepared), journal_(journal) {
    const std::vector<Case>& cases = prepared.suite.cases;
    index_of_.reserve(cases.size());
    for (size_t i = 0; i < cases.size(); ++i) index_of_.emplace(cases[i].id, i);
  }

  bool ReadAll(std::vector<CaseOutcome>* outcomes, int* max_repeat, std::string* error) {
    std::ifstream in(path_, std::ios::binary);
    if (!in) {
      *error = "cannot read predictions file " + path_;
      return false;
    }
    std::string line;
    while (std::getline(in, line)) {
      ++line_number_;
      if (line.find_first_not_of(" \t\r") == std::string::npos) continue;
      if (!ScoreLine(line, outcomes, max_repeat, error)) return false;
    }
    if (problems_ > 0) {
      *error = std::to_string(problems_) + " problem" + (problems_ == 1 ? "" : "s") + " in " +
               path_ + "; nothing was scored";
      return false;
    }
    // A case with no reply at all is one errored item, so it counts against the run.
    const std::vector<Case>& cases = prepared_.suite.cases;
    for (size_t i = 0; i < cases.size(); ++i) {
      if (seen_.count(Key(i, 0))) continue;
      CallResult call;
      call.error = "no prediction for this case in " + path_;
      if (!Record(i, 0, call, nullptr, outcomes, error)) return false;
    }
    return true;
  }

 private:
  static uint64_t Key(size_t case_index, int repeat) {
    return (static_cast<uint64_t>(case_index) << 20) ^ static_cast<uint64_t>(repeat);
  }

  void Problem(int column, const std::string& message) {
    std::fprintf(stderr, "%s:%d:%d: error: %s\n", path_.c_str(), line_number_, column,
                 message.c_str());
    ++problems_;
  }

  /// False with *error set on a journal failure; bad lines are counted, not fatal.
  bool ScoreLine(const std::string& line, std::vector<CaseOutcome>* outcomes, int* max_repeat,
                 std::string* error) {
    nlohmann::json json;
    try {
      json = nlohmann::json::parse(line);
    } catch (const nlohmann::json::parse_error& e) {
      Problem(static_cast<int>(e.byte), std::string("not valid JSON (") + e.what() +
                                            "); each line must hold one reply object");
      return true;
    }
    auto id = json.is_object() ? json.find("id") : json.end();
    if (!json.is_object() || id == json.end() || !id->is_string()) {
      Problem(1, "a prediction must be a JSON object with a string \"id\" naming its case");
      return true;
    }
    int repeat = 0;
    if (auto it = json.find("repeat"); it != json.end()) {
      if (!it->is_number_integer() || it->get<int64_t>() < 0 || it->get<int64_t>() > kMaxRepeat) {
        Problem(1, "\"repeat\" must be an integer from 0 to " + std::to_string(kMaxRepeat));
        return true;
      }
      repeat = it->get<int>();
    }
    const std::string& case_id = id->get_ref<const std::string&>();
    size_t case_index;
    const std::vector<Case>& cases = prepared_.suite.cases;
    // Predictions usually follow the suite's order: try the case after the last one first.
    if (next_index_ < cases.size() && cases[next_index_].id == case_id) {
      case_index = next_index_;
    } else if (auto known = index_of_.find(case_id); known != index_of_.end()) {
      case_index = known->second;
    } else {
      std::fprintf(stderr,
                   "%s:%d: warning: prediction for '%s', which the suite does not have; "
                   "ignored\n",
                   path_.c_str(), line_number_, case_id.c_str());
      return true;
    }
    next_index_ = case_index + 1;
    if (!seen_.insert(Key(case_index, repeat)).second) {
      Problem(1, "a second prediction for case '" + case_id + "' repeat " + std::to_string(repeat) +
                     "; keep one line per case and repeat");
      return true;
    }
    *max_repeat = std::max(*max_repeat, repeat);
    if (problems_ > 0) return true;  // nothing will be kept; only look for more problems
    CallResult call;
    if (auto it = json.find("latency_ms"); it != json.end() && it->is_number()) {
      call.latency_ms = it->get<double>();
    }
    call.body = line;
    return Record(case_index, repeat, call, &json, outcomes, error);
  }

  bool Record(size_t case_index, int repeat, const CallResult& call, nlohmann::json* parsed,
              std::vector<CaseOutcome>* outcomes, std::string* error) {
    const Case& c = prepared_.suite.cases[case_index];
    const CaseRecord record =
        MakeCaseRecord(c, repeat, call, recorded_, *prepared_.scorer, case_index, parsed);
    if (!journal_->AppendLine(CaseRecordLine(record), error)) return false;
    outcomes->push_back(OutcomeOf(record, case_index));
    return true;
  }

  // Repeats are numbered from 0; a bound keeps the (case, repeat) key unambiguous.
  static constexpr int64_t kMaxRepeat = (1 << 20) - 1;

  const std::string& path_;
  const PreparedSuite& prepared_;
  RunJournal* journal_;
  const PipelineConfig recorded_;  // replies in the protocol's own shape, offsets in code points
  std::unordered_map<std::string_view, size_t> index_of_;
  std::unordered_set<uint64_t> seen_;
  size_t next_index_ = 0;
  int line_number_ = 0;
  int problems_ = 0;
};

}  // namespace

// The pending journal is written in pieces of about this size.
constexpr size_t kJournalBuffer = 1 << 20;

int ScoreCommand(const ScoreOptions& options) {
  PreparedSuite prepared;
  if (!PrepareSuite(options.suite_path, "", /*expand_env=*/false, &prepared)) return 2;
  const Suite& suite = prepared.suite;

  const auto start = std::chrono::steady_clock::now();
  const std::string run_dir = RunDirectory(options.out_dir, suite.name, "predictions", false);
  std::string error;
  if (!MakeDirectories(run_dir, &error)) {
    std::fprintf(stderr, "plumb: %s\n", error.c_str());
    return 2;
  }
  // Records are scored as the predictions are read, into a journal beside the real one: a bad
  // predictions file leaves an earlier run in this directory as it was.
  const std::string journal_path = run_dir + "/cases.jsonl";
  const std::string pending_path = journal_path + ".pending." + std::to_string(getpid());
  std::vector<CaseOutcome> outcomes;
  outcomes.reserve(suite.cases.size());
  int max_repeat = 0;
  {
    std::unique_ptr<RunJournal> journal =
        RunJournal::Open(pending_path, -1, &error, kJournalBuffer);
    if (journal == nullptr) {
      std::fprintf(stderr, "plumb: %s\n", error.c_str());
      return 2;
    }
    PredictionReader reader(options.predictions_path, prepared, journal.get());
    if (!reader.ReadAll(&outcomes, &max_repeat, &error) || !journal->Flush(&error)) {
      std::remove(pending_path.c_str());
      std::fprintf(stderr, "plumb: %s\n", error.c_str());
      return 2;
    }
  }
  if (std::rename(pending_path.c_str(), journal_path.c_str()) != 0) {
    std::fprintf(stderr, "plumb: cannot write %s: %s\n", journal_path.c_str(),
                 std::strerror(errno));
    std::remove(pending_path.c_str());
    return 2;
  }

  RunContext context;
  context.suite = &suite;
  context.selected.resize(suite.cases.size());
  for (size_t i = 0; i < suite.cases.size(); ++i) context.selected[i] = i;
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
  if (options.json) std::fputs(finished.record.c_str(), stdout);
  return finished.verdict.code;
}

}  // namespace plumb
