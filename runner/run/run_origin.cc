#include "runner/run/run_origin.h"

#include <fstream>
#include <sstream>

#include "runner/base/atomic_file.h"

namespace plumb {
namespace {

/// A hash shortened for a message: enough to tell two apart by eye.
std::string Short(const std::string& hash) {
  if (hash.empty()) return "none";
  return hash.size() > 12 ? hash.substr(0, 12) + "..." : hash;
}

bool ReadOriginFile(const std::string& path, RunOrigin* origin, bool* found, std::string* error) {
  std::ifstream in(path, std::ios::binary);
  if (!in) return true;
  *found = true;
  std::stringstream buffer;
  buffer << in.rdbuf();
  const nlohmann::json record = nlohmann::json::parse(buffer.str(), nullptr, false);
  if (record.is_discarded() || !record.is_object() || !record.contains("suite") ||
      !record["suite"].is_object() || !record.contains("pipeline") ||
      !record["pipeline"].is_object()) {
    *error = path +
             " is not a plumb run record, so --resume cannot tell which run this directory "
             "holds; run without --resume (add --overwrite if it holds a finished run) to "
             "start over, or choose another --out";
    return false;
  }
  const nlohmann::json& suite = record["suite"];
  const nlohmann::json& pipeline = record["pipeline"];
  origin->suite_hash = suite.value("hash", "");
  const nlohmann::json& fingerprint = record.value("corpus_fingerprint", nlohmann::json());
  origin->corpus_fingerprint = fingerprint.is_string() ? fingerprint.get<std::string>() : "";
  origin->pipeline_name = pipeline.value("name", "");
  origin->pipeline_config = pipeline.value("config", nlohmann::json::object());
  return true;
}

/// The top-level keys of two pipeline configs whose values differ, in key order.
std::string DifferingKeys(const nlohmann::json& a, const nlohmann::json& b) {
  if (!a.is_object() || !b.is_object()) return "";
  std::string keys;
  auto add = [&keys](const std::string& key) { keys += (keys.empty() ? "'" : ", '") + key + "'"; };
  for (const auto& [key, value] : a.items()) {
    if (!b.contains(key) || b[key] != value) add(key);
  }
  for (const auto& [key, value] : b.items()) {
    if (!a.contains(key)) add(key);
  }
  return keys;
}

}  // namespace

bool WriteRunStart(const std::string& dir, const RunOrigin& origin, std::string* error) {
  const nlohmann::json record = {
      {"plumb_run_start", 1},
      {"suite", {{"hash", origin.suite_hash}}},
      {"corpus_fingerprint", origin.corpus_fingerprint},
      {"pipeline", {{"name", origin.pipeline_name}, {"config", origin.pipeline_config}}}};
  std::unique_ptr<AtomicFile> file = AtomicFile::Open(dir + "/" + kRunStartFile, error);
  if (file == nullptr) return false;
  file->Write(record.dump(2) + "\n");
  return file->Commit(error);
}

bool ReadRecordedOrigin(const std::string& dir, RunOrigin* origin, bool* found,
                        std::string* error) {
  *found = false;
  if (!ReadOriginFile(dir + "/" + kRunStartFile, origin, found, error)) return false;
  if (*found) return true;
  return ReadOriginFile(dir + "/run.json", origin, found, error);
}

std::vector<std::string> OriginDifferences(const RunOrigin& recorded, const RunOrigin& now) {
  std::vector<std::string> differences;
  if (recorded.pipeline_name != now.pipeline_name) {
    differences.push_back("pipeline '" + recorded.pipeline_name + "' (this run: '" +
                          now.pipeline_name + "')");
  } else if (recorded.pipeline_config != now.pipeline_config) {
    differences.push_back("pipeline '" + now.pipeline_name + "' with another config (" +
                          DifferingKeys(recorded.pipeline_config, now.pipeline_config) +
                          " differ)");
  }
  if (recorded.suite_hash != now.suite_hash) {
    differences.push_back("suite hash " + Short(recorded.suite_hash) +
                          " (this run: " + Short(now.suite_hash) + ")");
  }
  if (recorded.corpus_fingerprint != now.corpus_fingerprint) {
    differences.push_back("corpus fingerprint " + Short(recorded.corpus_fingerprint) +
                          " (this run: " + Short(now.corpus_fingerprint) + ")");
  }
  return differences;
}

}  // namespace plumb
