#include "runner/cli/merge_command.h"

#include <algorithm>
#include <cstdio>
#include <filesystem>
#include <memory>
#include <nlohmann/json.hpp>
#include <set>
#include <unordered_map>

#include "runner/base/atomic_file.h"
#include "runner/cli/run_command.h"
#include "runner/cli/run_summary.h"
#include "runner/run/case_record.h"
#include "runner/run/exit_code.h"
#include "runner/run/grading.h"
#include "runner/run/run_journal.h"
#include "runner/run/run_reader.h"
#include "runner/suite/recorded_suite.h"

namespace plumb {
namespace {

// run.json members that must be equal in every shard of one run: the same tool, suite file,
// corpus, pipeline config and repeat count make the shards parts of one run.
constexpr const char* kSameInEveryShard[] = {"tool",       "suite",    "corpus_fingerprint",
                                             "corpus_dir", "pipeline", "repeat"};

struct ShardRun {
  std::string dir;
  nlohmann::json record;
  int index = 0;
  int count = 0;
};

/// One journal line kept for the merged run, and where it goes.
struct Item {
  size_t case_index = 0;
  int repeat = 0;
  std::string line;
  CaseOutcome outcome;
};

/// The path with symlinks and dot segments resolved, as far as it exists (--out may not yet).
std::string Resolved(const std::string& path) {
  std::error_code ec;
  const std::filesystem::path resolved = std::filesystem::weakly_canonical(path, ec);
  return ec ? path : resolved.string();
}

bool Fail(const std::string& message) {
  std::fprintf(stderr, "plumb merge: %s\n", message.c_str());
  return false;
}

bool ReadShard(const std::string& dir, ShardRun* shard) {
  std::string error;
  shard->dir = dir;
  if (!LoadRunRecord(dir, &shard->record, &error)) return Fail(error);
  const nlohmann::json& s = shard->record.value("shard", nlohmann::json());
  if (!s.is_object() || !s.value("index", nlohmann::json()).is_number_integer() ||
      !s.value("count", nlohmann::json()).is_number_integer()) {
    return Fail(dir + "/run.json has no \"shard\" with an index and a count");
  }
  shard->index = s["index"].get<int>();
  shard->count = s["count"].get<int>();
  return true;
}

/// Every shard 1..N once, all of one run (kSameInEveryShard), labels that agree.
bool CheckShards(const std::vector<ShardRun>& shards,
                 const std::map<std::string, std::string>& given,
                 std::map<std::string, std::string>* labels) {
  const ShardRun& first = shards.front();
  std::map<int, const ShardRun*> by_index;
  for (const ShardRun& shard : shards) {
    if (shard.count != first.count) {
      return Fail(shard.dir + " is shard " + std::to_string(shard.index) + " of " +
                  std::to_string(shard.count) + " but " + first.dir + " is one of " +
                  std::to_string(first.count) + "; merge the shards of one run");
    }
    if (shard.index < 1 || shard.index > shard.count) {
      return Fail(shard.dir + "/run.json names shard " + std::to_string(shard.index) + " of " +
                  std::to_string(shard.count));
    }
    if (auto [twin, added] = by_index.emplace(shard.index, &shard); !added) {
      return Fail(twin->second->dir + " and " + shard.dir + " are both shard " +
                  std::to_string(shard.index) + " of " + std::to_string(shard.count) +
                  "; give each shard's run directory once");
    }
    for (const char* key : kSameInEveryShard) {
      if (shard.record.value(key, nlohmann::json()) != first.record.value(key, nlohmann::json())) {
        return Fail(std::string("\"") + key + "\" differs between " + first.dir + "/run.json and " +
                    shard.dir + "/run.json; only shards of one run (same suite, corpus, pipeline " +
                    "and --repeat) can be merged");
      }
    }
    const nlohmann::json& shard_labels = shard.record.value("labels", nlohmann::json::object());
    for (auto it = shard_labels.begin(); it != shard_labels.end(); ++it) {
      if (given.count(it.key()) || !it->is_string()) continue;
      auto [known, added] = labels->emplace(it.key(), it->get<std::string>());
      if (!added && known->second != it->get<std::string>()) {
        return Fail("label '" + it.key() + "' is '" + known->second + "' in one shard and '" +
                    it->get<std::string>() + "' in " + shard.dir + "; label the shards alike, " +
                    "or give the merged run its own with --label " + it.key() + "=VALUE");
      }
    }
  }
  // Every index is in 1..count and none repeats, so the set is whole when the counts agree.
  if (by_index.size() != static_cast<size_t>(first.count)) {
    std::string missing;
    int listed = 0;
    for (int i = 1; i <= first.count && listed < 10; ++i) {
      if (by_index.count(i) == 0) {
        missing += (missing.empty() ? "" : ", ") + std::to_string(i);
        ++listed;
      }
    }
    const size_t absent = static_cast<size_t>(first.count) - by_index.size();
    if (absent > 10) missing += ", ... (" + std::to_string(absent) + " in all)";
    return Fail("shard" + std::string(absent == 1 ? " " : "s ") + missing + " of " +
                std::to_string(first.count) + " missing; give every shard's run directory");
  }
  for (const auto& [key, value] : given) (*labels)[key] = value;
  return true;
}

/// The suite as the shards recorded it: settings from the first, each case at its place.
bool RebuildSuite(const std::vector<ShardRun>& shards, Suite* suite, std::vector<size_t>* selected,
                  std::vector<size_t>* shard_of) {
  std::string error;
  if (!ReadRecordedSuiteSettings(shards.front().record, suite, &error)) {
    return Fail(shards.front().dir + ": " + error);
  }
  for (size_t s = 0; s < shards.size(); ++s) {
    const nlohmann::json& cases = shards[s].record.value("cases", nlohmann::json::object());
    for (auto it = cases.begin(); it != cases.end(); ++it) {
      Case gold;
      size_t index = 0;
      if (!ReadRecordedCase(it.key(), *it, &gold, &index, &error) ||
          !ResolveRecordedAfter(*it, *suite, &gold, &error)) {
        return Fail(shards[s].dir + ": " + error);
      }
      if (index >= suite->cases.size()) {
        suite->cases.resize(index + 1);
        shard_of->resize(index + 1, shards.size());
      }
      if ((*shard_of)[index] != shards.size()) {
        return Fail("case '" + it.key() + "' (suite place " + std::to_string(index) + ") is in " +
                    shards[(*shard_of)[index]].dir + " and in " + shards[s].dir +
                    "; each case belongs to one shard");
      }
      (*shard_of)[index] = s;
      suite->cases[index] = std::move(gold);
    }
  }
  for (size_t i = 0; i < shard_of->size(); ++i) {
    if ((*shard_of)[i] != shards.size()) selected->push_back(i);
  }
  return true;
}

/// Each shard's journal records of its own cases, the first of each (case, repeat) as
/// `plumb run --resume` takes it, sorted into suite order.
bool CollectItems(const std::vector<ShardRun>& shards, const Suite& suite,
                  const std::vector<size_t>& shard_of, std::vector<Item>* items) {
  std::unordered_map<std::string_view, size_t> index_of;
  for (size_t i = 0; i < suite.cases.size(); ++i) {
    if (shard_of[i] != shards.size()) index_of.emplace(suite.cases[i].id, i);
  }
  std::set<std::pair<size_t, int>> taken;
  for (size_t s = 0; s < shards.size(); ++s) {
    const std::string path = shards[s].dir + "/cases.jsonl";
    JournalContents journal;
    std::string error;
    if (!ReadJournal(path, &journal, &error, /*keep_lines=*/true)) return Fail(error);
    for (const std::string& warning : journal.warnings) {
      std::fprintf(stderr, "warning: %s\n", warning.c_str());
    }
    size_t left_out = 0;
    for (size_t r = 0; r < journal.records.size(); ++r) {
      CaseRecord record;
      if (!CaseRecordFromJson(journal.records[r], &record, &error)) {
        return Fail(path + ":" + std::to_string(r + 1) + ": " + error);
      }
      auto known = index_of.find(record.id);
      if (known == index_of.end() || shard_of[known->second] != s ||
          !taken.insert({known->second, record.repeat}).second) {
        ++left_out;  // not part of this shard's finished run (an earlier --resume kept it)
        continue;
      }
      Item item;
      item.case_index = known->second;
      item.repeat = record.repeat;
      item.line = std::move(journal.lines[r]);
      item.outcome = OutcomeOf(std::move(record), known->second);
      item.outcome.scores.abstention_case = suite.cases[known->second].answers.empty();
      items->push_back(std::move(item));
    }
    if (left_out > 0) {
      std::fprintf(stderr,
                   "plumb merge: %s: %zu journal line%s not part of the shard's run (another "
                   "case, or a repeat already taken); left out\n",
                   path.c_str(), left_out, left_out == 1 ? "" : "s");
    }
  }
  std::sort(items->begin(), items->end(), [](const Item& a, const Item& b) {
    return a.case_index != b.case_index ? a.case_index < b.case_index : a.repeat < b.repeat;
  });
  return true;
}

bool WriteJournal(const std::string& path, const std::vector<Item>& items) {
  std::string error;
  std::unique_ptr<AtomicFile> file = AtomicFile::Open(path, &error);
  if (file == nullptr) return Fail(error);
  for (const Item& item : items) {
    file->Write(item.line);
    file->Write("\n");
  }
  return file->Commit(&error) || Fail(error);
}

}  // namespace

int MergeCommand(const MergeOptions& options) {
  std::vector<ShardRun> shards(options.run_dirs.size());
  const std::string out = Resolved(options.out_dir);
  for (size_t i = 0; i < shards.size(); ++i) {
    if (Resolved(options.run_dirs[i]) == out) {
      Fail("--out " + options.out_dir + " is one of the shards; merge into a directory of its own");
      return kExitUsage;
    }
    if (!ReadShard(options.run_dirs[i], &shards[i])) return kExitUsage;
  }
  std::map<std::string, std::string> labels;
  if (shards.empty() || !CheckShards(shards, options.labels, &labels)) return kExitUsage;

  auto suite = std::make_unique<Suite>();
  std::vector<size_t> selected, shard_of;
  std::vector<Item> items;
  if (!RebuildSuite(shards, suite.get(), &selected, &shard_of) ||
      !CollectItems(shards, *suite, shard_of, &items)) {
    return kExitUsage;
  }
  std::string error;
  if (!MakeDirectories(options.out_dir, &error)) {
    Fail(error);
    return kExitUsage;
  }
  if (!WriteJournal(options.out_dir + "/cases.jsonl", items)) return kExitUsage;

  const nlohmann::json& first = shards.front().record;
  RunContext context;
  context.suite = suite.get();
  context.selected = std::move(selected);
  const nlohmann::json pipeline = first.value("pipeline", nlohmann::json::object());
  context.pipeline_name = pipeline.value("name", "");
  context.pipeline_config = pipeline.value("config", nlohmann::json::object());
  context.corpus_fingerprint = first.value("corpus_fingerprint", "");
  context.labels = std::move(labels);
  context.repeat = first.value("repeat", 1);
  context.jobs = first.value("jobs", 1);
  // The merged run spans its shards: from the first start to the last finish.
  for (const ShardRun& shard : shards) {
    const std::string started = shard.record.value("started_at", "");
    const std::string finished = shard.record.value("finished_at", "");
    if (context.started_at.empty() || started < context.started_at) context.started_at = started;
    if (finished > context.finished_at) context.finished_at = finished;
    context.resumed = context.resumed || shard.record.value("resumed", false);
    // Every shard's workers warmed up: the merged run keeps them all.
    const nlohmann::json aggregates = shard.record.value("aggregates", nlohmann::json::object());
    if (!aggregates.is_object()) continue;
    for (WorkerWarmup& w : WarmupsFromJson(aggregates.value("warmup", nlohmann::json()))) {
      context.warmups.push_back(std::move(w));
    }
    // Each shard refreshed for the updates it had cases after: the merged run keeps every
    // refresh, labelled with its shard.
    const nlohmann::json shard_of = shard.record.value("shard", nlohmann::json::object());
    const std::string label = shard_of.is_object()
                                  ? std::to_string(shard_of.value("index", 0)) + "/" +
                                        std::to_string(shard_of.value("count", 0))
                                  : std::string();
    for (UpdateFreshness& u : FreshnessFromJson(aggregates.value("freshness", nlohmann::json()))) {
      for (RefreshRecord& r : u.refreshes) {
        if (r.shard.empty() && label != "0/0" && label != "1/1") r.shard = label;
        context.refreshes.push_back(std::move(r));
      }
    }
  }
  // The shards' grading, summed: their journal lines (with their grades) are copied as they are.
  std::vector<nlohmann::json> gradings;
  std::vector<std::string> dirs;
  for (const ShardRun& shard : shards) {
    gradings.push_back(shard.record.value("grading", nlohmann::json()));
    dirs.push_back(shard.dir);
  }
  std::vector<std::string> grading_warnings;
  context.grading = MergedGradingRecord(gradings, dirs, &grading_warnings);
  for (const std::string& warning : grading_warnings) {
    std::fprintf(stderr, "plumb merge: warning: %s\n", warning.c_str());
  }
  std::vector<CaseOutcome> outcomes;
  outcomes.reserve(items.size());
  for (Item& item : items) outcomes.push_back(std::move(item.outcome));
  FinishedRun finished;
  if (!FinishRun(context, outcomes, false, options.out_dir, options.json,
                 SecondsBetween(context.started_at, context.finished_at), &finished, &error)) {
    Fail(error);
    return kExitUsage;
  }
  if (options.json) std::fputs(finished.record.c_str(), stdout);
  return finished.verdict.code;
}

}  // namespace plumb
