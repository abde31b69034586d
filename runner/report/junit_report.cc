#include "runner/report/junit_report.h"

#include <fmt/format.h>

#include <algorithm>
#include <map>

#include "metrics/utf8.h"
#include "runner/compare/drift.h"
#include "runner/run/failure_reason.h"
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

std::string Number(double x) { return fmt::format("{:.4g}", x); }

/// The aggregate of `metric` at run level (`tag` empty) or for `tag` in run.json, or null.
const nlohmann::json* AggregateOf(const nlohmann::json& record, const std::string& tag,
                                  const std::string& metric) {
  if (!record.is_object() || !record.contains("aggregates")) return nullptr;
  const nlohmann::json* at = &record["aggregates"];
  if (!tag.empty()) {
    if (!at->contains("tags") || !(*at)["tags"].contains(tag)) return nullptr;
    at = &(*at)["tags"][tag];
  }
  if (!at->is_object() || !at->contains("metrics") || !(*at)["metrics"].contains(metric)) {
    return nullptr;
  }
  return &(*at)["metrics"][metric];
}

/// "95% Wilson interval [0.1600, 0.3020], n 130", or "" when run.json has no interval for it.
std::string IntervalText(const nlohmann::json* aggregate) {
  if (aggregate == nullptr || !aggregate->is_object()) return "";
  const nlohmann::json& interval = aggregate->value("interval", nlohmann::json());
  if (!interval.is_array() || interval.size() != 2 || !interval[0].is_number() ||
      !interval[1].is_number()) {
    return "";
  }
  const std::string method = aggregate->value("interval_method", std::string());
  return fmt::format("95% {} interval [{:.4f}, {:.4f}], n {}",
                     method == "wilson" ? "Wilson" : "bootstrap", interval[0].get<double>(),
                     interval[1].get<double>(), aggregate->value("n", int64_t{0}));
}

struct Testcases {
  std::string xml;
  int tests = 0, failures = 0, errors = 0, skipped = 0;
  double seconds = 0;

  void Open(const std::string& classname, const std::string& name, double time) {
    ++tests;
    seconds += time;
    xml += fmt::format("    <testcase classname=\"{}\" name=\"{}\" time=\"{:.3f}\"",
                       XmlEscape(classname), XmlEscape(name), time);
  }
  void Pass() { xml += "/>\n"; }
  void Fail(const char* element, const std::string& type, const std::string& message,
            const std::string& text) {
    (std::string(element) == "error" ? errors : failures) += 1;
    xml += fmt::format(">\n      <{} type=\"{}\" message=\"{}\">{}</{}>\n    </testcase>\n",
                       element, XmlEscape(type), XmlEscape(message), XmlEscape(text), element);
  }
  void Skip(const std::string& message) {
    ++skipped;
    xml += fmt::format(">\n      <skipped message=\"{}\"/>\n    </testcase>\n", XmlEscape(message));
  }
};

/// One testcase per floor and ceiling of run.json's thresholds: the rule is its name, and a
/// broken one fails naming the value and its interval.
void AddThresholdCases(const nlohmann::json& record, const std::string& classname, Testcases* out) {
  const nlohmann::json& list = record.value("thresholds", nlohmann::json());
  if (!list.is_array()) return;
  for (const nlohmann::json& t : list) {
    if (!t.is_object()) continue;
    const std::string tag = JsonString(t, "tag");
    const std::string metric = JsonString(t, "metric");
    const bool ceiling = JsonString(t, "kind") == "ceiling";
    const double limit = t.value("limit", 0.0);
    const std::string rule =
        fmt::format("{}{} {} {} {}", tag.empty() ? "" : "tag " + tag + ": ",
                    ceiling ? "ceiling" : "floor", metric, ceiling ? "<=" : ">=", Number(limit));
    out->Open(classname, rule, 0);
    if (t.value("held", false)) {
      out->Pass();
      continue;
    }
    const nlohmann::json& value = t.value("value", nlohmann::json());
    std::string message;
    if (!value.is_number()) {
      message = fmt::format("{} broken: {} not measured (no case defines it)",
                            ceiling ? "ceiling" : "floor", metric);
    } else {
      message = fmt::format("{} broken: {}{} {} {} {}", ceiling ? "ceiling" : "floor",
                            tag.empty() ? "" : "tag " + tag + " ", metric,
                            Number(value.get<double>()), ceiling ? ">" : "<", Number(limit));
      const std::string interval = IntervalText(AggregateOf(record, tag, metric));
      if (!interval.empty()) message += "; " + interval;
    }
    out->Fail("failure", ceiling ? "plumb.ceiling_broken" : "plumb.floor_broken", message,
              message + "\n");
  }
}

