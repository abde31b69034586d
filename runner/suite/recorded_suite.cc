#include "runner/suite/recorded_suite.h"

#include <cstdint>

namespace plumb {
namespace {

/// Reads run.json members into plain values, remembering the first that is missing or of the
/// wrong type, so a caller checks once at the end.
class RecordFields {
 public:
  RecordFields(const nlohmann::json& object, std::string where)
      : object_(object), where_(std::move(where)) {}

  const nlohmann::json* Find(const char* key, bool (nlohmann::json::*is_type)() const,
                             const char* type) {
    if (!error_.empty()) return nullptr;
    auto it = object_.is_object() ? object_.find(key) : object_.end();
    if (it == object_.end() || !((*it).*is_type)()) {
      error_ = where_ + " has no " + type + " \"" + key + "\"";
      return nullptr;
    }
    return &*it;
  }
  void Text(const char* key, std::string* out) {
    if (const nlohmann::json* v = Find(key, &nlohmann::json::is_string, "string")) {
      *out = v->get<std::string>();
    }
  }
  void Number(const char* key, double* out) {
    if (const nlohmann::json* v = Find(key, &nlohmann::json::is_number, "number")) {
      *out = v->get<double>();
    }
  }
  void Whole(const char* key, int64_t* out) {
    if (const nlohmann::json* v = Find(key, &nlohmann::json::is_number_integer, "integer")) {
      *out = v->get<int64_t>();
    }
  }
  void Texts(const char* key, std::vector<std::string>* out) {
    const nlohmann::json* list = Find(key, &nlohmann::json::is_array, "list");
    if (list == nullptr) return;
    for (const nlohmann::json& item : *list) {
      if (!item.is_string()) {
        error_ = where_ + ": \"" + key + "\" must hold only strings";
        return;
      }
      out->push_back(item.get<std::string>());
    }
  }
  void Fail(const std::string& message) {
    if (error_.empty()) error_ = where_ + ": " + message;
  }
  /// False with *error set when any member was missing or malformed.
  bool Done(std::string* error) const {
    if (error_.empty()) return true;
    *error = error_;
    return false;
  }

