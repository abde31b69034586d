#include "runner/report/markdown_report.h"

#include <fmt/format.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <map>

#include "metrics/utf8.h"
#include "runner/run/calibration.h"
#include "runner/report/freshness_report.h"
#include "runner/run/failure_reason.h"
#include "runner/run/run_failures.h"
#include "runner/run/run_record.h"

namespace plumb {
namespace {

constexpr size_t kTopCases = 10;

std::string Fixed(double x, int digits) {
  if (!std::isfinite(x)) return "n/a";
  return fmt::format("{:.{}f}", x, digits);
}

std::string Signed(double x) {
  if (!std::isfinite(x)) return "n/a";
  return fmt::format("{:+.4f}", x);
}

std::string IntervalText(const metrics::Interval& i, bool sign) {
  if (!std::isfinite(i.low) || !std::isfinite(i.high)) return "n/a";
  return sign ? fmt::format("[{:+.4f}, {:+.4f}]", i.low, i.high)
              : fmt::format("[{:.3f}, {:.3f}]", i.low, i.high);
}

std::string PValue(double p) {
  if (!std::isfinite(p)) return "n/a";
  return p < 1e-4 ? fmt::format("{:.1e}", p) : fmt::format("{:.4f}", p);
}

/// An identifier (metric id, case id, suite, tag) as inline code when it is made of characters
/// that cannot end a code span or form markup ([A-Za-z0-9._:@/-], as suites require of ids);
/// otherwise as escaped text.
std::string Code(const std::string& id) {
  const bool plain = !id.empty() && id.size() <= 80 &&
                     id.find_first_not_of(
                         "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ"
                         "0123456789._:@/-") == std::string::npos;
  return plain ? "`" + id + "`" : MarkdownText(id, 80);
}

std::string LabelsText(const std::map<std::string, std::string>& labels) {
  std::string out;
  for (const auto& [key, value] : labels) {
    out += (out.empty() ? "" : ", ") + MarkdownText(key + "=" + value, 60);
  }
  return out;
}

std::string JsonString(const nlohmann::json& object, const char* key) {
  if (!object.is_object() || !object.contains(key) || !object[key].is_string()) return "";
  return object[key].get<std::string>();
}

const nlohmann::json& JsonAt(const nlohmann::json& object, const char* key) {
  static const nlohmann::json kNull;
  if (!object.is_object() || !object.contains(key)) return kNull;
  return object[key];
}

double JsonNumber(const nlohmann::json& object, const char* key) {
  const nlohmann::json& v = JsonAt(object, key);
  return v.is_number() ? v.get<double>() : std::nan("");
}

std::string Count(const nlohmann::json& object, const char* key) {
  const nlohmann::json& v = JsonAt(object, key);
  return v.is_number() ? fmt::format("{}", v.get<int64_t>()) : "n/a";
}

std::string AnswerText(const std::optional<std::string>& answer, const std::string& error) {
  if (!error.empty()) return "*error:* " + MarkdownText(error, 80);
  if (!answer) return "*abstained*";
  return MarkdownText(*answer, 80);
}

/// "`ten minutes` / `10 minutes`", or "*abstain*" for an abstention case's empty gold.
std::string GoldAnswers(const std::vector<std::string>& answers) {
  if (answers.empty()) return "*abstain*";
  std::string out;
  for (const std::string& a : answers) out += (out.empty() ? "" : " / ") + MarkdownText(a, 40);
  return out;
}

std::vector<std::string> GoldOf(const nlohmann::json* gold) {
  std::vector<std::string> out;
  if (gold == nullptr || !gold->is_object() || !gold->contains("answers")) return out;
  for (const nlohmann::json& a : (*gold)["answers"]) {
    if (a.is_string()) out.push_back(a.get<std::string>());
  }
  return out;
}

/// At most `limit` of `items` (each with its cause, in the order they should be read), chosen
/// across causes: the first of each cause, then the second of each, and so on, the causes taken
/// most common first; returned grouped by cause in that order. So ten shown cases of a run with
/// 60 reading misses and 3 retrieval misses show the retrieval misses too.
template <typename T>
std::vector<T> AcrossCauses(const std::vector<T>& items, FailureCause (*cause_of)(const T&),
                            size_t limit) {
  std::map<FailureCause, std::vector<T>> groups;
  for (const T& item : items) groups[cause_of(item)].push_back(item);
  std::vector<const std::vector<T>*> order;
  for (const auto& entry : groups) order.push_back(&entry.second);
  std::stable_sort(order.begin(), order.end(),
                   [](const auto* a, const auto* b) { return a->size() > b->size(); });
  std::vector<size_t> taken(order.size(), 0);
  size_t total = 0;
  for (size_t round = 0; total < limit; ++round) {
    bool any = false;
    for (size_t g = 0; g < order.size() && total < limit; ++g) {
      if (round >= order[g]->size()) continue;
      taken[g] = round + 1;
      ++total;
      any = true;
    }
    if (!any) break;
  }
  std::vector<T> out;
  for (size_t g = 0; g < order.size(); ++g) {
    out.insert(out.end(), order[g]->begin(),
               order[g]->begin() + static_cast<std::ptrdiff_t>(taken[g]));
  }
  return out;
}

/// The cause breakdown as a table: cause, cases, share of all cases, Wilson 95% interval.
std::string CauseTable(const CauseBreakdown& b) {
  if (b.failed == 0) return fmt::format("All {} cases passed.\n", b.cases);
  std::string out =
      fmt::format("**Why {} of {} cases failed:** {}\n\n", b.failed, b.cases, CauseCountsText(b));
  out += "| cause | cases | share | 95% interval |\n|:--|--:|--:|:--|\n";
  for (const CauseCount& c : b.causes) {
    out += fmt::format("| {} | {} | {:.3f} | {} |\n", FailureCauseLabel(c.cause), c.count, c.share,
                       IntervalText(c.interval, false));
  }
  return out;
}

/// The marker a CI step looks for to update its one comment instead of adding another: the
/// same for a run's and a drift's summary of one suite and (candidate) pipeline. Names keep
/// [A-Za-z0-9._:/-] with no "--", anything else becomes "_", so the comment cannot be closed
/// early.
std::string MarkerLine(const std::string& suite, const std::string& pipeline) {
  auto clean = [](const std::string& name) {
    std::string out;
    for (char c : name) {
      const bool keep = std::isalnum(static_cast<unsigned char>(c)) || c == '.' || c == '_' ||
                        c == ':' || c == '/' || c == '-';
      if (c == '-' && !out.empty() && out.back() == '-') continue;
      out += keep ? c : '_';
    }
    return out.substr(0, 80);
  };
  return fmt::format("<!-- plumb:report suite={} pipeline={} -->\n", clean(suite), clean(pipeline));
}

}  // namespace

std::string MarkdownText(std::string_view text, size_t max_code_points) {
  static const std::string kEscaped = "\\`*_{}[]()<>#+-!|~&$^=";
  std::string out;
  size_t pos = 0, count = 0;
  while (pos < text.size()) {
    if (count == max_code_points) {
      out += "…";
      break;
    }
    const char32_t cp = metrics::NextCodePoint(text, &pos);
    ++count;
    if (cp < 0x20 || (cp >= 0x7F && cp < 0xA0) || cp == 0x2028 || cp == 0x2029) {
      out += ' ';
    } else if (cp < 0x80 && kEscaped.find(static_cast<char>(cp)) != std::string::npos) {
      out += '\\';
      out += static_cast<char>(cp);
    } else if (cp == '@') {
      out += "@\u2060";
    } else {
      metrics::AppendUtf8(cp, &out);
    }
  }
  return out;
}

std::string FormatRunMarkdown(const LoadedRun& run) {
  const nlohmann::json& r = run.record;
  const nlohmann::json& verdict = JsonAt(r, "verdict");
  const nlohmann::json& aggregates = JsonAt(r, "aggregates");
  const nlohmann::json& exit_code = JsonAt(verdict, "exit_code");
  const int code = exit_code.is_number_integer() ? exit_code.get<int>() : -1;
  std::string out;
  out +=
      fmt::format("### plumb: {} / {} — exit {}\n\n", Code(JsonString(JsonAt(r, "suite"), "name")),
                  Code(JsonString(JsonAt(r, "pipeline"), "name")), code);
  out += fmt::format("**{}** (exit {}): {}\n\n", code == 0 ? "PASS" : "FAIL", code,
                     MarkdownText(JsonString(verdict, "reason"), 300));
  out += fmt::format("{} cases, {} errored, {} passed", Count(aggregates, "cases"),
                     Count(aggregates, "errored"), Count(aggregates, "passed"));
  std::map<std::string, std::string> labels;
  const nlohmann::json& label_json = JsonAt(r, "labels");
  if (label_json.is_object()) {
    for (auto it = label_json.begin(); it != label_json.end(); ++it) {
      labels[it.key()] = it->is_string() ? it->get<std::string>() : it->dump();
    }
  }
  if (!labels.empty()) out += " · labels: " + LabelsText(labels);
  out += "\n\n";
  out += CauseTable(RunCauseBreakdown(run)) + "\n";

  // Floors and ceilings by metric, for the table's last column.
  std::map<std::string, std::string> floors;
  const nlohmann::json& thresholds = JsonAt(r, "thresholds");
  if (thresholds.is_array()) {
    for (const nlohmann::json& t : thresholds) {
      if (!JsonString(t, "tag").empty()) continue;
      const bool held = JsonAt(t, "held").is_boolean() && JsonAt(t, "held").get<bool>();
      floors[JsonString(t, "metric")] =
          fmt::format("{} {} {}", JsonString(t, "kind") == "ceiling" ? "ceiling" : "floor",
                      fmt::format("{:.4g}", JsonNumber(t, "limit")), held ? "held" : "**broken**");
    }
  }
  const nlohmann::json& table = JsonAt(aggregates, "metrics");
  const std::map<std::string, std::string> grade_notes = GradeCalibrationNotes(r);
  std::vector<std::string> names;
  if (table.is_object()) {
    for (auto it = table.begin(); it != table.end(); ++it) names.push_back(it.key());
  }
  out += "| metric | mean | 95% interval | n | floor / ceiling |\n|:--|--:|:--|--:|:--|\n";
  for (const std::string& metric : MetricDisplayOrder(names)) {
    const nlohmann::json& m = table[metric];
    const nlohmann::json& interval = JsonAt(m, "interval");
    metrics::Interval i{std::nan(""), std::nan("")};
    if (interval.is_array() && interval.size() == 2 && interval[0].is_number() &&
        interval[1].is_number()) {
      i = {interval[0].get<double>(), interval[1].get<double>()};
    }
    auto floor = floors.find(metric);
    std::string name = Code(metric);
    if (metric.rfind("grade.", 0) == 0) {
      auto note = grade_notes.find(metric);
      name += " (" + (note != grade_notes.end() ? note->second : std::string("uncalibrated")) + ")";
    }
    out += fmt::format("| {} | {} | {} | {} | {} |\n", name, Fixed(JsonNumber(m, "mean"), 3),
                       IntervalText(i, false), Count(m, "n"),
                       floor == floors.end() ? "" : floor->second);
  }
  for (const auto& [metric, text] : floors) {
    if (metric.rfind("latency_", 0) == 0 || metric == "error_rate") {
      out += fmt::format("| {} | | | | {} |\n", Code(metric), text);
    }
  }
  const nlohmann::json& latency = JsonAt(aggregates, "latency_ms");
  if (JsonNumber(latency, "n") > 0) {
    // A percentile a timed-out call reaches is a lower bound.
    auto at_least = [&](const char* key) {
      const nlohmann::json& keys = JsonAt(latency, "at_least");
      return keys.is_array() && std::find(keys.begin(), keys.end(), key) != keys.end() ? "at least "
                                                                                       : "";
    };
    out += fmt::format("\nLatency: p50 {}{} ms, p95 {}{} ms (n {}", at_least("p50"),
                       Fixed(JsonNumber(latency, "p50"), 1), at_least("p95"),
                       Fixed(JsonNumber(latency, "p95"), 1), Count(latency, "n"));
    if (JsonNumber(latency, "lower_bounds") > 0) {
      out +=
          fmt::format(", {} timed out, counted at their timeout", Count(latency, "lower_bounds"));
    }
    out += ")\n";
  }
  const nlohmann::json& ttft = JsonAt(aggregates, "ttft_ms");
  if (JsonNumber(ttft, "n") > 0) {
    out += fmt::format("\nTime to first token: p50 {} ms, p95 {} ms (n {})\n",
                       Fixed(JsonNumber(ttft, "p50"), 1), Fixed(JsonNumber(ttft, "p95"), 1),
                       Count(ttft, "n"));
  }
  const nlohmann::json& cost = JsonAt(aggregates, "cost");
  if (JsonNumber(cost, "items") > 0) {
    const std::string currency = MarkdownText(JsonString(cost, "currency"), 16);
    const std::string unit = currency.empty() ? "" : " " + currency;
    const nlohmann::json& i = JsonAt(cost, "interval");
    const std::string interval =
        i.is_array() && i.size() == 2 && i[0].is_number() && i[1].is_number()
            ? fmt::format("[{:.6g}, {:.6g}]", i[0].get<double>(), i[1].get<double>())
            : "n/a";
    out += fmt::format("\nCost: {:.6g}{} in all over {} replies, per case mean {:.6g}{} {}\n",
                       JsonNumber(cost, "total"), unit, Count(cost, "items"),
                       JsonNumber(cost, "mean"), unit, interval);
  }
  out += FreshnessMarkdown(FreshnessFromJson(JsonAt(aggregates, "freshness")));
  const nlohmann::json& warmup = JsonAt(aggregates, "warmup");
  if (JsonNumber(warmup, "n") > 0) {
    const bool first_call = JsonString(warmup, "signal") == "first_call";
    out += fmt::format(
        "\nWarm-up: {} {}, mean {} ms, max {} ms{}\n", Count(warmup, "n"),
        first_call ? "first calls (start-up included, kept out of the latency)"
                   : "workers ready (" + JsonString(warmup, "signal") + ")",
        Fixed(JsonNumber(warmup, "mean_ms"), 1), Fixed(JsonNumber(warmup, "max_ms"), 1),
        JsonNumber(warmup, "restarts") > 0 ? fmt::format(", {} restarts", Count(warmup, "restarts"))
                                           : std::string());
  }
  if (thresholds.is_array()) {
    std::string tag_floors;
    for (const nlohmann::json& t : thresholds) {
      if (JsonString(t, "tag").empty()) continue;
      const bool held = JsonAt(t, "held").is_boolean() && JsonAt(t, "held").get<bool>();
      tag_floors += fmt::format("- tag {} {}: {} ({} {:.4g}) {}\n", Code(JsonString(t, "tag")),
                                Code(JsonString(t, "metric")), Fixed(JsonNumber(t, "value"), 3),
                                JsonString(t, "kind") == "ceiling" ? "ceiling" : "floor",
                                JsonNumber(t, "limit"), held ? "held" : "**broken**");
    }
    if (!tag_floors.empty()) out += "\n" + tag_floors;
  }

  // Failed cases: chosen across causes, and within a cause errored first, then by token F1,
  // lowest first.
  struct Failed {
    std::string id;
    const CaseRecord* record;
  };
  std::vector<Failed> failed;
  std::map<std::string, const CaseRecord*> first_failure;
  for (const CaseRecord& c : run.records) {
    if (c.scores.pass || run.Gold(c.id) == nullptr) continue;
    auto [it, inserted] = first_failure.emplace(c.id, &c);
    if (!inserted && c.repeat < it->second->repeat) it->second = &c;
  }
  for (const auto& [id, record] : first_failure) failed.push_back({id, record});
  auto f1 = [](const CaseRecord* c) {
    auto it = c->scores.values.find("token_f1");
    return it == c->scores.values.end() ? 0.0 : it->second;
  };
  std::sort(failed.begin(), failed.end(), [&](const Failed& a, const Failed& b) {
    const bool ea = !a.record->error.empty(), eb = !b.record->error.empty();
    if (ea != eb) return ea;
    if (f1(a.record) != f1(b.record)) return f1(a.record) < f1(b.record);
    return a.id < b.id;
  });
  if (!failed.empty()) {
    const std::map<std::string, double> case_pass = run.CasePass();
    const std::vector<Failed> shown = AcrossCauses<Failed>(
        failed, [](const Failed& f) { return f.record->scores.cause; }, kTopCases);
    out += fmt::format("\n<details><summary>Failed cases: {}{}</summary>\n\n", failed.size(),
                       failed.size() > shown.size()
                           ? fmt::format(" ({} shown, across causes)", shown.size())
                           : "");
    out += "| case | cause | gold | answer | reason |\n|:--|:--|:--|:--|:--|\n";
    for (const Failed& f : shown) {
      const CaseRecord& c = *f.record;
      out +=
          fmt::format("| {} | {} | {} | {} | {} |\n", Code(f.id), FailureCauseLabel(c.scores.cause),
                      GoldAnswers(GoldOf(run.Gold(f.id))), AnswerText(c.parsed.answer, c.error),
                      MarkdownText(FailureReason(c, case_pass), 100));
    }
    out += "\n</details>\n";
  }
  out += "\n" + MarkerLine(JsonString(JsonAt(r, "suite"), "name"),
                           JsonString(JsonAt(r, "pipeline"), "name"));
  return out;
}

std::string FormatDriftMarkdown(const DriftReport& r) {
  std::string out;
  const DriftGate& g = r.gate;
  out += fmt::format("### plumb drift: {} — exit {}\n\n", Code(r.base.suite_name), g.exit_code);
  out += fmt::format("**{}** (exit {}): {}\n\n", g.exit_code == 0 ? "PASS" : "FAIL", g.exit_code,
                     MarkdownText(g.reason, 400));
  auto run_text = [](const char* role, const RunIdentity& id) {
    std::string s = fmt::format("{} {}", role, Code(id.pipeline));
    if (!id.labels.empty()) s += " (" + LabelsText(id.labels) + ")";
    return s;
  };
  out += run_text("Base", r.base) + " → " + run_text("candidate", r.cand) + "  \n";
  if (r.missing_counted) {
    out += fmt::format(
        "{} paired cases, of which {} missing from the candidate and counted as lost; {} only in "
        "candidate, {} with changed gold (left out)\n",
        r.paired.size(), r.only_in_base.size(), r.only_in_cand.size(), r.gold_changed.size());
  } else {
    out += fmt::format(
        "{} paired cases; {} only in base, {} only in candidate, {} with changed gold "
        "(left out)\n",
        r.paired.size(), r.only_in_base.size(), r.only_in_cand.size(), r.gold_changed.size());
  }
  // Lost cases first: what a reviewer of a regression reads first.
  auto case_table = [&](const char* title, const std::vector<CaseChange>& cases, bool lost) {
    if (cases.empty()) return;
    const std::vector<CaseChange> shown = AcrossCauses<CaseChange>(
        cases,
        lost ? +[](const CaseChange& c) { return c.cand_cause; }
             : +[](const CaseChange& c) { return c.base_cause; },
        kTopCases);
    out += fmt::format(
        "\n#### {} ({}{})\n\n", title, cases.size(),
        cases.size() > shown.size() ? fmt::format("; {} shown, across causes", shown.size()) : "");
    out += fmt::format(
        "| case | {} | Δ correct | gold | base answer | candidate answer | reason |\n"
        "|:--|:--|--:|:--|:--|:--|:--|\n",
        lost ? "cause" : "base's cause");
    for (const CaseChange& c : shown) {
      auto it = c.deltas.find("correct");
      out += fmt::format("| {} | {} | {} | {} | {} | {} | {} |\n", Code(c.id),
                         FailureCauseLabel(lost ? c.cand_cause : c.base_cause),
                         it == c.deltas.end() ? std::string() : Signed(it->second),
                         GoldAnswers(c.gold), AnswerText(c.base_answer, c.base_error),
                         AnswerText(c.cand_answer, c.cand_error),
                         MarkdownText(lost ? c.cand_reason : c.base_reason, 100));
    }
  };
  if (!r.lost.empty()) {
    const std::string counts = CauseCountsText(r.lost_causes);
    out += fmt::format("\n**Lost {}{}**{}\n", r.lost.size(), counts.empty() ? "." : ":",
                       counts.empty() ? "" : " " + counts);
    case_table("Lost cases: pass → fail", r.lost, true);
  }

  std::vector<std::string> changed;
  if (r.suite_changed) changed.push_back("suite");
  if (r.corpus_changed) changed.push_back("corpus");
  if (r.pipeline_config_changed) changed.push_back("pipeline config");
  if (!changed.empty()) {
    std::string list;
    for (const std::string& c : changed) list += (list.empty() ? "" : ", ") + c;
    out += "\n> Changed between the runs: " + list + ".\n";
  }

  out +=
      "\n| metric | base | cand | delta | 95% interval | p | verdict |\n"
      "|:--|--:|--:|--:|:--|--:|:--|\n";
  for (const MetricDrift& m : r.metrics) {
    std::string verdict = VerdictName(m.verdict);
    if (m.verdict == Verdict::kTooFewCases) {
      verdict += fmt::format(" ({} more needed)", m.needed_more);
    }
    out += fmt::format("| {}{} | {} | {} | {} | {} | {} | {} |\n", Code(m.metric),
                       m.gated ? " (gated)" : "", Fixed(m.base_mean, 3), Fixed(m.cand_mean, 3),
                       Signed(m.delta), IntervalText(m.interval, true), PValue(m.p_holm),
                       m.verdict == Verdict::kRegressed || m.verdict == Verdict::kImproved
                           ? "**" + verdict + "**"
                           : verdict);
  }
  out += fmt::format(
      "\np: exact McNemar (0/1 metrics) or Wilcoxon signed-rank; family correction: {}.\n",
      MarkdownText(r.correction, 300));
  if (r.latency_p50.available) {
    out += fmt::format("\nLatency (n {}): p50 ×{} {}, p95 ×{} {}\n", r.latency_n,
                       Fixed(r.latency_p50.ratio, 3), IntervalText(r.latency_p50.interval, false),
                       Fixed(r.latency_p95.ratio, 3), IntervalText(r.latency_p95.interval, false));
  }
  if (r.latency_gate.gated) {
    const LatencyGateVerdict& g = r.latency_gate;
    out += fmt::format("\n{} (gated): {}\n", Code(kLatencyGate),
                       !g.measured ? std::string("not measured")
                       : g.regressed
                           ? fmt::format("**regressed**: the p95 ratio's interval lies above ×{}",
                                         Fixed(g.limit, 3))
                           : fmt::format("steady: the p95 ratio's interval reaches ×{} or below",
                                         Fixed(g.limit, 3)));
  }
  if (r.ttft_p50.available) {
    out += fmt::format("\nTime to first token (n {}): p50 ×{} {}, p95 ×{} {}\n", r.ttft_n,
                       Fixed(r.ttft_p50.ratio, 3), IntervalText(r.ttft_p50.interval, false),
                       Fixed(r.ttft_p95.ratio, 3), IntervalText(r.ttft_p95.interval, false));
  }
  for (const auto& [label, a] :
       {std::pair<const char*, const AmountDrift*>{"Tokens in per case", &r.input_tokens},
        {"Tokens out per case", &r.output_tokens},
        {"Cost per case", &r.cost}}) {
    if (!a->available) continue;
    const std::string unit =
        a == &r.cost && !r.cost_currency.empty() ? " " + MarkdownText(r.cost_currency, 16) : "";
    out += fmt::format("\n{} (n {}): {} → {}{}, ×{} {}\n", label, a->n,
                       fmt::format("{:.6g}", a->base_mean), fmt::format("{:.6g}", a->cand_mean),
                       unit, Fixed(a->ratio, 3), IntervalText(a->interval, false));
  }
  for (const RefreshDrift& d : r.refreshes) {
    out += fmt::format("\nRefresh after update `{}`: {} ms -> {} ms (x{})\n", d.update,
                       Fixed(d.base_ms, 1), Fixed(d.cand_ms, 1), Fixed(d.ratio, 3));
  }
  if (r.warmup.available) {
    out += fmt::format("\nWarm-up: mean {} → {} ms, ×{} {} (workers {} / {})\n",
                       Fixed(r.warmup.base_mean_ms, 1), Fixed(r.warmup.cand_mean_ms, 1),
                       Fixed(r.warmup.ratio, 3), IntervalText(r.warmup.interval, false),
                       r.warmup.base_n, r.warmup.cand_n);
  }
  std::string mde;
  for (const MetricDrift& m : r.metrics) {
    if (!m.gated) continue;
    auto it = r.min_detectable_effect.find(m.metric);
    if (it == r.min_detectable_effect.end()) continue;
    mde += fmt::format("{}{} {} (n {})", mde.empty() ? "" : ", ", Code(m.metric),
                       std::isfinite(it->second) ? Fixed(it->second, 4) : std::string("n/a"), m.n);
  }
  if (!mde.empty()) {
    out += fmt::format(
        "\nSmallest drop this gate catches with power 0.8: {}; verdicts also need |delta| ≥ "
        "{}.\n",
        mde, r.options.min_effect);
  }

  std::string tag_rows;
  int changed_tags = 0;
  for (const TagDrift& t : r.tags) {
    for (const MetricDrift& m : t.metrics) {
      if (m.verdict == Verdict::kSteady || m.verdict == Verdict::kTooFewCases) continue;
      if (++changed_tags > 20) continue;
      tag_rows += fmt::format("| {} | {} | {} | {} | {} | {} |\n", Code(t.tag), Code(m.metric),
                              Signed(m.delta), IntervalText(m.interval, true), PValue(m.p_holm),
                              VerdictName(m.verdict));
    }
  }
  if (changed_tags > 0) {
    out +=
        "\n| tag | metric | delta | 95% interval | p (Holm) | verdict |\n"
        "|:--|:--|--:|:--|--:|:--|\n" +
        tag_rows;
    if (changed_tags > 20) out += fmt::format("\n…and {} more tag results.\n", changed_tags - 20);
  } else if (!r.tags.empty()) {
    out += fmt::format("\nNo tag changed ({} tags, Holm-adjusted).\n", r.tags.size());
  }

  case_table("Gained cases: fail → pass", r.gained, false);
  if (!r.unstable.empty()) {
    out += fmt::format("\n{} case(s) unstable across repeats, first: {}\n", r.unstable.size(),
                       Code(r.unstable.front()));
  }
  out += "\n" + MarkerLine(r.base.suite_name, r.cand.pipeline);
  return out;
}

bool WriteRunMarkdown(const LoadedRun& run, const std::string& path, std::string* error) {
  return WriteFileAtomically(path, FormatRunMarkdown(run), error);
}

bool WriteDriftMarkdown(const DriftReport& report, const std::string& path, std::string* error) {
  return WriteFileAtomically(path, FormatDriftMarkdown(report), error);
}

}  // namespace plumb
