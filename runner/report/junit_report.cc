#include "runner/report/junit_report.h"

#include <fmt/format.h>

#include <algorithm>
#include <map>

#include "metrics/utf8.h"
#include "runner/compare/drift.h"
#include "runner/run/run_record.h"

namespace plumb {
namespace {

/// The records of each case run.json lists, by id; cases without records are kept (they are
/// reported as errored: nothing came back).
std::map<std::string, std::vector<const CaseRecord*>> RecordsById(const LoadedRun& run) {
  std::map<std::string, std::vector<const CaseRecord*>> out;
  const nlohmann::json& cases =
      run.record.contains("cases") ? run.record["cases"] : nlohmann::json::object();
  if (cases.is_object()) {
    for (auto it = cases.begin(); it != cases.end(); ++it) out[it.key()];
  }
  for (const CaseRecord& r : run.records) {
    auto it = out.find(r.id);
    if (it != out.end()) it->second.push_back(&r);
  }
  for (auto& entry : out) {
    std::sort(entry.second.begin(), entry.second.end(),
              [](const CaseRecord* a, const CaseRecord* b) { return a->repeat < b->repeat; });
  }
  return out;
}

std::string ScoresText(const MetricValues& values) {
  std::vector<std::string> names;
  for (const auto& entry : values) names.push_back(entry.first);
  std::string out;
  for (const std::string& metric : MetricDisplayOrder(names)) {
    out += fmt::format("{}{} {:.4g}", out.empty() ? "" : ", ", metric, values.at(metric));
  }
  return out.empty() ? "no scores" : out;
}

/// Mean of each metric over the repeats that define it.
MetricValues MeanScores(const std::vector<const CaseRecord*>& records) {
  std::map<std::string, std::pair<double, int>> sums;
  for (const CaseRecord* r : records) {
    for (const auto& [metric, value] : r->scores.values) {
      sums[metric].first += value;
      sums[metric].second += 1;
    }
  }
  MetricValues out;
  for (const auto& [metric, sum] : sums) out[metric] = sum.first / sum.second;
  return out;
}

std::string GoldText(const nlohmann::json* gold) {
  if (gold == nullptr || !gold->is_object()) return "";
  std::string out;
  if (gold->contains("question") && (*gold)["question"].is_string()) {
    out += "question: " + (*gold)["question"].get<std::string>() + "\n";
  }
  if (gold->contains("answers") && (*gold)["answers"].is_array()) {
    const nlohmann::json& answers = (*gold)["answers"];
    if (answers.empty()) {
      out += "gold: abstain\n";
    } else {
      std::string list;
      for (const nlohmann::json& a : answers) {
        if (a.is_string()) list += (list.empty() ? "\"" : " | \"") + a.get<std::string>() + "\"";
      }
      out += "gold answers: " + list + "\n";
    }
  }
  return out;
}

std::string RepeatText(const CaseRecord& r) {
  std::string out = fmt::format("repeat {}: {}", r.repeat,
                                !r.error.empty() ? "ERROR" : (r.scores.pass ? "passed" : "FAILED"));
  if (!r.error.empty()) {
    out += "\n  error: " + r.error;
    if (!r.stdout_excerpt.empty()) out += "\n  stdout: " + r.stdout_excerpt;
    if (!r.stderr_excerpt.empty()) out += "\n  stderr: " + r.stderr_excerpt;
  } else if (r.parsed.answer) {
    out += "\n  answer: \"" + *r.parsed.answer + "\"";
  } else {
    out += "\n  answer: (abstained)";
  }
  out += "\n  scores: " + ScoresText(r.scores.values) + "\n";
  return out;
}

std::string CasePassText(const nlohmann::json& record) {
  if (!record.contains("suite") || !record["suite"].is_object()) return "";
  const nlohmann::json& pass = record["suite"].value("case_pass", nlohmann::json());
  if (!pass.is_object() || pass.empty()) return "";
  std::string out;
  for (auto it = pass.begin(); it != pass.end(); ++it) {
    if (!it->is_number()) continue;
    out += fmt::format("{}{} >= {:.4g}", out.empty() ? "" : ", ", it.key(), it->get<double>());
  }
  return out.empty() ? "" : "a case passes when " + out + "\n";
}

std::string JsonString(const nlohmann::json& object, const char* key) {
  if (!object.is_object() || !object.contains(key) || !object[key].is_string()) return "";
  return object[key].get<std::string>();
}

}  // namespace

std::string XmlEscape(std::string_view text) {
  std::string out;
  out.reserve(text.size());
  size_t pos = 0;
  while (pos < text.size()) {
    const char32_t cp = metrics::NextCodePoint(text, &pos);
    switch (cp) {
      case '&':
        out += "&amp;";
        break;
      case '<':
        out += "&lt;";
        break;
      case '>':
        out += "&gt;";
        break;
      case '"':
        out += "&quot;";
        break;
      case '\'':
        out += "&apos;";
        break;
      // Written as references so that attribute-value normalization keeps them.
      case '\t':
        out += "&#9;";
        break;
      case '\n':
        out += "&#10;";
        break;
      case '\r':
        out += "&#13;";
        break;
      default:
        // XML 1.0 Char excludes the other C0 controls, U+FFFE and U+FFFF; NextCodePoint already
        // turned invalid UTF-8 (and encoded surrogates) into U+FFFD.
        if (cp < 0x20 || cp == 0xFFFE || cp == 0xFFFF) {
          metrics::AppendUtf8(metrics::kReplacementCharacter, &out);
        } else {
          metrics::AppendUtf8(cp, &out);
        }
    }
  }
  return out;
}

std::string FormatJUnitReport(const LoadedRun& run) {
  const nlohmann::json& record = run.record;
  const nlohmann::json suite_json =
      record.contains("suite") ? record["suite"] : nlohmann::json::object();
  const std::string suite = JsonString(suite_json, "name");
  const std::string pass_rule = CasePassText(record);
  const auto by_id = RecordsById(run);

  std::string cases_xml;
  int failures = 0, errors = 0;
  double total_seconds = 0;
  for (const auto& [id, records] : by_id) {
    double latency = 0;
    bool errored = records.empty(), failed = false;
    for (const CaseRecord* r : records) {
      latency += r->latency_ms;
      errored = errored || !r->error.empty();
      failed = failed || !r->scores.pass;
    }
    const double seconds = records.empty() ? 0 : latency / 1000.0 / records.size();
    total_seconds += seconds;
    cases_xml += fmt::format("    <testcase classname=\"{}\" name=\"{}\" time=\"{:.3f}\"",
                             XmlEscape(suite), XmlEscape(id), seconds);
    if (!errored && !failed) {
      cases_xml += "/>\n";
      continue;
    }
    std::string detail = GoldText(run.Gold(id)) + pass_rule;
    for (const CaseRecord* r : records) detail += RepeatText(*r);
    const std::string scores = ScoresText(MeanScores(records));
    const std::string repeats =
        records.size() > 1 ? fmt::format(" (mean of {} repeats)", records.size()) : "";
    if (errored) {
      ++errors;
      std::string reason = "no record of this case in cases.jsonl";
      for (const CaseRecord* r : records) {
        if (!r->error.empty()) {
          reason = r->error;
          break;
        }
      }
      cases_xml += fmt::format(
          ">\n      <error type=\"plumb.case_error\" message=\"{}\">{}</error>\n    </testcase>\n",
          XmlEscape(reason + "; scores" + repeats + ": " + scores), XmlEscape(detail));
    } else {
      ++failures;
      cases_xml += fmt::format(
          ">\n      <failure type=\"plumb.case_failed\" message=\"{}\">{}</failure>\n"
          "    </testcase>\n",
          XmlEscape("scores" + repeats + ": " + scores), XmlEscape(detail));
    }
  }

  std::string properties;
  auto property = [&](const std::string& name, const std::string& value) {
    properties += fmt::format("      <property name=\"{}\" value=\"{}\"/>\n", XmlEscape(name),
                              XmlEscape(value));
  };
  property("pipeline", record.contains("pipeline") ? JsonString(record["pipeline"], "name") : "");
  property("suite_hash", JsonString(suite_json, "hash"));
  property("corpus_fingerprint", JsonString(record, "corpus_fingerprint"));
  if (record.contains("labels") && record["labels"].is_object()) {
    for (auto it = record["labels"].begin(); it != record["labels"].end(); ++it) {
      property("label." + it.key(), it->is_string() ? it->get<std::string>() : it->dump());
    }
  }
  std::string verdict;
  if (record.contains("verdict") && record["verdict"].is_object()) {
    verdict = JsonString(record["verdict"], "reason");
    property("verdict", verdict);
  }
  // JUnit's timestamp is an ISO 8601 date-time without a zone designator.
  std::string timestamp = JsonString(record, "started_at");
  if (!timestamp.empty() && timestamp.back() == 'Z') timestamp.pop_back();

  const size_t tests = by_id.size();
  std::string out = "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n";
  out += fmt::format(
      "<testsuites name=\"plumb\" tests=\"{}\" failures=\"{}\" errors=\"{}\" time=\"{:.3f}\">\n",
      tests, failures, errors, total_seconds);
  out += fmt::format(
      "  <testsuite name=\"{}\" tests=\"{}\" failures=\"{}\" errors=\"{}\" skipped=\"0\" "
      "time=\"{:.3f}\" timestamp=\"{}\">\n",
      XmlEscape(suite), tests, failures, errors, total_seconds, XmlEscape(timestamp));
  out += "    <properties>\n" + properties + "    </properties>\n";
  out += cases_xml;
  out += "  </testsuite>\n</testsuites>\n";
  return out;
}

bool WriteJUnitReport(const LoadedRun& run, const std::string& path, std::string* error) {
  return WriteFileAtomically(path, FormatJUnitReport(run), error);
}

}  // namespace plumb
