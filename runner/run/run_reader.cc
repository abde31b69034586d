#include "runner/run/run_reader.h"

#include <fstream>
#include <map>
#include <sstream>

#include "runner/run/failure_cause.h"
#include "runner/run/run_journal.h"

namespace plumb {
namespace {

/// Gives each failed record of a journal written before causes were recorded its cause, from
/// the case_pass and gold that run.json records.
void ClassifyUnclassified(LoadedRun* run) {
  const std::map<std::string, double> case_pass = run->CasePass();
  for (CaseRecord& r : run->records) {
    if (r.scores.pass || r.scores.cause != FailureCause::kNone) continue;
    const nlohmann::json* gold = run->Gold(r.id);
    r.scores.abstention_case = gold != nullptr && gold->is_object() && gold->contains("answers") &&
                               (*gold)["answers"].is_array() && (*gold)["answers"].empty();
    r.scores.cause = ClassifyFailure(r.scores, case_pass);
  }
}

}  // namespace

const nlohmann::json* LoadedRun::Gold(const std::string& id) const {
  auto cases = record.find("cases");
  if (cases == record.end()) return nullptr;
  auto it = cases->find(id);
  return it == cases->end() ? nullptr : &*it;
}

std::map<std::string, double> LoadedRun::CasePass() const { return CasePassOf(record); }

std::map<std::string, double> CasePassOf(const nlohmann::json& record) {
  auto suite = record.find("suite");
  if (suite == record.end() || !suite->is_object()) return {{"correct", 1.0}};
  auto listed = suite->find("case_pass");
  if (listed == suite->end() || !listed->is_object()) return {{"correct", 1.0}};
  std::map<std::string, double> out;
  for (auto it = listed->begin(); it != listed->end(); ++it) {
    if (it->is_number()) out[it.key()] = it->get<double>();
  }
  return out;
}

std::vector<const CaseRecord*> LoadedRun::RecordsOf(const std::string& id) const {
  std::vector<const CaseRecord*> out;
  for (const CaseRecord& r : records) {
    if (r.id == id) out.push_back(&r);
  }
  return out;
}

bool LoadRunRecord(const std::string& dir, nlohmann::json* record, std::string* error) {
  const std::string record_path = dir + "/run.json";
  std::ifstream in(record_path, std::ios::binary);
  if (!in) {
    *error = "cannot read " + record_path +
             "; a run directory holds run.json once the run has finished (an interrupted run "
             "has only cases.jsonl: finish it with `plumb run --resume`)";
    return false;
  }
  std::stringstream buffer;
  buffer << in.rdbuf();
  *record = nlohmann::json::parse(buffer.str(), nullptr, /*allow_exceptions=*/false);
  if (record->is_discarded() || !record->is_object() || !record->contains("plumb_run")) {
    *error = record_path + " is not a plumb run record";
    return false;
  }
  return true;
}

bool LoadRun(const std::string& dir, LoadedRun* run, std::string* error) {
  *run = LoadedRun();
  run->dir = dir;
  if (!LoadRunRecord(dir, &run->record, error)) return false;
  JournalContents journal;
  if (!ReadJournal(dir + "/cases.jsonl", &journal, error)) return false;
  run->warnings = journal.warnings;
  run->records.reserve(journal.records.size());
  for (size_t i = 0; i < journal.records.size(); ++i) {
    CaseRecord record;
    std::string record_error;
    if (!CaseRecordFromJson(journal.records[i], &record, &record_error)) {
      *error = dir + "/cases.jsonl:" + std::to_string(i + 1) + ": " + record_error;
      return false;
    }
    run->records.push_back(std::move(record));
  }
  ClassifyUnclassified(run);
  return true;
}

}  // namespace plumb
