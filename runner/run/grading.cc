#include "runner/run/grading.h"

#include <algorithm>
#include <mutex>
#include <set>
#include <thread>
#include <utility>

#include "runner/base/atomic_file.h"
#include "runner/pipeline/excerpt.h"
#include "runner/run/grade_reply.h"
#include "runner/run/grade_request.h"
#include "runner/run/grader_identity.h"
#include "runner/run/run_journal.h"

namespace plumb {
namespace {

// Grades are stored in the cache in batches of this many, so a killed pass keeps most of its
// work and a cold pass does not pay one transaction per grade; lookups go in batches too.
constexpr size_t kStoreBatch = 256;
constexpr size_t kLookupBatch = 256;

std::string Redacted(std::string text, const PipelineConfig& pipeline) {
  return RedactSecrets(std::move(text), pipeline.secrets);
}

}  // namespace

/// One grader call: grader repeat `repeat` of the answer to case `case_index`. Its line and key are
/// fixed when it is queued; the result fields are written by the one thread that took it.
struct GradingPass::Call {
  size_t case_index = 0;
  int repeat = 0;
  std::string line;
  std::string key;
  bool done = false;
  bool ok = false;
  bool cached = false;
  double grade = 0;
  std::string reason;  // or the error
};

/// One grader's queues and threads.
struct GradingPass::Lane {
  const GraderRuntime* grader = nullptr;
  std::deque<Call> calls;  // stable addresses: queues and answers point into it
  /// (case index, answer repeat) -> the calls of that answer, or empty for an errored answer.
  std::map<std::pair<size_t, int>, std::vector<Call*>> answers;
  std::deque<Call*> unlooked;  // not yet looked up in the cache
  std::deque<Call*> to_call;   // not in the cache: the grader is asked
  int busy = 0;                // threads looking up or calling
  std::vector<std::pair<std::string, CachedGrade>> to_store;
  std::vector<std::thread> threads;
};

GradingPass::GradingPass(const GradingInputs& in) : in_(in) {
  for (const GraderRuntime& grader : in.graders) {
    auto lane = std::make_unique<Lane>();
    lane->grader = &grader;
    lanes_.push_back(std::move(lane));
  }
  for (const std::unique_ptr<Lane>& lane : lanes_) {
    for (int slot = 0; slot < std::max(1, lane->grader->adapter->slots()); ++slot) {
      lane->threads.emplace_back(&GradingPass::Work, this, lane.get(), slot);
    }
  }
}

GradingPass::~GradingPass() {
  GradingCounts counts;
  bool interrupted = false;
  std::string error;
  Finish(&counts, &interrupted, &error);
}

bool GradingPass::Stopped() const { return in_.stop != nullptr && in_.stop->load(); }

void GradingPass::Add(const CaseRecord& record, size_t case_index) {
  if (lanes_.empty()) return;
  const Case& c = in_.suite->cases[case_index];
  // The lines and keys are built on the caller's thread, outside the lock.
  std::vector<std::vector<Call>> made(lanes_.size());
  if (record.error.empty()) {
    for (size_t l = 0; l < lanes_.size(); ++l) {
      const GraderRuntime& grader = *lanes_[l]->grader;
      for (int r = 0; r < grader.config->repeat; ++r) {
        Call call;
        call.case_index = case_index;
        call.repeat = r;
        call.line = GradeRequestLine(*grader.config, c, record.parsed, in_.corpus, r);
        call.key = GradeKey(grader.identity, call.line);
        made[l].push_back(std::move(call));
      }
    }
  }
  std::lock_guard<std::mutex> lock(mutex_);
  for (size_t l = 0; l < lanes_.size(); ++l) {
    Lane& lane = *lanes_[l];
    auto [it, fresh] = lane.answers.try_emplace({case_index, record.repeat});
    if (!fresh) continue;
    for (size_t r = 0; r < made[l].size(); ++r) {
      lane.calls.push_back(std::move(made[l][r]));
      it->second.push_back(&lane.calls.back());
      lane.unlooked.push_back(&lane.calls.back());
    }
  }
  wake_.notify_all();
}

void GradingPass::Work(Lane* lane, int slot) {
  const GraderRuntime& grader = *lane->grader;
  const GraderConfig& config = *grader.config;
  std::unique_lock<std::mutex> lock(mutex_);
  while (!Stopped()) {
    if (!lane->unlooked.empty()) {
      // A batch of lookups in one read transaction; the misses go to the grader.
      std::vector<Call*> batch;
      while (!lane->unlooked.empty() && batch.size() < kLookupBatch) {
        batch.push_back(lane->unlooked.front());
        lane->unlooked.pop_front();
      }
      std::vector<std::optional<CachedGrade>> found(batch.size());
      std::string error;
      bool ok = true;
      if (in_.cache != nullptr) {
        lane->busy += 1;
        lock.unlock();
        std::vector<std::string> keys;
        keys.reserve(batch.size());
        for (const Call* call : batch) keys.push_back(call->key);
        ok = in_.cache->LookupAll(keys, &found, &error);
        lock.lock();
        lane->busy -= 1;
      }
      if (!ok) {
        // Never a silent miss: the calls stay undone and Finish reports the cache's error.
        if (store_error_.empty()) store_error_ = error;
        wake_.notify_all();
        continue;
      }
      for (size_t i = 0; i < batch.size(); ++i) {
        if (found[i]) {
          batch[i]->done = batch[i]->ok = batch[i]->cached = true;
          batch[i]->grade = found[i]->grade;
          batch[i]->reason = std::move(found[i]->reason);
          from_cache_ += 1;
        } else {
          lane->to_call.push_back(batch[i]);
        }
      }
      wake_.notify_all();
      continue;
    }
    if (!lane->to_call.empty()) {
      Call* call = lane->to_call.front();
      lane->to_call.pop_front();
      lane->busy += 1;
      lock.unlock();
      const Case& c = in_.suite->cases[call->case_index];
      PipelineRequest request;
      request.id = c.id;
      request.question = c.question;
      request.repeat = call->repeat;
      request.line = call->line;
      const CallResult result = grader.adapter->Call(request, slot);
      const bool cut_short = Stopped();  // not a grader error: the call is simply not made
      if (!cut_short) {
        GradeReply reply;
        std::string reply_error;
        if (!result.error.empty()) {
          call->reason = "grader call failed: " + result.error;
          if (!result.stderr_excerpt.empty()) call->reason += "; stderr: " + result.stderr_excerpt;
        } else if (!ParseGradeReply(result.body, config, grader.reply, &reply, &reply_error)) {
          call->reason = Redacted(reply_error, *grader.pipeline);
        } else {
          call->ok = true;
          call->grade = reply.grade;
          call->reason = Redacted(std::move(reply.reason), *grader.pipeline);
        }
        call->done = true;
      }
      std::vector<std::pair<std::string, CachedGrade>> batch;
      lock.lock();
      lane->busy -= 1;
      if (cut_short) break;
      requested_ += 1;
      if (call->ok && in_.cache != nullptr) {
        lane->to_store.emplace_back(call->key, CachedGrade{call->grade, call->reason});
        if (lane->to_store.size() >= kStoreBatch) batch.swap(lane->to_store);
      }
      if (!batch.empty()) {
        lock.unlock();
        std::string error;
        const bool stored = in_.cache->StoreAll(batch, &error);
        lock.lock();
        if (!stored && store_error_.empty()) store_error_ = error;
      }
      wake_.notify_all();
      continue;
    }
    if (finishing_ && lane->busy == 0) break;
    wake_.wait_for(lock, std::chrono::milliseconds(100));
  }
  wake_.notify_all();
}

bool GradingPass::Finish(GradingCounts* counts, bool* interrupted, std::string* error) {
  {
    std::lock_guard<std::mutex> lock(mutex_);
    finishing_ = true;
  }
  wake_.notify_all();
  if (!joined_) {
    for (const std::unique_ptr<Lane>& lane : lanes_) {
      for (std::thread& t : lane->threads) t.join();
    }
    joined_ = true;
    // The last grades of each lane go to the cache, also after an interrupt: they are paid for.
    for (const std::unique_ptr<Lane>& lane : lanes_) {
      if (in_.cache == nullptr || lane->to_store.empty()) continue;
      std::string e;
      if (!in_.cache->StoreAll(lane->to_store, &e) && store_error_.empty()) store_error_ = e;
      lane->to_store.clear();
    }
    counts->from_cache += from_cache_;
    counts->requested += requested_;
  }
  *interrupted = Stopped();
  if (!store_error_.empty()) {
    *error = store_error_;
    return false;
  }
  return true;
}

void GradingPass::Apply(CaseRecord* record, size_t case_index, GradingCounts* counts) const {
  for (const std::unique_ptr<Lane>& lane : lanes_) {
    const GraderConfig& config = *lane->grader->config;
    const std::string metric = "grade." + config.name;
    if (!record->grades.is_object()) record->grades = nlohmann::json::object();
    nlohmann::json entry = nlohmann::json::object();
    auto it = lane->answers.find({case_index, record->repeat});
    if (!record->error.empty()) {
      record->scores.values[metric] = 0;
      entry["grade"] = 0;
      entry["error"] = "not graded: the pipeline's call failed, so the grade is 0";
      counts->graded[config.name] += 1;
    } else {
      double sum = 0;
      int64_t cached = 0;
      std::string failure, reason;
      nlohmann::json scores = nlohmann::json::array();
      if (it == lane->answers.end() || it->second.empty()) failure = "not graded";
      if (it != lane->answers.end()) {
        for (const Call* call : it->second) {
          if (!call->ok) {
            if (failure.empty()) failure = call->done ? call->reason : "not graded";
            continue;
          }
          sum += call->grade;
          cached += call->cached ? 1 : 0;
          scores.push_back(call->grade);
          if (reason.empty()) reason = call->reason;
        }
      }
      entry["scores"] = scores;
      if (failure.empty()) {
        const double grade = sum / static_cast<double>(it->second.size());
        record->scores.values[metric] = grade;
        entry["grade"] = grade;
        entry["reason"] = reason;
        entry["from_cache"] = cached;
        counts->graded[config.name] += 1;
      } else {
        record->scores.values.erase(metric);
        entry["error"] = failure;
        counts->failed[config.name] += 1;
      }
    }
    record->grades[config.name] = std::move(entry);
  }
  in_.scorer->Conclude(&record->scores);
}

bool GradeRecords(const GradingInputs& in, const std::vector<GradeTarget>& targets,
                  GradingCounts* counts, bool* interrupted, std::string* error) {
  GradingPass pass(in);
  for (const GradeTarget& target : targets) pass.Add(*target.record, target.case_index);
  if (!pass.Finish(counts, interrupted, error)) return false;
  if (*interrupted) return true;
  for (const GradeTarget& target : targets) pass.Apply(target.record, target.case_index, counts);
  return true;
}

bool GradeJournal(const std::string& journal_path, const GradingInputs& in,
                  const std::vector<bool>& selected, GradingPass* pass, GradedJournal* out,
                  std::string* error) {
  JournalContents contents;
  if (!ReadJournal(journal_path, &contents, error, /*keep_lines=*/true)) return false;
  out->warnings = contents.warnings;
  std::vector<CaseRecord> records(contents.records.size());
  std::vector<GradeTarget> targets;
  std::vector<int> target_of(contents.records.size(), -1);
  std::set<std::pair<std::string, int>> seen;
  for (size_t i = 0; i < contents.records.size(); ++i) {
    std::string record_error;
    if (!CaseRecordFromJson(contents.records[i], &records[i], &record_error)) {
      *error = journal_path + ": record " + std::to_string(i + 1) + ": " + record_error;
      return false;
    }
    const size_t index = in.suite->case_ids.Find(in.suite->cases, records[i].id);
    if (index == CaseIdIndex::kAbsent || index >= selected.size() || !selected[index]) continue;
    if (!seen.insert({records[i].id, records[i].repeat}).second) continue;
    target_of[i] = static_cast<int>(targets.size());
    targets.push_back({&records[i], index});
  }
  for (const GradeTarget& target : targets) pass->Add(*target.record, target.case_index);
  if (!pass->Finish(&out->counts, &out->interrupted, error)) return false;
  if (out->interrupted) return true;
  for (const GradeTarget& target : targets) {
    pass->Apply(target.record, target.case_index, &out->counts);
  }

  std::unique_ptr<AtomicFile> file = AtomicFile::Open(journal_path, error);
  if (file == nullptr) return false;
  std::string buffer;
  for (size_t i = 0; i < records.size(); ++i) {
    if (target_of[i] < 0) {
      buffer += contents.lines[i];
    } else {
      buffer += CaseRecordLine(records[i]);
      CaseOutcome outcome =
          OutcomeOf(records[i], targets[static_cast<size_t>(target_of[i])].case_index);
      outcome.scores.abstention_case =
          in.suite->cases[targets[static_cast<size_t>(target_of[i])].case_index].answers.empty();
      out->outcomes.push_back(std::move(outcome));
    }
    buffer.push_back('\n');
    if (buffer.size() >= (1 << 20)) {
      file->Write(buffer);
      buffer.clear();
    }
  }
  file->Write(buffer);
  return file->Commit(error);
}

nlohmann::json GradingRecord(const GradingInputs& in, const GradingCounts& counts) {
  nlohmann::json graders = nlohmann::json::object();
  for (const GraderRuntime& grader : in.graders) {
    const GraderConfig& c = *grader.config;
    auto count = [](const std::map<std::string, int64_t>& m, const std::string& name) {
      auto it = m.find(name);
      return it == m.end() ? int64_t{0} : it->second;
    };
    graders[c.name] = {{"pipeline", c.pipeline},
                       {"identity", grader.identity},
                       {"scale", GradeScaleName(c.scale)},
                       {"repeat", c.repeat},
                       {"rubric", c.rubric_path},
                       {"graded", count(counts.graded, c.name)},
                       {"failed", count(counts.failed, c.name)}};
    if (!grader.calibration.is_null()) graders[c.name]["calibration"] = grader.calibration;
  }
  nlohmann::json cache = in.cache != nullptr ? nlohmann::json(in.cache->path()) : nlohmann::json();
  return {{"cache", cache},
          {"from_cache", counts.from_cache},
          {"requested", counts.requested},
          {"graders", graders}};
}

nlohmann::json MergedGradingRecord(const std::vector<nlohmann::json>& shards,
                                   const std::vector<std::string>& shard_dirs,
                                   std::vector<std::string>* warnings) {
  nlohmann::json merged;
  std::vector<std::string> ungraded;
  nlohmann::json caches = nlohmann::json::array();
  for (size_t s = 0; s < shards.size(); ++s) {
    const nlohmann::json& shard = shards[s];
    if (!shard.is_object()) {
      ungraded.push_back(shard_dirs[s]);
      continue;
    }
    if (merged.is_null()) {
      merged = {{"cache", nullptr},
                {"from_cache", 0},
                {"requested", 0},
                {"graders", nlohmann::json::object()}};
    }
    const nlohmann::json cache = shard.value("cache", nlohmann::json());
    if (std::find(caches.begin(), caches.end(), cache) == caches.end()) caches.push_back(cache);
    for (const char* count : {"from_cache", "requested"}) {
      merged[count] = merged[count].get<int64_t>() + shard.value(count, int64_t{0});
    }
    const nlohmann::json graders = shard.value("graders", nlohmann::json::object());
    for (auto it = graders.begin(); it != graders.end(); ++it) {
      nlohmann::json& mine = merged["graders"][it.key()];
      if (mine.is_null()) {
        mine = it.value();
        continue;
      }
      if (mine.value("identity", "") != it.value().value("identity", "")) {
        warnings->push_back("grader '" + it.key() + "' graded " + shard_dirs[s] +
                            " with another identity than an earlier shard (its rubric or "
                            "config changed between shards); the merged grades mix both");
      }
      for (const char* count : {"graded", "failed"}) {
        mine[count] = mine.value(count, int64_t{0}) + it.value().value(count, int64_t{0});
      }
    }
  }
  if (merged.is_null()) return merged;
  merged["cache"] = caches.size() == 1 ? caches[0] : caches;
  for (const std::string& dir : ungraded) {
    warnings->push_back(dir +
                        " was not graded (its run.json has no grading); its cases have no "
                        "grade metrics. Run plumb grade on the merged run to grade them all");
  }
  return merged;
}

bool IsSamePipeline(const PipelineConfig& grader, const std::string& tested_name,
                    const nlohmann::json& tested_config) {
  if (grader.name == tested_name) return true;
  if (!tested_config.is_object() || !grader.redacted_config.is_object()) return false;
  for (const char* key : {"command", "url"}) {
    auto mine = grader.redacted_config.find(key);
    auto theirs = tested_config.find(key);
    if (mine != grader.redacted_config.end() && theirs != tested_config.end() && *mine == *theirs) {
      return true;
    }
  }
  return false;
}

}  // namespace plumb
