// The drift page of the HTML report (declared in runner/report/html_report.h): the verdict and the
// per-metric deltas first, then lost cases with base and candidate side by side, then gained
// ones, then the cases whose outcome did not change, folded.

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>
#include <set>

#include "runner/report/html_bounded_text.h"
#include "runner/report/html_case_card.h"
#include "runner/report/html_escape.h"
#include "runner/report/html_interval_bar.h"
#include "runner/report/html_page_assets.h"
#include "runner/report/html_report.h"
#include "runner/report/html_report_parts.h"
#include "runner/report/source_excerpt.h"
#include "runner/report/svg_delta_chart.h"
#include "runner/report/svg_latency_chart.h"
#include "runner/report/text_language.h"
#include "runner/run/cause_breakdown.h"
#include "runner/run/run_record.h"

namespace plumb {
namespace {

enum class DriftStatus { kLost, kGained, kFailing, kPassing };

const char* DriftStatusName(DriftStatus s) {
  switch (s) {
    case DriftStatus::kLost:
      return "lost";
    case DriftStatus::kGained:
      return "gained";
    case DriftStatus::kFailing:
      return "failing";
    case DriftStatus::kPassing:
      return "passing";
  }
  return "failing";
}

struct PairedCase {
  std::string id;
  DriftStatus status = DriftStatus::kFailing;
  const nlohmann::json* gold = nullptr;  // the candidate's (equal to the base's when paired)
  const CaseRecord* base = nullptr;
  const CaseRecord* cand = nullptr;
  std::map<std::string, double> deltas;
  int64_t line = 0;
};

std::map<std::string, std::vector<const CaseRecord*>> RecordsById(const LoadedRun& run) {
  std::map<std::string, std::vector<const CaseRecord*>> out;
  for (const CaseRecord& r : run.records) out[r.id].push_back(&r);
  return out;
}

std::set<std::string> IdSet(const nlohmann::json& drift, const char* key) {
  std::set<std::string> out;
  auto it = drift.find(key);
  if (it == drift.end() || !it->is_array()) return out;
  for (const nlohmann::json& item : *it) {
    if (item.is_string()) {
      out.insert(item.get<std::string>());
    } else if (item.is_object() && item.value("id", nlohmann::json()).is_string()) {
      out.insert(item["id"].get<std::string>());
    }
  }
  return out;
}

std::map<std::string, std::map<std::string, double>> DeltasOf(const nlohmann::json& drift,
                                                              const char* key) {
  std::map<std::string, std::map<std::string, double>> out;
  auto it = drift.find(key);
  if (it == drift.end() || !it->is_array()) return out;
  for (const nlohmann::json& item : *it) {
    if (!item.is_object() || !item.value("id", nlohmann::json()).is_string()) continue;
    std::map<std::string, double>& deltas = out[item["id"].get<std::string>()];
    const nlohmann::json d = item.value("deltas", nlohmann::json::object());
    if (!d.is_object()) continue;
    for (const auto& [metric, value] : d.items()) {
      if (value.is_number()) deltas[metric] = value.get<double>();
    }
  }
  return out;
}

std::vector<PairedCase> PairCases(const nlohmann::json& drift, const LoadedRun& base,
                                  const LoadedRun& cand) {
  const std::set<std::string> excluded_gold = IdSet(drift, "gold_changed");
  const std::set<std::string> lost = IdSet(drift, "lost");
  const std::set<std::string> gained = IdSet(drift, "gained");
  auto lost_deltas = DeltasOf(drift, "lost");
  auto gained_deltas = DeltasOf(drift, "gained");
  const auto base_records = RecordsById(base);
  const auto cand_records = RecordsById(cand);
  std::vector<PairedCase> out;
  for (const auto& [id, cand_list] : cand_records) {
    auto b = base_records.find(id);
    if (b == base_records.end() || excluded_gold.count(id) > 0) continue;
    PairedCase p;
    p.id = id;
    p.base = RepresentativeRecord(b->second);
    p.cand = RepresentativeRecord(cand_list);
    p.gold = cand.Gold(id);
    if (p.gold == nullptr) p.gold = base.Gold(id);
    if (p.gold != nullptr) p.line = p.gold->value("line", int64_t{0});
    const bool base_pass = StatusOf(b->second) == CaseStatus::kPassed;
    const bool cand_pass = StatusOf(cand_list) == CaseStatus::kPassed;
    if (lost.count(id) > 0) {
      p.status = DriftStatus::kLost;
      p.deltas = lost_deltas[id];
    } else if (gained.count(id) > 0) {
      p.status = DriftStatus::kGained;
      p.deltas = gained_deltas[id];
    } else {
      p.status = cand_pass && base_pass ? DriftStatus::kPassing : DriftStatus::kFailing;
      if (base_pass != cand_pass) p.status = cand_pass ? DriftStatus::kGained : DriftStatus::kLost;
    }
    if (p.deltas.empty()) {
      for (const auto& [metric, value] : p.cand->scores.values) {
        auto bv = p.base->scores.values.find(metric);
        if (bv != p.base->scores.values.end()) p.deltas[metric] = value - bv->second;
      }
    }
    out.push_back(std::move(p));
  }
  std::stable_sort(out.begin(), out.end(),
                   [](const PairedCase& a, const PairedCase& b) { return a.line < b.line; });
  return out;
}

std::string OrDash(const std::optional<double>& v) {
  return v ? FormatScore(*v) : std::string("\xE2\x80\x94");
}

void AppendDelta(std::string* out, double delta) {
  out->append(delta < 0   ? "<span class=\"delta neg\">"
              : delta > 0 ? "<span class=\"delta pos\">"
                          : "<span class=\"delta\">");
  out->append(FormatSignedScore(delta));
  out->append("</span>");
}

// A scalar from the drift JSON for display: numbers as scores (three decimals), strings as they
// are, anything else as compact JSON.
std::string Display(const nlohmann::json& v) {
  if (v.is_number()) return FormatScore(v.get<double>());
  if (v.is_string()) return v.get<std::string>();
  return JsonText(v);
}

void AppendRunFacts(std::string* out, const char* term, const nlohmann::json& side) {
  out->append("<dt>");
  out->append(term);
  out->append("</dt><dd>");
  AppendHtmlText(out, JsonString(side, "pipeline"));
  out->append(" \xC2\xB7 ");
  out->append("<span class=\"labels\">");
  AppendLabels(out, side.value("labels", nlohmann::json::object()));
  out->append("</span> \xC2\xB7 ");
  AppendHtmlText(out, JsonString(side, "started_at"));
  out->append(" \xC2\xB7 <code>");
  AppendHtmlText(out, JsonString(side, "dir"));
  out->append("</code></dd>");
}

std::string ChangedWords(const nlohmann::json& changed) {
  if (changed.is_object()) {
    std::vector<std::string> names;
    for (const auto& [what, flag] : changed.items()) {
      if (flag.is_boolean() ? flag.get<bool>() : !flag.is_null()) names.push_back(what);
    }
    if (names.empty()) return "nothing: same suite, corpus and pipeline config";
    std::string s;
    for (size_t i = 0; i < names.size(); ++i) s += (i > 0 ? ", " : "") + names[i];
    return s + " changed between the runs";
  }
  if (changed.is_array()) {
    std::string s;
    for (const nlohmann::json& c : changed) s += (s.empty() ? "" : ", ") + Display(c);
    return s.empty() ? "nothing" : s + " changed between the runs";
  }
  return changed.is_null() ? "not recorded" : Display(changed);
}

// A run's floors and ceilings that did not hold, keyed by kind, tag and metric, with the words
// that name each ("tag safety correct 0.240 < 0.600").
std::vector<std::pair<std::string, std::string>> BrokenLimits(const LoadedRun& run) {
  std::vector<std::pair<std::string, std::string>> out;
  for (const nlohmann::json& t : run.record.value("thresholds", nlohmann::json::array())) {
    if (!t.is_object() || t.value("held", true)) continue;
    const bool ceiling = JsonString(t, "kind") == "ceiling";
    const std::string tag = JsonString(t, "tag");
    const std::string scope = (tag.empty() ? "" : "tag " + tag + " ") + JsonString(t, "metric");
    const std::optional<double> value = JsonNumber(t, "value");
    out.emplace_back((ceiling ? "c|" : "f|") + tag + "|" + JsonString(t, "metric"),
                     scope + " " +
                         (value ? FormatScore(*value) + (ceiling ? " > " : " < ") +
                                      FormatScore(t.value("limit", 0.0))
                                : std::string("not measured")));
  }
  return out;
}

// "floor", "ceilings", "floors and ceilings" for the keys of BrokenLimits.
std::string LimitWord(const std::vector<std::string>& keys) {
  size_t ceilings = 0;
  for (const std::string& k : keys) ceilings += k[0] == 'c' ? 1 : 0;
  const size_t floors = keys.size() - ceilings;
  const char* s = keys.size() == 1 ? "" : "s";
  if (ceilings == 0) return std::string("floor") + s;
  if (floors == 0) return std::string("ceiling") + s;
  return "floors and ceilings";
}

// The candidate's broken floors and ceilings set against the base's: the same ones, new ones,
// or none. Empty `chip` when the candidate broke none.
struct LimitsLine {
  std::string chip;
  std::string words;
};

LimitsLine CompareLimits(const LoadedRun& base, const LoadedRun& cand) {
  const auto b = BrokenLimits(base), c = BrokenLimits(cand);
  std::set<std::string> base_keys;
  for (const auto& [key, words] : b) base_keys.insert(key);
  std::vector<std::string> same, fresh;
  std::string same_words, fresh_words;
  for (const auto& [key, words] : c) {
    const bool in_base = base_keys.count(key) > 0;
    (in_base ? same : fresh).push_back(key);
    std::string& list = in_base ? same_words : fresh_words;
    list += (list.empty() ? "" : ", ") + words;
  }
  const bool any_limit = !cand.record.value("thresholds", nlohmann::json::array()).empty();
  if (c.empty()) {
    if (!any_limit) return {"", "the candidate sets no floors or ceilings."};
    return {"", std::string("the candidate holds every floor and ceiling") +
                    (b.empty() ? std::string(", as the base did.")
                               : "; the base broke " + std::to_string(b.size()) + ".")};
  }
  if (fresh.empty() && same.size() == base_keys.size()) {
    return {"Same " + LimitWord(same) + " broken as base",
            "the candidate breaks the same " + std::to_string(same.size()) + " " + LimitWord(same) +
                " as the base: " + same_words + "."};
  }
  std::string words;
  if (!fresh.empty()) {
    words = "the candidate breaks " + std::to_string(fresh.size()) + " " + LimitWord(fresh) +
            " the base held: " + fresh_words;
  }
  if (!same.empty()) {
    words += (words.empty() ? "the candidate breaks " : "; and ") + std::to_string(same.size()) +
             " " + LimitWord(same) + " the base broke too: " + same_words;
  }
  std::set<std::string> cand_keys;
  for (const auto& [key, text] : c) cand_keys.insert(key);
  std::vector<std::string> base_only;
  std::string base_only_words;
  for (const auto& [key, text] : b) {
    if (cand_keys.count(key) > 0) continue;
    base_only.push_back(key);
    base_only_words += (base_only_words.empty() ? "" : ", ") + text;
  }
  if (!base_only.empty()) {
    words += "; the base also broke " + std::to_string(base_only.size()) + " " +
             LimitWord(base_only) + " the candidate holds: " + base_only_words;
  }
  return {fresh.empty() ? "Fewer broken than base" : "New " + LimitWord(fresh) + " broken",
          words + "."};
}

void AppendMasthead(std::string* out, const nlohmann::json& drift, const LoadedRun& base,
                    const LoadedRun& cand, const std::vector<PairedCase>& cases) {
  const nlohmann::json gate = drift.value("gate", nlohmann::json::object());
  const int code = static_cast<int>(JsonNumber(gate, "exit_code").value_or(0));
  std::vector<std::string> regressed, improved;
  for (const nlohmann::json& m : drift.value("metrics", nlohmann::json::array())) {
    if (JsonString(m, "verdict") == "regressed") regressed.push_back(JsonString(m, "metric"));
    if (JsonString(m, "verdict") == "improved") improved.push_back(JsonString(m, "metric"));
  }
  auto list = [](const std::vector<std::string>& names) {
    std::string s;
    for (const std::string& n : names) s += (s.empty() ? "" : ", ") + n;
    return s;
  };
  // Two questions, answered apart (issue 20 item 4): did the candidate get worse than the base,
  // and does it hold its floors and ceilings (which the base may have broken just the same)?
  const std::vector<std::string> gate_regressed = JsonStrings(gate, "regressed");
  const LimitsLine limits = CompareLimits(base, cand);
  const std::string word = !gate_regressed.empty()            ? "Regressed"
                           : !regressed.empty()               ? "No gated regression"
                           : code != 0 && limits.chip.empty() ? "Gate failed"
                           : !improved.empty()                ? "Improved"
                                                              : "Steady";
  std::string comparison;
  if (!gate_regressed.empty()) {
    comparison = "gated " + list(gate_regressed) + " regressed";
  } else if (!regressed.empty()) {
    comparison = "no gated metric regressed; " + std::to_string(regressed.size()) +
                 " ungated regressed (" + list(regressed) + ")";
  } else {
    comparison = "no regression";
  }
  comparison += improved.empty() ? "; nothing improved."
                                 : "; " + std::to_string(improved.size()) + " improved (" +
                                       list(improved) + ").";
  out->append(code == 0 ? "<header class=\"mast held\">" : "<header class=\"mast broken\">");
  out->append("<div class=\"wrap\"><div class=\"brand\">plumb <span>drift report</span></div><h1>");
  const bool worse = !gate_regressed.empty() || word == "Gate failed";
  out->append(worse ? "<span class=\"verdict bad\">" : "<span class=\"verdict good\">");
  AppendHtmlText(out, word);
  out->append("</span>");
  if (!limits.chip.empty()) {
    out->append("<span class=\"verdict limits bad\">");
    AppendHtmlText(out, limits.chip);
    out->append("</span>");
  }
  std::string suite_name = JsonString(drift, "suite");
  if (suite_name.empty()) {
    suite_name = JsonString(cand.record.value("suite", nlohmann::json::object()), "name");
  }
  const nlohmann::json base_side = drift.value("base", nlohmann::json::object());
  const nlohmann::json cand_side = drift.value("cand", nlohmann::json::object());
  AppendHtmlText(out, suite_name);
  out->append(" \xC2\xB7 ");
  AppendHtmlText(out, JsonString(base_side, "pipeline"));
  out->append(" \xE2\x86\x92 ");
  AppendHtmlText(out, JsonString(cand_side, "pipeline"));
  out->append("</h1><p class=\"reason\">");
  AppendHtmlText(out, JsonString(gate, "reason"));
  out->append("</p><ul class=\"lines\"><li><strong>Against the base:</strong> ");
  AppendHtmlText(out, comparison);
  out->append("</li><li><strong>Floors and ceilings:</strong> ");
  AppendHtmlText(out, limits.words);
  out->append("</li></ul><dl class=\"facts\">");
  AppendRunFacts(out, "base", base_side);
  AppendRunFacts(out, "candidate", cand_side);
  int64_t counts[4] = {0, 0, 0, 0};
  for (const PairedCase& c : cases) counts[static_cast<int>(c.status)] += 1;
  AppendFact(out, "paired cases",
             std::to_string(cases.size()) + ": " + std::to_string(counts[0]) + " lost, " +
                 std::to_string(counts[1]) + " gained, " + std::to_string(counts[2]) +
                 " still failing, " + std::to_string(counts[3]) + " still passing");
  const bool missing_counted = drift.value("missing_counted_as_lost", false);
  if (missing_counted) {
    AppendFact(out, "missing",
               std::to_string(IdSet(drift, "only_in_base").size()) +
                   " case(s) missing from the candidate, counted as lost");
  }
  AppendFact(out, "left out",
             std::to_string(missing_counted ? 0 : IdSet(drift, "only_in_base").size()) +
                 " only in base, " + std::to_string(IdSet(drift, "only_in_cand").size()) +
                 " only in candidate, " + std::to_string(IdSet(drift, "gold_changed").size()) +
                 " with changed gold");
  AppendFact(out, "changed", ChangedWords(drift.value("changed", nlohmann::json())));
  const nlohmann::json mde = drift.value("min_detectable_effect", nlohmann::json());
  if (!mde.is_null()) {
    std::string words;
    if (mde.is_object()) {
      for (const auto& [metric, v] : mde.items()) {
        words += (words.empty() ? "" : ", ") + metric + " " + (v.is_null() ? "n/a" : Display(v));
      }
    } else {
      words = Display(mde);
    }
    if (!words.empty()) {
      AppendFact(out, "smallest drop the gate catches (power 0.8)", words);
    }
  }
  out->append("</dl></div></header>");
}

std::set<std::string> GatedMetrics(const nlohmann::json& drift) {
  std::set<std::string> out;
  const nlohmann::json gate = drift.value("gate", nlohmann::json::object());
  for (const std::string& m : JsonStrings(gate, "metrics")) out.insert(m);
  return out;
}

// Half the width of the delta bars' scale: the widest interval end among `metrics`, at least
// 0.05, so every row of one table shares one scale.
double DeltaRange(const std::vector<nlohmann::json>& metrics) {
  double range = 0.05;
  for (const nlohmann::json& m : metrics) {
    const nlohmann::json interval = m.value("interval", nlohmann::json::array());
    if (interval.is_array() && interval.size() == 2 && interval[0].is_number() &&
        interval[1].is_number()) {
      range = std::max(
          {range, std::abs(interval[0].get<double>()), std::abs(interval[1].get<double>())});
    }
  }
  return range;
}

// One row per metric; `first_cell` (already escaped HTML, e.g. a tag link) opens each row.
void AppendMetricRows(std::string* out, const std::vector<nlohmann::json>& metrics,
                      const std::set<std::string>& gated, double range,
                      const std::string& first_cell = std::string()) {
  for (const nlohmann::json& m : metrics) {
    const std::string metric = JsonString(m, "metric");
    const std::string verdict = JsonString(m, "verdict");
    const double delta = JsonNumber(m, "delta").value_or(0.0);
    const nlohmann::json interval = m.value("interval", nlohmann::json::array());
    const bool has_interval = interval.is_array() && interval.size() == 2 &&
                              interval[0].is_number() && interval[1].is_number();
    out->append("<tr>" + first_cell + "<td><code>");
    AppendHtmlText(out, metric);
    out->append("</code></td><td class=\"num\">" + OrDash(JsonNumber(m, "base_mean")) +
                "</td><td class=\"num\">" + OrDash(JsonNumber(m, "cand_mean")) +
                "</td><td class=\"num\">");
    if (JsonNumber(m, "delta")) {
      AppendDelta(out, delta);
    } else {
      out->append("\xE2\x80\x94");
    }
    out->append("</td><td class=\"num\">");
    if (has_interval) {
      out->append(FormatSignedScore(interval[0].get<double>()) + " \xE2\x80\xA6 " +
                  FormatSignedScore(interval[1].get<double>()) + "</td><td>");
      AppendDeltaIntervalBar(out, delta, interval[0].get<double>(), interval[1].get<double>(),
                             range);
    } else {
      out->append("\xE2\x80\x94</td><td>");
    }
    // Per-tag rows carry the Holm-adjusted p-value beside the raw one; show the adjusted.
    const std::optional<double> p =
        m.contains("p_holm") ? JsonNumber(m, "p_holm") : JsonNumber(m, "p_value");
    out->append("</td><td class=\"num\">");
    out->append(!p           ? std::string("\xE2\x80\x94")
                : *p < 0.001 ? std::string("&lt; 0.001")
                             : FormatScore(*p));
    out->append("</td><td class=\"note\">");
    AppendHtmlText(out, JsonString(m, "test"));
    out->append("</td><td class=\"num\">");
    out->append(m.value("n", nlohmann::json()).is_number() ? m["n"].dump() : "");
    out->append("</td><td><span class=\"verd ");
    AppendHtmlAttribute(out, verdict);
    out->append("\">");
    AppendHtmlText(out, verdict);
    if (JsonNumber(m, "needed_more")) {
      AppendHtmlText(out, " (" + m["needed_more"].dump() + " more needed)");
    }
    out->append("</span></td><td>");
    const bool is_gated = m.value("gated", false) || gated.count(metric) > 0;
    out->append(is_gated ? "gated" : "");
    out->append("</td></tr>");
  }
}

void AppendMetricTable(std::string* out, const nlohmann::json& drift) {
  const nlohmann::json metrics = drift.value("metrics", nlohmann::json::array());
  out->append(
      "<section id=\"scores\"><h2>Metrics, candidate against base</h2><p class=\"note\">Delta is "
      "candidate minus base over the paired cases, with a 95% paired-bootstrap interval; the "
      "p-value comes from the test named (exact McNemar for 0/1 metrics, Wilcoxon signed-rank "
      "for the others). A verdict needs the interval to exclude 0, |delta| to reach "
      "min_effect and p &le; 0.05 after the family correction: ");
  const nlohmann::json gate = drift.value("gate", nlohmann::json::object());
  const nlohmann::json correction =
      gate.is_object() && gate.contains("correction") ? gate["correction"] : nlohmann::json();
  AppendHtmlText(out, JsonString(correction, "text"));
  out->append(".</p>");
  if (!metrics.is_array() || metrics.empty()) {
    out->append("<p class=\"note\">No metric was compared.</p></section>");
    return;
  }
  out->append(
      "<table><thead><tr><th>metric</th><th>base</th><th>candidate</th><th>delta</th>"
      "<th>95% interval</th><th></th><th>p</th><th>test</th><th>n</th><th>verdict</th><th></th>"
      "</tr></thead><tbody>");
  const std::vector<nlohmann::json> list(metrics.begin(), metrics.end());
  AppendMetricRows(out, list, GatedMetrics(drift), DeltaRange(list));
  out->append("</tbody></table>");
  const nlohmann::json latency = drift.value("latency", nlohmann::json());
  if (latency.is_object() && !latency.empty()) {
    // {"n", "p50": {"base", "cand", "ratio", "interval"}, "p95": {...}}; anything else as JSON.
    out->append("<p class=\"note\">Latency, candidate against base");
    if (JsonNumber(latency, "n")) {
      out->append(" over " + FormatNumber(*JsonNumber(latency, "n")) + " paired replies");
    }
    out->append(": ");
    bool first = true;
    for (const auto& [key, value] : latency.items()) {
      if (key == "n" || (key == "lower_bounds" && value == 0)) continue;
      if (!first) out->append(" \xC2\xB7 ");
      first = false;
      AppendHtmlText(out, key);
      if (value.is_object() && JsonNumber(value, "ratio")) {
        std::string words = " " + FormatMilliseconds(JsonNumber(value, "base").value_or(0)) +
                            " \xE2\x86\x92 " +
                            FormatMilliseconds(JsonNumber(value, "cand").value_or(0)) + ", ratio " +
                            FormatScore(*JsonNumber(value, "ratio"));
        const nlohmann::json iv = value.value("interval", nlohmann::json());
        if (iv.is_array() && iv.size() == 2 && iv[0].is_number() && iv[1].is_number()) {
          words += " (95% interval " + FormatScore(iv[0].get<double>()) + "\xE2\x80\x93" +
                   FormatScore(iv[1].get<double>()) + ")";
        }
        AppendHtmlText(out, words);
      } else if (value.is_object()) {
        out->append(" not measured");
      } else {
        AppendHtmlText(out, " " + Display(value));
      }
    }
    out->append("</p>");
  }
  const nlohmann::json warmup = drift.value("warmup", nlohmann::json());
  if (warmup.is_object() && JsonNumber(warmup, "ratio")) {
    auto mean_of = [&](const char* run) {
      const nlohmann::json side = warmup.value(run, nlohmann::json());
      return FormatMilliseconds(side.is_object() ? JsonNumber(side, "mean_ms").value_or(0) : 0);
    };
    std::string words = "Warm-up per worker, candidate against base: mean " + mean_of("base") +
                        " \xE2\x86\x92 " + mean_of("cand") + ", ratio " +
                        FormatScore(*JsonNumber(warmup, "ratio"));
    const nlohmann::json iv = warmup.value("interval", nlohmann::json());
    if (iv.is_array() && iv.size() == 2 && iv[0].is_number() && iv[1].is_number()) {
      words += " (95% interval " + FormatScore(iv[0].get<double>()) + "\xE2\x80\x93" +
               FormatScore(iv[1].get<double>()) + ")";
    }
    out->append("<p class=\"note\">");
    AppendHtmlText(out, words + ".");
    out->append("</p>");
  }
  // Issue 21: time to first token, tokens and cost per case, and the latency gate.
  auto ratio_words = [](const nlohmann::json& v, bool ms, const std::string& unit) {
    auto amount = [&](const char* key) {
      const double x = JsonNumber(v, key).value_or(0);
      return ms ? FormatMilliseconds(x) : fmt::format("{:.6g}", x) + unit;
    };
    std::string words = amount(ms ? "base" : "base_mean") + " \xE2\x86\x92 " +
                        amount(ms ? "cand" : "cand_mean") + ", ratio " +
                        FormatScore(JsonNumber(v, "ratio").value_or(0));
    const nlohmann::json iv = v.value("interval", nlohmann::json());
    if (iv.is_array() && iv.size() == 2 && iv[0].is_number() && iv[1].is_number()) {
      words += " (95% interval " + FormatScore(iv[0].get<double>()) + "\xE2\x80\x93" +
               FormatScore(iv[1].get<double>()) + ")";
    }
    return words;
  };
  const nlohmann::json ttft = drift.value("ttft", nlohmann::json());
  if (ttft.is_object()) {
    std::string words;
    for (const char* key : {"p50", "p95"}) {
      const nlohmann::json v = ttft.value(key, nlohmann::json());
      if (!v.is_object() || !JsonNumber(v, "ratio")) continue;
      words +=
          (words.empty() ? "" : " \xC2\xB7 ") + std::string(key) + " " + ratio_words(v, true, "");
    }
    if (!words.empty()) {
      out->append("<p class=\"note\" id=\"ttft-drift\">");
      AppendHtmlText(out, "Time to first token, candidate against base: " + words + ".");
      out->append("</p>");
    }
  }
  const nlohmann::json usage = drift.value("usage", nlohmann::json());
  const nlohmann::json cost = drift.value("cost", nlohmann::json());
  std::string amounts;
  for (const auto& [label, v] :
       {std::pair<const char*, nlohmann::json>{
            "tokens in per case",
            usage.is_object() ? usage.value("input_tokens", nlohmann::json()) : nlohmann::json()},
        {"tokens out per case",
         usage.is_object() ? usage.value("output_tokens", nlohmann::json()) : nlohmann::json()},
        {"cost per case", cost}}) {
    if (!v.is_object()) continue;
    if (!JsonNumber(v, "ratio")) {
      if (v.contains("note") && v["note"].is_string()) {
        amounts += (amounts.empty() ? "" : " \xC2\xB7 ") + std::string(label) + " " +
                   v["note"].get<std::string>();
      }
      continue;
    }
    const std::string unit = v.contains("currency") && v["currency"].is_string() &&
                                     !v["currency"].get<std::string>().empty()
                                 ? " " + v["currency"].get<std::string>()
                                 : "";
    amounts += (amounts.empty() ? "" : " \xC2\xB7 ") + std::string(label) + " " +
               ratio_words(v, false, unit);
  }
  if (!amounts.empty()) {
    out->append("<p class=\"note\" id=\"usage-drift\">");
    AppendHtmlText(out, "Tokens and cost, candidate against base: " + amounts + ".");
    out->append("</p>");
  }
  const nlohmann::json latency_gate =
      gate.is_object() ? gate.value("latency_p95", nlohmann::json()) : nlohmann::json();
  if (latency_gate.is_object()) {
    const bool regressed = latency_gate.value("regressed", false);
    const std::string limit = FormatScore(JsonNumber(latency_gate, "limit").value_or(0));
    out->append(regressed ? "<p class=\"note bad\" id=\"latency-gate\">"
                          : "<p class=\"note\" id=\"latency-gate\">");
    AppendHtmlText(
        out,
        std::string("latency_p95 (gated): ") +
            (!latency_gate.value("measured", false) ? "not measured."
             : regressed ? "regressed: the p95 ratio's 95% interval lies above " + limit + "."
                         : "steady: the p95 ratio's 95% interval reaches " + limit + " or below."));
    out->append("</p>");
  }
  out->append("</section>");
}

// Per-tag rows, in either shape the drift JSON may give them: a list of {"tag", "metrics": [...]}
// or an object keyed by tag whose value is such a list (or {"metrics": [...]}).
std::vector<std::pair<std::string, nlohmann::json>> TagRows(const nlohmann::json& drift) {
  const nlohmann::json tags = drift.value("tags", nlohmann::json());
  std::vector<std::pair<std::string, nlohmann::json>> rows;
  auto metrics_of = [](const nlohmann::json& v) {
    if (v.is_array()) return v;
    if (v.is_object()) return v.value("metrics", nlohmann::json::array());
    return nlohmann::json::array();
  };
  if (tags.is_array()) {
    for (const nlohmann::json& t : tags) {
      if (t.is_object()) rows.push_back({JsonString(t, "tag"), metrics_of(t)});
    }
  } else if (tags.is_object()) {
    for (const auto& [tag, v] : tags.items()) rows.push_back({tag, metrics_of(v)});
  }
  return rows;
}

DeltaRow DeltaRowOf(const std::string& label, const nlohmann::json& m) {
  DeltaRow row;
  row.label = label;
  row.delta = JsonNumber(m, "delta");
  const nlohmann::json interval = m.value("interval", nlohmann::json());
  if (interval.is_array() && interval.size() == 2 && interval[0].is_number() &&
      interval[1].is_number()) {
    row.low = interval[0].get<double>();
    row.high = interval[1].get<double>();
  }
  row.verdict = JsonString(m, "verdict");
  return row;
}

// One chart per gated metric: all cases, then each tag, with the min-effect band.
void AppendTagDeltaCharts(std::string* out, const nlohmann::json& drift,
                          const std::vector<std::pair<std::string, nlohmann::json>>& rows) {
  const std::set<std::string> gated = GatedMetrics(drift);
  if (gated.empty()) return;
  const double min_effect =
      JsonNumber(drift.value("settings", nlohmann::json::object()), "min_effect").value_or(0);
  out->append("<div class=\"charts\">");
  int index = 0;
  for (const nlohmann::json& m : drift.value("metrics", nlohmann::json::array())) {
    const std::string metric = JsonString(m, "metric");
    if (gated.count(metric) == 0) continue;
    std::vector<DeltaRow> chart_rows = {DeltaRowOf("all cases", m)};
    for (const auto& [tag, metrics] : rows) {
      if (!metrics.is_array()) continue;
      for (const nlohmann::json& t : metrics) {
        if (JsonString(t, "metric") == metric) chart_rows.push_back(DeltaRowOf(tag, t));
      }
    }
    AppendDeltaChart(out, "deltas-" + std::to_string(++index), metric, chart_rows, min_effect);
  }
  out->append("</div>");
}

void AppendTagTable(std::string* out, const nlohmann::json& drift) {
  const std::vector<std::pair<std::string, nlohmann::json>> rows = TagRows(drift);
  if (rows.empty()) return;
  // Many tags times many metrics make a long table: rows whose verdict is not steady come first
  // and always show; the full table is folded.
  std::vector<nlohmann::json> all;
  std::vector<std::pair<std::string, nlohmann::json>> flat, moved;
  for (const auto& [tag, metrics] : rows) {
    if (!metrics.is_array()) continue;
    for (const nlohmann::json& m : metrics) {
      all.push_back(m);
      flat.push_back({tag, m});
      const std::string verdict = JsonString(m, "verdict");
      if (verdict != "steady" && verdict != "too few cases") moved.push_back({tag, m});
    }
  }
  const double range = DeltaRange(all);
  const char* head =
      "<div class=\"scroll\"><table><thead><tr><th>tag</th><th>metric</th><th>base</th>"
      "<th>candidate</th><th>delta</th><th>95% interval</th><th></th><th>p (Holm)</th>"
      "<th>test</th><th>n</th><th>verdict</th><th></th></tr></thead><tbody>";
  auto table = [&](const std::vector<std::pair<std::string, nlohmann::json>>& list) {
    out->append(head);
    for (const auto& [tag, m] : list) {
      std::string cell = "<td>";
      AppendTagLink(&cell, tag);
      cell += "</td>";
      AppendMetricRows(out, {m}, {}, range, cell);
    }
    out->append("</tbody></table></div>");
  };
  out->append(
      "<section id=\"tags\"><h2>By tag</h2><p class=\"note\">The charts show each gated "
      "metric's delta per tag with its 95% interval; the shaded band is |delta| &lt; min_effect, "
      "inside which no change counts. A mark pointing down is a regression, up an improvement. "
      "In the tables, p-values are Holm-adjusted across tags. A tag name filters the cases.</p>");
  AppendTagDeltaCharts(out, drift, rows);
  if (moved.empty()) {
    out->append("<p class=\"note\">Every tag is steady on every metric.</p>");
  } else {
    table(moved);
  }
  out->append("<details><summary class=\"note\">All " + std::to_string(flat.size()) +
              " tag rows</summary>");
  table(flat);
  out->append("</details></section>");
}

void AppendSide(std::string* out, const char* css, const char* title, const nlohmann::json& side,
                const CaseRecord* record, const nlohmann::json& gold, CaseCardWriter* cards,
                bool brief) {
  out->append("<div class=\"side ");
  out->append(css);
  out->append("\"><h4>");
  out->append(title);
  out->append(" \xC2\xB7 ");
  AppendHtmlText(out, JsonString(side, "pipeline"));
  out->append("</h4>");
  if (record == nullptr) {
    out->append("<p class=\"note\">no reply recorded</p>");
  } else if (brief) {
    cards->AppendReplyBrief(out, *record, gold);
  } else {
    // Side by side, the base citation is the point of comparison even when it was right.
    cards->AppendReply(out, *record, gold, /*two_columns=*/false, /*draw_clean=*/true);
  }
  out->append("</div>");
}

void AppendDriftCard(std::string* out, const PairedCase& c, const nlohmann::json& drift,
                     CaseCardWriter* base_cards, CaseCardWriter* cand_cards) {
  static const nlohmann::json kNoGold = nlohmann::json::object();
  const nlohmann::json& gold = c.gold != nullptr ? *c.gold : kNoGold;
  const char* status = DriftStatusName(c.status);
  const bool changed = c.status == DriftStatus::kLost || c.status == DriftStatus::kGained;
  out->append("<details class=\"case st-");
  out->append(status);
  out->append("\" id=\"case-");
  AppendHtmlAttribute(out, c.id);
  out->append("\" data-status=\"");
  out->append(status);
  if (c.cand != nullptr && !c.cand->scores.pass && c.cand->scores.cause != FailureCause::kNone) {
    out->append("\" data-cause=\"");
    out->append(FailureCauseId(c.cand->scores.cause));
  }
  out->append("\" data-tags=\"");
  AppendHtmlAttribute(out, TagsAttribute(JsonStrings(gold, "tags")));
  out->append("\" data-scores=\"");
  AppendHtmlAttribute(out, ScoresAttribute(c.cand->scores.values));
  out->append("\" data-latency=\"" + FormatNumber(c.cand->latency_ms) + "\"");
  out->append(changed ? " open>" : ">");
  out->append("<summary><span class=\"badge\">");
  static const char* kBadges[] = {"LOST", "GAINED", "STILL FAILING", "STILL PASSING"};
  out->append(kBadges[static_cast<int>(c.status)]);
  out->append("</span>");
  // Why a lost or still-failing case fails in the candidate.
  if (c.cand != nullptr && !c.cand->scores.pass && c.cand->scores.cause != FailureCause::kNone) {
    out->append("<span class=\"cause\">");
    out->append(FailureCauseLabel(c.cand->scores.cause));
    out->append("</span>");
  }
  out->append("<code class=\"cid\">");
  AppendHtmlText(out, c.id);
  out->append("</code><span class=\"sq\"" + LangAttribute(base_cards->QuestionLang(gold)) + ">");
  AppendClippedText(out, JsonString(gold, "question"), kShownQuestionCodePoints);
  out->append("</span><span class=\"key\">");
  std::string key;
  for (const auto& [metric, delta] : c.deltas) {
    if (delta == 0) continue;
    key += (key.empty() ? "" : " \xC2\xB7 ") + metric + " " + FormatSignedScore(delta);
  }
  AppendHtmlText(out, key.empty() ? std::string("no score changed") : key);
  out->append("</span></summary><div class=\"cbody\">");
  base_cards->AppendGold(out, gold);
  out->append("<div class=\"pair\">");
  AppendSide(out, "base", "Base", drift.value("base", nlohmann::json::object()), c.base, gold,
             base_cards, !changed);
  AppendSide(out, "cand", "Candidate", drift.value("cand", nlohmann::json::object()), c.cand, gold,
             cand_cards, !changed);
  out->append("</div></div></details>\n");
}

// " sessions that lost a turn: S (turns 2, 3), ..." (issue 22); plain text, so that the
// heading's links stay the causes'. Empty when no session lost one.
std::string SessionsLost(const nlohmann::json& drift) {
  auto it = drift.find("sessions_lost_a_turn");
  if (it == drift.end() || !it->is_array() || it->empty()) return "";
  std::string out = " <span class=\"n\">sessions that lost a turn:";
  bool first = true;
  for (const nlohmann::json& s : *it) {
    if (!s.is_object() || !s.value("session", nlohmann::json()).is_string()) continue;
    const std::string session = s["session"].get<std::string>();
    out += first ? " " : "; ";
    first = false;
    AppendHtmlText(&out, session);
    out += s.value("turns", nlohmann::json::array()).size() == 1 ? " (turn" : " (turns";
    bool first_turn = true;
    for (const nlohmann::json& t : s.value("turns", nlohmann::json::array())) {
      if (!t.is_number_integer()) continue;
      out += first_turn ? " " : ", ";
      first_turn = false;
      out += std::to_string(t.get<int>());
    }
    out += ")";
  }
  return out + "</span>";
}

// "by cause in the candidate: 3 retrieval miss, 1 reading miss", each cause a link that shows
// those lost cases; empty when the drift JSON has no breakdown.
std::string LostByCause(const nlohmann::json& drift) {
  CauseBreakdown breakdown;
  auto it = drift.find("lost_by_cause");
  if (it == drift.end() || !CauseBreakdownFromJson(*it, &breakdown) || breakdown.causes.empty()) {
    return "";
  }
  std::vector<CauseCount> causes = breakdown.causes;
  std::stable_sort(causes.begin(), causes.end(),
                   [](const CauseCount& a, const CauseCount& b) { return a.count > b.count; });
  std::string out = " <span class=\"n\">by cause in the candidate:";
  for (size_t i = 0; i < causes.size(); ++i) {
    out += std::string(i ? ", " : " ") + std::to_string(causes[i].count) +
           " <a href=\"#status=lost&amp;cause=" + std::string(FailureCauseId(causes[i].cause)) +
           "\">" + std::string(FailureCauseLabel(causes[i].cause)) + "</a>";
  }
  return out + "</span>";
}

void AppendIdList(std::string* out, const nlohmann::json& drift, const char* key, const char* title,
                  const char* why) {
  const std::set<std::string> ids = IdSet(drift, key);
  if (ids.empty()) return;
  out->append("<h3>");
  out->append(title);
  out->append("<span class=\"n\">" + std::to_string(ids.size()) + "</span></h3><p class=\"note\">");
  out->append(why);
  out->append("</p><ul class=\"idlist\">");
  for (const std::string& id : ids) {
    out->append("<li><code>");
    AppendHtmlText(out, id);
    out->append("</code></li>");
  }
  out->append("</ul>");
}

}  // namespace

namespace {

std::string RenderDriftPage(const nlohmann::json& drift, const LoadedRun& base,
                            const LoadedRun& cand) {
  CaseCardWriter base_cards(base);
  CaseCardWriter cand_cards(cand);
  const std::vector<PairedCase> cases = PairCases(drift, base, cand);
  const nlohmann::json suite = cand.record.value("suite", nlohmann::json::object());

  std::string html;
  html.reserve(4096 + cases.size() * 4096);
  AppendPageStart(&html, "plumb drift \xC2\xB7 " + JsonString(suite, "name"), "drift");
  AppendMasthead(&html, drift, base, cand, cases);
  html.append("<main class=\"wrap\">");
  for (const CaseCardWriter* cards : {&base_cards, &cand_cards}) {
    if (cards->corpus_note().empty()) continue;
    html.append("<p class=\"warnbox\">");
    AppendHtmlText(&html, (cards == &base_cards ? "Base: " : "Candidate: ") + cards->corpus_note());
    html.append("</p>");
  }
  AppendMetricTable(&html, drift);

  std::set<std::string> tags;
  std::map<std::string, nlohmann::json> metric_seen;
  std::map<DriftStatus, int64_t> counts;
  for (const PairedCase& c : cases) {
    counts[c.status] += 1;
    if (c.gold != nullptr) {
      for (const std::string& tag : JsonStrings(*c.gold, "tags")) tags.insert(tag);
    }
    for (const auto& [metric, value] : c.cand->scores.values) metric_seen[metric] = value;
  }
  html.append("<section id=\"cases\"><h2>Cases</h2>");
  html.append(MarkLegendHtml());
  AppendFilterForm(&html,
                   {{"lost", "lost", counts[DriftStatus::kLost]},
                    {"gained", "gained", counts[DriftStatus::kGained]},
                    {"failing", "still failing", counts[DriftStatus::kFailing]},
                    {"passing", "still passing", counts[DriftStatus::kPassing]}},
                   {tags.begin(), tags.end()}, MetricOrder(nlohmann::json(metric_seen)),
                   "candidate's", static_cast<int64_t>(cases.size()));
  struct Group {
    DriftStatus status;
    const char* title;
    const char* empty;
  };
  const Group groups[] = {
      {DriftStatus::kLost, "Lost: passed in base, fail in candidate", "No case was lost."},
      {DriftStatus::kGained, "Gained: failed in base, pass in candidate", "No case was gained."},
      {DriftStatus::kFailing, "Still failing", "No case fails in both runs."},
      {DriftStatus::kPassing, "Still passing", "No case passes in both runs."},
  };
  for (const Group& g : groups) {
    const std::string aside =
        g.status == DriftStatus::kLost ? LostByCause(drift) + SessionsLost(drift) : "";
    AppendCaseGroup(&html, DriftStatusName(g.status), g.title, counts[g.status], aside, g.empty,
                    [&] {
                      for (const PairedCase& c : cases) {
                        if (c.status == g.status)
                          AppendDriftCard(&html, c, drift, &base_cards, &cand_cards);
                      }
                    });
  }
  AppendIdList(
      &html, drift, "unstable", "Unstable",
      "Outcome differs between repeats within a run; their deltas are means over repeats.");
  AppendIdList(&html, drift, "gold_changed", "Gold changed",
               "The case's gold differs between the runs, so it is left out of the paired "
               "statistics.");
  AppendIdList(&html, drift, "only_in_base", "Only in base", "Not in the candidate run.");
  AppendIdList(&html, drift, "only_in_cand", "Only in candidate", "Not in the base run.");
  html.append("</section>");
  html.append("<section id=\"latency\"><h2>Latency</h2>");
  AppendLatencyChart(
      &html, "latency-chart",
      {RunLatencies("base " + JsonString(drift.value("base", nlohmann::json::object()), "pipeline"),
                    base),
       RunLatencies(
           "candidate " + JsonString(drift.value("cand", nlohmann::json::object()), "pipeline"),
           cand)});
  html.append("</section>");
  AppendTagTable(&html, drift);
  html.append("</main>");
  AppendPageEnd(&html);
  return html;
}

}  // namespace

bool WriteHtmlDriftReport(const nlohmann::json& drift, const LoadedRun& base, const LoadedRun& cand,
                          const std::string& path, std::string* error) {
  return WriteHtmlPage(
      "HTML drift report", [&] { return RenderDriftPage(drift, base, cand); }, path, error);
}

}  // namespace plumb
