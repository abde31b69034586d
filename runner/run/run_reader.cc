#include "runner/run/run_reader.h"

#include <fstream>
#include <sstream>

#include "runner/run/run_journal.h"

namespace plumb {

const nlohmann::json* LoadedRun::Gold(const std::string& id) const {
  auto cases = record.find("cases");
  if (cases == record.end()) return nullptr;
  auto it = cases->find(id);
  return it == cases->end() ? nullptr : &*it;
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
  return true;
}

}  // namespace plumb