/// One testcase per gated metric of the drift: a regression fails naming the rule, both means,
/// the delta, its interval and p; too few cases is skipped with how many more it needs.
void AddGateCases(const DriftReport& drift, const std::string& classname, Testcases* out) {
  const std::string rule = fmt::format(
      "regressed means: the 95% paired-bootstrap interval of the delta lies below 0, delta <= "
      "-{} and p <= {} after {}",
      drift.options.min_effect, kDriftAlpha, drift.correction);
  for (const std::string& metric : drift.gate.metrics) {
    out->Open(classname, "no regression in " + metric, 0);
    if (metric == kLatencyGate) {
      const LatencyGateVerdict& g = drift.latency_gate;
      const LatencyDrift& l = drift.latency_p95;
      if (!g.measured) {
        out->Skip("the latency p95 is not measured on cases both runs share");
        continue;
      }
      const std::string values = fmt::format(
          "latency p95 base {:.1f} ms, candidate {:.1f} ms, ratio {:.3f}, 95% paired-bootstrap "
          "interval [{:.3f}, {:.3f}], n {}",
          l.base, l.cand, l.ratio, l.interval.low, l.interval.high, drift.latency_n);
      if (g.regressed) {
        out->Fail("failure", "plumb.regressed", "regressed: " + values,
                  values + fmt::format("\nregressed means: the interval lies wholly above {:.3f} "
                                       "(1 + --max-slowdown {:g})\n",
                                       g.limit, drift.options.max_slowdown));
      } else {
        out->Pass();
      }
      continue;
    }
    const MetricDrift* m = drift.Find(metric);
    if (m == nullptr) {
      out->Skip(metric + " is not measured on any case both runs share");
      continue;
    }
    const std::string values = fmt::format(
        "{} base {:.4f}, candidate {:.4f}, delta {:+.4f}, 95% paired-bootstrap interval [{:+.4f}, "
        "{:+.4f}], p {:.4g} (adjusted {:.4g}), n {}",
        metric, m->base_mean, m->cand_mean, m->delta, m->interval.low, m->interval.high, m->p_value,
        m->p_holm, m->n);
    if (m->verdict == Verdict::kRegressed) {
      out->Fail("failure", "plumb.regressed", "regressed: " + values, values + "\n" + rule + "\n");
    } else if (m->verdict == Verdict::kTooFewCases) {
      out->Skip(fmt::format("too few cases: {} paired, {} more needed for a verdict", m->n,
                            m->needed_more));
    } else {
      out->Pass();
    }
  }
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

std::string FormatJUnitReport(const LoadedRun& run, const DriftReport* drift) {
  const nlohmann::json& record = run.record;
  const nlohmann::json suite_json =
      record.contains("suite") ? record["suite"] : nlohmann::json::object();
  const std::string suite = JsonString(suite_json, "name");
  const std::string pipeline =
      record.contains("pipeline") ? JsonString(record["pipeline"], "name") : "";
  // The pipeline is part of every classname, so two pipelines' files do not collide.
  const std::string classname = pipeline.empty() ? suite : suite + "." + pipeline;
  const std::string pass_rule = CasePassText(record);
  const std::map<std::string, double> case_pass = run.CasePass();
  const auto by_id = RecordsById(run);
  std::map<std::string, const CaseChange*> lost;
  if (drift != nullptr) {
    for (const CaseChange& c : drift->lost) lost[c.id] = &c;
  }
  auto lost_prefix = [&](const std::string& id) {
    auto it = lost.find(id);
    return it == lost.end() ? std::string() : std::string("lost (passed in the base run): ");
  };

  Testcases cases;
  for (const auto& [id, records] : by_id) {
    double latency = 0;
    bool errored = records.empty(), failed = false;
    const CaseRecord* first_failed = nullptr;
    for (const CaseRecord* r : records) {
      latency += r->latency_ms;
      errored = errored || !r->error.empty();
      failed = failed || !r->scores.pass;
      if (!r->scores.pass && first_failed == nullptr) first_failed = r;
    }
    const double seconds = records.empty() ? 0 : latency / 1000.0 / records.size();
    cases.Open(classname, id, seconds);
    if (!errored && !failed) {
      cases.Pass();
      continue;
    }
    std::string detail = GoldText(run.Gold(id)) + pass_rule;
    for (const CaseRecord* r : records) detail += RepeatText(*r);
    const std::string scores = ScoresText(MeanScores(records));
    const std::string repeats =
        records.size() > 1 ? fmt::format(" (mean of {} repeats)", records.size()) : "";
    const bool is_lost = lost.count(id) > 0;
    if (errored) {
      std::string reason = "no record of this case in cases.jsonl";
      for (const CaseRecord* r : records) {
        if (!r->error.empty()) {
          reason = r->error;
          break;
        }
      }
      cases.Fail("error", is_lost ? "plumb.lost" : "plumb.case_error",
                 lost_prefix(id) + reason + "; scores" + repeats + ": " + scores, detail);
    } else {
      // The cause first: what a reader of the CI result asks first.
      std::string cause;
      if (first_failed != nullptr && first_failed->scores.cause != FailureCause::kNone) {
        cause = std::string(FailureCauseLabel(first_failed->scores.cause));
        const std::string why = FailureReason(*first_failed, case_pass);
        if (!why.empty()) cause += " (" + why + ")";
        cause += "; ";
        detail = "cause: " + cause.substr(0, cause.size() - 2) + "\n" + detail;
      }
      cases.Fail("failure", is_lost ? "plumb.lost" : "plumb.case_failed",
                 lost_prefix(id) + cause + "scores" + repeats + ": " + scores, detail);
    }
  }
  // Lost cases the candidate does not have at all (drift.h: counted as lost).
  if (drift != nullptr) {
    for (const CaseChange& c : drift->lost) {
      if (by_id.count(c.id) > 0) continue;
      cases.Open(classname, c.id, 0);
      cases.Fail("failure", "plumb.lost", "lost (passed in the base run): " + c.cand_error,
                 c.cand_error + "\n");
    }
  }
  AddThresholdCases(record, classname + ".floors", &cases);
  if (drift != nullptr) AddGateCases(*drift, classname + ".gate", &cases);

  std::string properties;
  auto property = [&](const std::string& name, const std::string& value) {
    properties += fmt::format("      <property name=\"{}\" value=\"{}\"/>\n", XmlEscape(name),
                              XmlEscape(value));
  };
  property("pipeline", pipeline);
  property("suite_hash", JsonString(suite_json, "hash"));
  property("corpus_fingerprint", JsonString(record, "corpus_fingerprint"));
  if (record.contains("labels") && record["labels"].is_object()) {
    for (auto it = record["labels"].begin(); it != record["labels"].end(); ++it) {
      property("label." + it.key(), it->is_string() ? it->get<std::string>() : it->dump());
    }
  }
  if (drift != nullptr) {
    // The comparison's gate decides: it also names the candidate's broken floors.
    property("verdict", drift->gate.reason);
    property("exit_code", std::to_string(drift->gate.exit_code));
  } else if (record.contains("verdict") && record["verdict"].is_object()) {
    property("verdict", JsonString(record["verdict"], "reason"));
  }
  // JUnit's timestamp is an ISO 8601 date-time without a zone designator.
  std::string timestamp = JsonString(record, "started_at");
  if (!timestamp.empty() && timestamp.back() == 'Z') timestamp.pop_back();

  std::string out = "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n";
  out += fmt::format(
      "<testsuites name=\"plumb\" tests=\"{}\" failures=\"{}\" errors=\"{}\" time=\"{:.3f}\">\n",
      cases.tests, cases.failures, cases.errors, cases.seconds);
  out += fmt::format(
      "  <testsuite name=\"{}\" tests=\"{}\" failures=\"{}\" errors=\"{}\" skipped=\"{}\" "
      "time=\"{:.3f}\" timestamp=\"{}\">\n",
      XmlEscape(classname), cases.tests, cases.failures, cases.errors, cases.skipped, cases.seconds,
      XmlEscape(timestamp));
  out += "    <properties>\n" + properties + "    </properties>\n";
  out += cases.xml;
  out += "  </testsuite>\n</testsuites>\n";
  return out;
}

bool WriteJUnitReport(const LoadedRun& run, const std::string& path, std::string* error,
                      const DriftReport* drift) {
  return WriteFileAtomically(path, FormatJUnitReport(run, drift), error);
}

}  // namespace plumb
