#include "runner/run/update_phases.h"

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <set>

#include "runner/pipeline/refresh_call.h"

namespace plumb {
namespace {

namespace fs = std::filesystem;

// Copies the regular files under `from` to `to` (following symlinks), leaving out `skip`
// (doc ids relative to `from`).
bool CopyTree(const fs::path& from, const fs::path& to, const std::set<std::string>& skip,
              std::string* error) {
  std::error_code ec;
  fs::create_directories(to, ec);
  if (ec) {
    *error = "cannot create '" + to.string() + "': " + ec.message();
    return false;
  }
  fs::recursive_directory_iterator walk(from, fs::directory_options::follow_directory_symlink, ec),
      end;
  for (; !ec && walk != end; walk.increment(ec)) {
    const fs::path rel = walk->path().lexically_relative(from);
    std::error_code entry_ec;
    if (walk->is_directory(entry_ec)) {
      fs::create_directories(to / rel, entry_ec);
    } else if (walk->is_regular_file(entry_ec) && skip.count(rel.generic_string()) == 0) {
      fs::create_directories((to / rel).parent_path(), entry_ec);
      fs::copy_file(walk->path(), to / rel, fs::copy_options::overwrite_existing, entry_ec);
    } else {
      continue;
    }
    if (entry_ec) {
      *error = "cannot copy '" + walk->path().string() + "': " + entry_ec.message();
      return false;
    }
  }
  if (ec) {
    *error = "cannot read '" + from.string() + "': " + ec.message();
    return false;
  }
  return true;
}

double Milliseconds(double ms) { return ms < 0 ? 0 : ms; }

}  // namespace

nlohmann::json RefreshRecordToJson(const RefreshRecord& r) {
  nlohmann::json out = {{"update", r.update}, {"called", r.called}, {"ok", r.ok}};
  out["refresh_ms"] = r.called ? nlohmann::json(Milliseconds(r.ms)) : nlohmann::json(nullptr);
  out["error"] = r.error.empty() ? nlohmann::json(nullptr) : nlohmann::json(r.error);
  if (!r.shard.empty()) out["shard"] = r.shard;
  return out;
}

bool RefreshRecordFromJson(const nlohmann::json& json, RefreshRecord* r) {
  if (!json.is_object() || !json.contains("update") || !json["update"].is_string()) return false;
  *r = RefreshRecord();
  r->update = json["update"].get<std::string>();
  r->called = json.value("called", false);
  r->ok = json.value("ok", false);
  if (auto ms = json.find("refresh_ms"); ms != json.end() && ms->is_number()) {
    r->ms = ms->get<double>();
  }
  if (auto e = json.find("error"); e != json.end() && e->is_string()) r->error = *e;
  if (auto s = json.find("shard"); s != json.end() && s->is_string()) r->shard = *s;
  return true;
}

bool AssembleUpdatedCorpus(const std::string& from_dir, const CorpusUpdate& update,
                           const std::string& to_dir, std::string* error) {
  std::error_code ec;
  fs::remove_all(to_dir, ec);
  if (ec) {
    *error = "cannot clear '" + to_dir + "': " + ec.message();
    return false;
  }
  const std::set<std::string> removed(update.remove.begin(), update.remove.end());
  if (!CopyTree(from_dir, to_dir, removed, error)) return false;
  if (update.docs_dir.empty()) return true;
  return CopyTree(update.docs_dir, to_dir, {}, error);
}

std::vector<RefreshRecord> ReadRefreshLog(const std::string& path) {
  std::vector<RefreshRecord> out;
  std::ifstream in(path);
  std::string line;
  while (std::getline(in, line)) {
    const nlohmann::json json = nlohmann::json::parse(line, nullptr, false);
    RefreshRecord record;
    if (RefreshRecordFromJson(json, &record)) out.push_back(std::move(record));
  }
  return out;
}

UpdatePhaseResult RunUpdatePhases(const UpdatePhaseInputs& in) {
  const Suite& suite = *in.schedule.suite;
  const PipelineConfig& pipeline = *in.schedule.pipeline;
  const size_t updates = suite.updates.size();
  std::vector<std::vector<WorkItem>> phases(updates + 1);
  for (const WorkItem& item : *in.items) {
    const int after = suite.cases[item.case_index].after;
    phases[after < 0 ? 0 : size_t(after) + 1].push_back(item);
  }
  UpdatePhaseResult result;
  auto run_phase = [&](const std::vector<WorkItem>& items) {
    ScheduleInputs inputs = in.schedule;
    inputs.items = &items;
    ScheduleResult phase = RunSchedule(inputs);
    for (CaseOutcome& o : phase.outcomes) result.schedule.outcomes.push_back(std::move(o));
    result.schedule.interrupted = result.schedule.interrupted || phase.interrupted;
    if (result.schedule.fatal_error.empty()) result.schedule.fatal_error = phase.fatal_error;
    result.schedule.warmups = std::move(phase.warmups);
  };
  auto stopped = [&] {
    return result.schedule.interrupted || !result.schedule.fatal_error.empty() ||
           (in.schedule.stop != nullptr && in.schedule.stop->load());
  };
  run_phase(phases[0]);
  // Each update's corpus is built from the previous one's; the first from the suite's corpus.
  std::string previous = suite.corpus_dir.value_or("");
  for (size_t k = 0; k < updates; ++k) {
    const CorpusUpdate& update = suite.updates[k];
    const std::string corpus_dir = in.run_dir + "/corpus/" + update.id;
    if (phases[k + 1].empty()) {
      // Nothing of this update left to run: keep what an earlier invocation recorded.
      for (const RefreshRecord& r : in.recorded) {
        if (r.update == update.id) result.refreshes.push_back(r);
      }
      // A later update builds on this one's corpus: assemble it only when needed then.
      bool later = false;
      for (size_t j = k + 2; j <= updates; ++j) later = later || !phases[j].empty();
      if (later) {
        std::string error;
        if (!AssembleUpdatedCorpus(previous, update, corpus_dir, &error)) {
          result.schedule.fatal_error = "update '" + update.id + "': " + error;
          return result;
        }
        previous = corpus_dir;
      }
      continue;
    }
    if (stopped()) break;
    std::string error;
    if (!AssembleUpdatedCorpus(previous, update, corpus_dir, &error)) {
      result.schedule.fatal_error = "update '" + update.id + "': " + error;
      return result;
    }
    previous = corpus_dir;
    RefreshRecord record;
    record.update = update.id;
    if (pipeline.refresh) {
      std::fprintf(stderr, "plumb: pipeline '%s': refreshing for update '%s'...\n",
                   pipeline.name.c_str(), update.id.c_str());
      const std::string absolute = fs::absolute(corpus_dir).lexically_normal().string();
      const RefreshOutcome outcome = CallRefresh(pipeline, absolute, update.id, in.schedule.stop);
      if (outcome.interrupted) {
        result.schedule.interrupted = true;
        break;
      }
      record.called = true;
      record.ok = outcome.ok;
      record.ms = outcome.ms;
      record.error = outcome.error;
      if (outcome.ok) {
        std::fprintf(stderr, "plumb: pipeline '%s': refreshed for update '%s' in %.0f ms\n",
                     pipeline.name.c_str(), update.id.c_str(), outcome.ms);
      } else {
        std::fprintf(stderr,
                     "plumb: warning: pipeline '%s': refresh for update '%s' failed: %s%s%s; "
                     "its cases run anyway\n",
                     pipeline.name.c_str(), update.id.c_str(), outcome.error.c_str(),
                     outcome.output.empty() ? "" : "; it wrote: ", outcome.output.c_str());
      }
    }
    if (!in.refresh_log.empty()) {
      std::ofstream log(in.refresh_log, std::ios::app);
      log << RefreshRecordToJson(record).dump() << "\n";
    }
    result.refreshes.push_back(record);
    run_phase(phases[k + 1]);
  }
  return result;
}

}  // namespace plumb
