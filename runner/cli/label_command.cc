#include "runner/cli/label_command.h"

#include <sys/stat.h>

#include <algorithm>
#include <cstdio>
#include <map>
#include <set>
#include <utility>
#include <vector>

#include "metrics/seeded_random.h"
#include "runner/base/atomic_file.h"
#include "runner/run/calibration.h"
#include "runner/run/exit_code.h"
#include "runner/run/grade_request.h"
#include "runner/run/prepared_suite.h"
#include "runner/run/run_reader.h"

namespace plumb {
namespace {

int Fail(const std::string& message) {
  std::fprintf(stderr, "plumb label: %s\n", message.c_str());
  return kExitUsage;
}

struct SheetItem {
  const CaseRecord* record = nullptr;
  size_t case_index = 0;
  std::string stratum;
};

template <typename T>
void Shuffle(std::vector<T>* items, metrics::SeededRandom* random) {
  for (size_t i = items->size(); i > 1; --i) {
    std::swap((*items)[i - 1], (*items)[random->UniformIndex(i)]);
  }
}

// How many of `take` each stratum gets: proportional to its size by largest remainder, and at
// least one for every stratum while `take` covers them all.
std::map<std::string, size_t> Allocate(const std::map<std::string, std::vector<SheetItem>>& strata,
                                       size_t take, size_t total) {
  std::map<std::string, size_t> share;
  std::vector<std::pair<double, std::string>> remainders;
  size_t given = 0;
  for (const auto& [key, items] : strata) {
    const double exact =
        static_cast<double>(take) * static_cast<double>(items.size()) / static_cast<double>(total);
    share[key] = static_cast<size_t>(exact);
    given += share[key];
    remainders.push_back({exact - static_cast<double>(share[key]), key});
  }
  std::stable_sort(remainders.begin(), remainders.end(),
                   [](const auto& a, const auto& b) { return a.first > b.first; });
  for (size_t i = 0; given < take && i < remainders.size(); ++i, ++given) {
    share[remainders[i].second] += 1;
  }
  if (take >= strata.size()) {
    for (auto& [key, count] : share) {
      if (count > 0) continue;
      // Take one from the stratum with the most beyond one.
      auto donor = std::max_element(share.begin(), share.end(), [](const auto& a, const auto& b) {
        return a.second < b.second;
      });
      if (donor->second <= 1) break;
      donor->second -= 1;
      count = 1;
    }
  }
  return share;
}

}  // namespace

int LabelCommand(const LabelOptions& options) {
  struct stat st;
  if (::stat(options.out_path.c_str(), &st) == 0) {
    return Fail(options.out_path +
                " already exists and may hold labels; write the sheet to a new file (or delete "
                "this one first)");
  }
  LoadedRun run;
  std::string error;
  if (!LoadRun(options.run_dir, &run, &error)) return Fail(error);
  for (const std::string& w : run.warnings) {
    std::fprintf(stderr, "%s: warning: %s\n", options.run_dir.c_str(), w.c_str());
  }
  const nlohmann::json settings = run.record.value("suite", nlohmann::json::object());
  const std::string suite_path =
      !options.suite_path.empty() ? options.suite_path : settings.value("path", std::string());
  if (suite_path.empty()) {
    return Fail(options.run_dir + "/run.json records no suite path; pass --suite SUITE");
  }
  PreparedSuite prepared;
  if (!PrepareSuite(suite_path, "", /*expand_env=*/false, &prepared)) return kExitUsage;
  const Suite& suite = prepared.suite;

  // Whose verdicts stratify the sample: --grader, else the first grader the run's records carry.
  std::string grader = options.grader;
  if (grader.empty()) {
    for (const CaseRecord& r : run.records) {
      if (r.grades.is_object() && !r.grades.empty()) {
        grader = r.grades.begin().key();
        break;
      }
    }
  }
  const GraderConfig* config = nullptr;
  for (const GraderConfig& g : suite.graders) {
    if (g.name == grader) config = &g;
  }
  if (!options.grader.empty() && config == nullptr) {
    return Fail("--grader " + options.grader + ": no such grader in " + suite.path);
  }
  const double pass_at = config != nullptr ? CalibrationPassAt(suite, *config) : 0.5;

  // Every answer once: the first record of each case and answer text (repeats that answered
  // alike are one answer to label). Errored calls have no answer to label.
  std::vector<SheetItem> items;
  std::set<std::pair<std::string, std::string>> seen;
  size_t left_out = 0;
  for (const CaseRecord& r : run.records) {
    if (!r.error.empty()) continue;
    const size_t index = suite.case_ids.Find(suite.cases, r.id);
    if (index == CaseIdIndex::kAbsent) {
      left_out += 1;
      continue;
    }
    const std::string answer = r.parsed.answer ? "s" + *r.parsed.answer : "null";
    if (!seen.insert({r.id, answer}).second) continue;
    SheetItem item;
    item.record = &r;
    item.case_index = index;
    std::string verdict = "ungraded";
    if (r.grades.is_object() && r.grades.contains(grader) &&
        r.grades[grader].value("grade", nlohmann::json()).is_number()) {
      verdict = r.grades[grader]["grade"].get<double>() >= pass_at ? "pass" : "fail";
    }
    const Case& c = suite.cases[index];
    item.stratum = verdict + "\n" + (c.tags.empty() ? std::string() : c.tags.front());
    items.push_back(item);
  }
  if (left_out > 0) {
    std::fprintf(stderr, "plumb label: warning: %zu answers of cases no longer in %s left out\n",
                 left_out, suite.path.c_str());
  }
  if (items.empty()) return Fail(options.run_dir + " has no answer to label");

  metrics::SeededRandom random(options.seed);
  std::vector<SheetItem> chosen;
  const size_t take = options.sample > 0 ? static_cast<size_t>(options.sample) : items.size();
  if (take >= items.size()) {
    chosen = items;
  } else {
    std::map<std::string, std::vector<SheetItem>> strata;
    for (const SheetItem& item : items) strata[item.stratum].push_back(item);
    const std::map<std::string, size_t> share = Allocate(strata, take, items.size());
    for (auto& [key, members] : strata) {
      Shuffle(&members, &random);
      const size_t count = std::min(members.size(), share.at(key));
      chosen.insert(chosen.end(), members.begin(), members.begin() + count);
    }
  }
  // The sheet's order must not tell the strata (and so the verdicts) apart.
  Shuffle(&chosen, &random);

  std::string text;
  for (const SheetItem& item : chosen) {
    const Case& c = suite.cases[item.case_index];
    const CaseRecord& r = *item.record;
    nlohmann::json cited = nlohmann::json::array();
    for (const SourceRef& ref : r.parsed.citations) {
      cited.push_back({{"doc", ref.doc},
                       {"start", ref.start ? nlohmann::json(*ref.start) : nlohmann::json()},
                       {"end", ref.end ? nlohmann::json(*ref.end) : nlohmann::json()},
                       {"text", CitedText(ref, prepared.corpus.get())}});
    }
    nlohmann::json line = nlohmann::json::object();
    line["id"] = c.id;
    line["answer"] = r.parsed.answer ? nlohmann::json(*r.parsed.answer) : nlohmann::json();
    line["label"] = "";
    line["by"] = "";
    line["note"] = "";
    line["question"] = c.question;
    line["gold"] = c.answers;
    line["cited"] = cited;
    line["tags"] = c.tags;
    // Keys in this order (nlohmann keeps objects sorted, so write them by hand).
    std::string out = "{";
    for (const char* key :
         {"id", "answer", "label", "by", "note", "question", "gold", "cited", "tags"}) {
      if (out.size() > 1) out += ", ";
      out += nlohmann::json(key).dump() + ": " +
             line[key].dump(-1, ' ', false, nlohmann::json::error_handler_t::replace);
    }
    text += out + "}\n";
  }
  std::unique_ptr<AtomicFile> file = AtomicFile::Open(options.out_path, &error);
  if (file == nullptr) return Fail(error);
  file->Write(text);
  if (!file->Commit(&error)) return Fail(error);
  std::fprintf(
      stderr,
      "plumb label: wrote %zu of %zu answers to %s%s, in random order with no grade "
      "shown. Fill in \"label\" (%s), \"by\" and \"note\" by reading each answer "
      "against the documents, then run `%s --labels %s`\n",
      chosen.size(), items.size(), options.out_path.c_str(),
      options.sample > 0 ? " (stratified by the grader's verdict and the first tag)" : "",
      config != nullptr && config->scale != GradeScale::kPassFail
          ? (config->scale == GradeScale::kUnit ? "a number from 0 to 1" : "a number from 1 to 5")
          : "\"pass\" or \"fail\"",
      CalibrateCommandLine(suite.path, grader.empty() ? "NAME" : grader).c_str(),
      options.out_path.c_str());
  return kExitOk;
}

}  // namespace plumb