 private:
  const nlohmann::json& object_;
  std::string where_;
  std::string error_;
};

}  // namespace

bool ReadRecordedSuiteSettings(const nlohmann::json& record, Suite* suite, std::string* error) {
  RecordFields top(record, "run.json");
  const nlohmann::json* settings = top.Find("suite", &nlohmann::json::is_object, "object");
  if (settings == nullptr) return top.Done(error);
  RecordFields fields(*settings, "run.json's \"suite\"");
  std::string normalize;
  fields.Text("name", &suite->name);
  fields.Text("path", &suite->path);
  fields.Text("hash", &suite->suite_hash);
  fields.Text("normalize", &normalize);
  fields.Text("lang", &suite->lang);
  fields.Number("min_overlap", &suite->min_overlap);
  fields.Number("max_error_rate", &suite->max_error_rate);
  if (!normalize.empty() && !metrics::ParseNormalizationProfile(normalize, &suite->normalize)) {
    fields.Fail("unknown normalization profile '" + normalize + "'");
  }
  suite->retrieval_k.clear();
  if (const nlohmann::json* ks = fields.Find("retrieval_k", &nlohmann::json::is_array, "list")) {
    for (const nlohmann::json& k : *ks) {
      if (k.is_number_integer()) {
        suite->retrieval_k.push_back(k.get<int>());
      } else {
        fields.Fail("\"retrieval_k\" must hold whole numbers");
      }
    }
  }
  suite->case_pass.clear();
  if (const nlohmann::json* pass = fields.Find("case_pass", &nlohmann::json::is_object, "object")) {
    for (auto it = pass->begin(); it != pass->end(); ++it) {
      if (it->is_number()) {
        suite->case_pass[it.key()] = it->get<double>();
      } else {
        fields.Fail("\"case_pass\" must map metrics to numbers");
      }
    }
  }
  // Runs recorded before `correct_from` existed made correct from the default list.
  if (auto from = settings->find("correct_from"); from != settings->end()) {
    suite->correct_from.clear();
    for (const nlohmann::json& metric : from->is_array() ? *from : nlohmann::json::array()) {
      if (metric.is_string()) suite->correct_from.push_back(metric.get<std::string>());
    }
    if (!from->is_array() || suite->correct_from.size() != from->size()) {
      fields.Fail("\"correct_from\" must be a list of metric ids");
    }
  }
  if (!fields.Done(error)) return false;

  auto corpus = record.find("corpus_dir");
  suite->corpus_dir.reset();
  if (corpus != record.end() && corpus->is_string()) suite->corpus_dir = corpus->get<std::string>();
  // Corpus updates (issue 23): their ids, so cases can name theirs by index again.
  suite->updates.clear();
  if (auto updates = record.find("updates"); updates != record.end() && updates->is_array()) {
    for (const nlohmann::json& entry : *updates) {
      RecordFields u(entry, "a run.json update");
      CorpusUpdate update;
      u.Text("id", &update.id);
      u.Texts("docs", &update.docs);
      u.Texts("remove", &update.remove);
      if (!u.Done(error)) return false;
      suite->updates.push_back(std::move(update));
    }
  }

  // Thresholds are recorded with their outcomes; the limits are what the suite set.
  suite->thresholds = Thresholds();
  const nlohmann::json* outcomes = top.Find("thresholds", &nlohmann::json::is_array, "list");
  if (outcomes == nullptr) return top.Done(error);
  for (const nlohmann::json& outcome : *outcomes) {
    RecordFields t(outcome, "a run.json threshold");
    std::string metric;
    double limit = 0;
    t.Text("metric", &metric);
    t.Number("limit", &limit);
    if (!t.Done(error)) return false;
    auto tag = outcome.find("tag");
    if (tag != outcome.end() && tag->is_string()) {
      suite->thresholds.tags[tag->get<std::string>()][metric] = limit;
    } else {
      suite->thresholds.metrics[metric] = limit;
    }
  }
  return true;
}

bool ReadRecordedCase(const std::string& id, const nlohmann::json& entry, Case* gold, size_t* index,
                      std::string* error) {
  RecordFields fields(entry, "case '" + id + "' in run.json");
  *gold = Case();
  gold->id = id;
  // A session's turn (issue 22) is known by its id: run.json needs no other record of it.
  SplitTurnId(id, &gold->session, &gold->turn);
  int64_t line = 0;
  int64_t place = -1;
  fields.Text("gold_hash", &gold->gold_hash);
  fields.Text("question", &gold->question);
  fields.Texts("answers", &gold->answers);
  fields.Texts("patterns", &gold->patterns);
  fields.Texts("tags", &gold->tags);
  fields.Whole("line", &line);
  if (entry.is_object() && !entry.contains("index")) {
    fields.Fail(
        "no \"index\" (its place in the suite); runs recorded before plumb merge existed "
        "lack it: record the run again with this plumb");
  }
  fields.Whole("index", &place);
  if (const nlohmann::json* spans = fields.Find("sources", &nlohmann::json::is_array, "list")) {
    for (const nlohmann::json& item : *spans) {
      RecordFields s(item, "a source of case '" + id + "' in run.json");
      GoldSpan span;
      s.Text("doc", &span.doc);
      s.Whole("start", &span.start);
      s.Whole("end", &span.end);
      s.Text("text", &span.text);
      if (!s.Done(error)) return false;
      gold->sources.push_back(std::move(span));
    }
  }
  if (auto number = entry.find("number"); number != entry.end()) {
    RecordFields n(*number, "the number of case '" + id + "' in run.json");
    NumberGold value;
    n.Number("value", &value.value);
    n.Number("tolerance", &value.tolerance);
    n.Text("unit", &value.unit);
    if (!n.Done(error)) return false;
    gold->number = value;
  }
  if (place < 0 || place >= static_cast<int64_t>(kMaxRecordedCases)) {
    fields.Fail("\"index\" must be a case's place in its suite, from 0 to " +
                std::to_string(kMaxRecordedCases - 1));
  }
  if (!fields.Done(error)) return false;
  gold->pos.line = static_cast<int>(line);
  *index = static_cast<size_t>(place);
  return true;
}

}  // namespace plumb

namespace plumb {

bool ResolveRecordedAfter(const nlohmann::json& entry, const Suite& suite, Case* gold,
                          std::string* error) {
  auto after = entry.find("after");
  if (after == entry.end()) return true;
  for (size_t k = 0; k < suite.updates.size(); ++k) {
    if (after->is_string() && suite.updates[k].id == after->get<std::string>()) {
      gold->after = int(k);
      gold->stale_answers.clear();
      const nlohmann::json stale = entry.value("stale_answers", nlohmann::json::array());
      for (const nlohmann::json& s : stale.is_array() ? stale : nlohmann::json::array()) {
        if (s.is_string()) gold->stale_answers.push_back(s.get<std::string>());
      }
      return true;
    }
  }
  *error = "case '" + gold->id + "' in run.json names update " + after->dump() +
           ", which the run's \"updates\" do not list";
  return false;
}

}  // namespace plumb
