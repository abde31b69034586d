#include "runner/report/html_report.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <map>
#include <optional>
#include <set>

#include "runner/report/error_reason_groups.h"
#include "runner/report/freshness_report.h"
#include "runner/report/html_bounded_text.h"
#include "runner/report/html_case_card.h"
#include "runner/report/html_escape.h"
#include "runner/report/html_interval_bar.h"
#include "runner/report/html_page_assets.h"
#include "runner/report/html_report_parts.h"
#include "runner/report/html_tag_grid.h"
#include "runner/report/source_excerpt.h"
#include "runner/report/svg_latency_chart.h"
#include "runner/report/text_language.h"
#include "runner/run/calibration.h"
#include "runner/run/run_failures.h"
#include "runner/run/run_record.h"

namespace plumb {
namespace {

struct CaseEntry {
  std::string id;
  const nlohmann::json* gold = nullptr;
  std::vector<const CaseRecord*> records;
  const CaseRecord* shown = nullptr;
  CaseStatus status = CaseStatus::kFailed;
  int64_t line = 0;
};

std::vector<CaseEntry> CollectCases(const LoadedRun& run) {
  std::map<std::string, CaseEntry> by_id;
  auto cases = run.record.find("cases");
  if (cases != run.record.end() && cases->is_object()) {
    for (const auto& [id, gold] : cases->items()) {
      CaseEntry& e = by_id[id];
      e.id = id;
      e.gold = &gold;
      e.line = gold.value("line", int64_t{0});
    }
  }
  for (const CaseRecord& r : run.records) {
    CaseEntry& e = by_id[r.id];
    e.id = r.id;
    e.records.push_back(&r);
  }
  std::vector<CaseEntry> out;
  for (auto& [id, e] : by_id) {
    e.shown = RepresentativeRecord(e.records);
    e.status = StatusOf(e.records);
    out.push_back(std::move(e));
  }
  std::stable_sort(out.begin(), out.end(),
                   [](const CaseEntry& a, const CaseEntry& b) { return a.line < b.line; });
  return out;
}

struct Verdict {
  std::string word;
  bool held = false;
};

Verdict RunVerdictOf(const nlohmann::json& record) {
  const nlohmann::json verdict = record.value("verdict", nlohmann::json::object());
  const int code = verdict.value("exit_code", 0);
  const nlohmann::json thresholds = record.value("thresholds", nlohmann::json::array());
  bool floor_broken = false, ceiling_broken = false, any_floor = false, any_ceiling = false;
  for (const nlohmann::json& t : thresholds) {
    const bool ceiling = JsonString(t, "kind") == "ceiling";
    (ceiling ? any_ceiling : any_floor) = true;
    if (!t.value("held", false)) (ceiling ? ceiling_broken : floor_broken) = true;
  }
  if (code == 0) {
    if (thresholds.empty()) return {"No floors or ceilings set", true};
    return {any_floor && any_ceiling ? "Floors and ceilings held"
            : any_ceiling            ? "Ceilings held"
                                     : "Floors held",
            true};
  }
  if (code == 3) return {"Too many case errors", false};
  if (code == 1) {
    return {floor_broken && ceiling_broken ? "Floors and ceilings broken"
            : floor_broken                 ? "Floors broken"
            : ceiling_broken               ? "Ceilings broken"
                                           : "Gate failed",
            false};
  }
  return {"Exit " + std::to_string(code), false};
}

void AppendMasthead(std::string* out, const LoadedRun& run, const std::vector<CaseEntry>& cases,
                    const CaseCardWriter& cards) {
  const nlohmann::json& record = run.record;
  const nlohmann::json suite = record.value("suite", nlohmann::json::object());
  const nlohmann::json pipeline = record.value("pipeline", nlohmann::json::object());
  const Verdict verdict = RunVerdictOf(record);
  out->append(verdict.held ? "<header class=\"mast held\">" : "<header class=\"mast broken\">");
  out->append("<div class=\"wrap\"><div class=\"brand\">plumb <span>run report</span></div><h1>");
  out->append("<span class=\"verdict\">");
  AppendHtmlText(out, verdict.word);
  out->append("</span>");
  AppendHtmlText(out, JsonString(suite, "name"));
  out->append(" \xC2\xB7 ");
  AppendHtmlText(out, JsonString(pipeline, "name"));
  out->append("</h1><p class=\"reason\">");
  const nlohmann::json v = record.value("verdict", nlohmann::json::object());
  AppendHtmlText(out, JsonString(v, "reason"));
  out->append("</p><dl class=\"facts\">");

  int64_t counts[3] = {0, 0, 0};
  for (const CaseEntry& c : cases) counts[static_cast<int>(c.status)] += 1;
  AppendFact(out, "cases",
             std::to_string(cases.size()) + ": " +
                 std::to_string(counts[static_cast<int>(CaseStatus::kFailed)]) + " failed, " +
                 std::to_string(counts[static_cast<int>(CaseStatus::kErrored)]) + " errored, " +
                 std::to_string(counts[static_cast<int>(CaseStatus::kPassed)]) + " passed");
  AppendFact(out, "suite", JsonString(suite, "name") + " (" + JsonString(suite, "path") + ")");
  out->append("<dt>labels</dt><dd class=\"labels\">");
  AppendLabels(out, record.value("labels", nlohmann::json::object()));
  out->append("</dd>");
  AppendFact(out, "pipeline", JsonString(pipeline, "name"));
  AppendFact(
      out, "run",
      JsonString(record, "started_at") + " \xE2\x86\x92 " + JsonString(record, "finished_at"));
  AppendFact(out, "normalization",
             JsonString(suite, "normalize") + ", lang " + JsonString(suite, "lang"));
  std::string corpus = JsonString(record, "corpus_dir");
  const std::string fingerprint = JsonString(record, "corpus_fingerprint");
  if (corpus.empty()) corpus = "none";
  if (!fingerprint.empty()) corpus += " (fingerprint " + fingerprint.substr(0, 12) + ")";
  AppendFact(out, "corpus", corpus);
  const int repeat = record.value("repeat", 1);
  const nlohmann::json shard = record.value("shard", nlohmann::json::object());
  std::string extent = "repeat " + std::to_string(repeat);
  if (shard.value("count", 1) > 1) {
    extent += ", shard " + std::to_string(shard.value("index", 1)) + " of " +
              std::to_string(shard.value("count", 1));
  }
  if (record.value("resumed", false)) extent += ", resumed";
  AppendFact(out, "items", extent);
  const nlohmann::json tool = record.value("tool", nlohmann::json::object());
  AppendFact(out, "tool", JsonString(tool, "name") + " " + JsonString(tool, "version"));
  out->append("</dl>");
  if (!cards.corpus_note().empty()) {
    out->append("<p class=\"warnbox\">");
    AppendHtmlText(out, cards.corpus_note());
    out->append("</p>");
  }
  for (const std::string& warning : run.warnings) {
    out->append("<p class=\"warnbox\">");
    AppendHtmlText(out, warning);
    out->append("</p>");
  }
  out->append("</div></header>");
}

void AppendFloors(std::string* out, const nlohmann::json& record) {
  const nlohmann::json thresholds = record.value("thresholds", nlohmann::json::array());
  out->append("<section id=\"floors\"><h2>Floors and ceilings</h2>");
  if (thresholds.empty()) {
    out->append("<p class=\"note\">The suite sets no floors or ceilings.</p></section>");
    return;
  }
  out->append(
      "<table><thead><tr><th>metric</th><th>scope</th><th>floor / "
      "ceiling</th><th>got</th><th>result</th>"
      "</tr></thead><tbody>");
  for (const nlohmann::json& t : thresholds) {
    const bool held = t.value("held", false);
    const bool ceiling = JsonString(t, "kind") == "ceiling";
    out->append("<tr><td><code>");
    AppendHtmlText(out, JsonString(t, "metric"));
    out->append("</code></td><td>");
    const std::string tag = JsonString(t, "tag");
    if (tag.empty()) {
      out->append("all cases");
    } else {
      out->append("tag ");
      AppendTagLink(out, tag);
    }
    out->append("</td><td class=\"num\">");
    out->append(ceiling ? "ceiling \xE2\x89\xA4 " : "floor \xE2\x89\xA5 ");
    out->append(FormatScore(t.value("limit", 0.0)));
    out->append("</td><td class=\"num\">");
    const nlohmann::json value = t.value("value", nlohmann::json());
    out->append(value.is_number() ? FormatScore(value.get<double>()) : "not measured");
    out->append(held ? "</td><td><span class=\"res held\">HELD</span></td></tr>"
                     : "</td><td><span class=\"res broken\">BROKEN</span></td></tr>");
  }
  out->append("</tbody></table></section>");
}

std::optional<double> RunFloor(const nlohmann::json& record, const std::string& metric) {
  for (const nlohmann::json& t : record.value("thresholds", nlohmann::json::array())) {
    if (t.value("tag", nlohmann::json()).is_null() && JsonString(t, "metric") == metric &&
        JsonString(t, "kind") != "ceiling") {
      return t.value("limit", 0.0);
    }
  }
  return std::nullopt;
}

/// run.json's "sessions" (issue 22): session_pass, the first-turn and follow-up latency and
/// their ratio, and the sessions that failed, each linked to its first turn's card.
void AppendSessions(std::string* out, const nlohmann::json& s) {
  if (!s.is_object()) return;
  auto num = [](const nlohmann::json& j, const char* key) {
    const nlohmann::json v = j.is_object() ? j.value(key, nlohmann::json()) : nlohmann::json();
    return v.is_number() ? v.get<double>() : std::nan("");
  };
  auto fixed = [](double v, int digits) {
    if (!std::isfinite(v)) return std::string("n/a");
    char text[64];
    std::snprintf(text, sizeof text, "%.*f", digits, v);
    return std::string(text);
  };
  const nlohmann::json pass = s.value("session_pass", nlohmann::json::object());
  out->append("<p class=\"note\">Sessions: " + std::to_string(s.value("count", int64_t{0})) + " (" +
              std::to_string(s.value("turns", int64_t{0})) + " turns); session_pass " +
              fixed(num(pass, "mean"), 3) + " [" + fixed(num(pass, "low"), 3) + ", " +
              fixed(num(pass, "high"), 3) + "] (every turn passed)");
  if (s.value("restarts", int64_t{0}) > 0) {
    out->append("; " + std::to_string(s.value("restarts", int64_t{0})) +
                " run again from turn 1 after their worker was replaced");
  }
  out->append(".");
  const char* names[] = {"first turn", "follow-ups"};
  const char* keys[] = {"latency_first_turn", "latency_follow_up"};
  for (int k = 0; k < 2; ++k) {
    const nlohmann::json l = s.value(keys[k], nlohmann::json::object());
    out->append(std::string(" Latency, ") + names[k] + " (n " +
                std::to_string(l.value("n", int64_t{0})) + "):");
    for (const char* p : {"p50", "p95"}) {
      const nlohmann::json e = l.value(p, nlohmann::json::object());
      out->append(std::string(" ") + p + " " + fixed(num(e, "value"), 2) + " ms [" +
                  fixed(num(e, "low"), 2) + ", " + fixed(num(e, "high"), 2) + "]");
    }
    out->append(".");
  }
  const nlohmann::json ratio = s.value("follow_up_to_first_turn", nlohmann::json::object());
  out->append(" Follow-up / first turn:");
  for (const char* p : {"p50", "p95"}) {
    const nlohmann::json r = ratio.value(p, nlohmann::json::object());
    out->append(std::string(" ") + p + " \xC3\x97" + fixed(num(r, "ratio"), 2) + " [" +
                fixed(num(r, "low"), 2) + ", " + fixed(num(r, "high"), 2) + "]");
  }
  out->append(".</p>");
  const nlohmann::json failed = s.value("failed", nlohmann::json::array());
  if (failed.is_array() && !failed.empty()) {
    out->append("<p class=\"note\">Sessions with a failed turn:");
    for (const nlohmann::json& id : failed) {
      if (!id.is_string()) continue;
      out->append(" <a href=\"#case-");
      AppendHtmlAttribute(out, TurnId(id.get<std::string>(), 1));
      out->append("\">");
      AppendHtmlText(out, id.get<std::string>());
      out->append("</a>");
    }
    out->append("</p>");
  }
}

void AppendScoresTable(std::string* out, const nlohmann::json& record) {
  const nlohmann::json aggregates = record.value("aggregates", nlohmann::json::object());
  const nlohmann::json metrics = aggregates.value("metrics", nlohmann::json::object());
  const std::map<std::string, std::string> grade_notes = GradeCalibrationNotes(record);
  out->append(
      "<section id=\"scores\"><h2>Scores</h2><table><thead><tr><th>metric</th><th>mean</th>"
      "<th>95% interval</th><th></th><th>n</th><th>interval</th></tr></thead><tbody>");
  for (const std::string& metric : MetricOrder(metrics)) {
    const nlohmann::json& m = metrics[metric];
    const double mean = m.value("mean", 0.0);
    const nlohmann::json interval = m.value("interval", nlohmann::json::array({0.0, 0.0}));
    const double low = interval.size() == 2 ? interval[0].get<double>() : mean;
    const double high = interval.size() == 2 ? interval[1].get<double>() : mean;
    out->append("<tr><td><code>");
    AppendHtmlText(out, metric);
    out->append("</code></td><td class=\"num\"><strong>" + FormatScore(mean) +
                "</strong></td><td class=\"num\">" + FormatScore(low) + " \xE2\x80\x93 " +
                FormatScore(high) + "</td><td>");
    AppendUnitIntervalBar(out, mean, low, high, RunFloor(record, metric));
    out->append("</td><td class=\"num\">" + std::to_string(m.value("n", int64_t{0})) +
                "</td><td class=\"note\">");
    AppendHtmlText(out, JsonString(m, "interval_method"));
    if (metric.rfind("grade.", 0) == 0) {
      // Beside every grade: how well its grader agrees with a person's labels, or that nobody
      // has checked.
      auto note = grade_notes.find(metric);
      const std::string text = note != grade_notes.end() ? note->second : "uncalibrated";
      const bool trusted = text.rfind("kappa", 0) == 0;
      out->append(trusted ? "<br>grader vs. human labels: " : "<br><strong>");
      const bool unchecked = text.rfind("uncalibrated", 0) == 0;
      AppendHtmlText(out, trusted     ? text
                          : unchecked ? text +
                                            " (not checked against human labels; it may not "
                                            "gate)"
                                      : text + " (it may not gate)");
      if (!trusted) out->append("</strong>");
    }
    out->append("</td></tr>");
  }
  out->append("</tbody></table>");
  const nlohmann::json latency = aggregates.value("latency_ms", nlohmann::json::object());
  if (latency.value("n", int64_t{0}) > 0) {
    const int64_t lower_bounds = latency.value("lower_bounds", int64_t{0});
    out->append("<p class=\"note\">Latency over " +
                std::to_string(latency.value("n", int64_t{0}) - lower_bounds) +
                " replies that did not error");
    if (lower_bounds > 0) {
      out->append(" and " + std::to_string(lower_bounds) +
                  " timed out (counted at their timeout, as lower bounds)");
    }
    out->append(": ");
    const nlohmann::json at_least = latency.value("at_least", nlohmann::json::array());
    bool first = true;
    for (const char* key : {"p50", "p90", "p95", "p99", "mean", "max"}) {
      if (!first) out->append(" \xC2\xB7 ");
      first = false;
      const bool bound = std::find(at_least.begin(), at_least.end(), key) != at_least.end();
      out->append(std::string(key) + (bound ? " at least " : " ") +
                  FormatMilliseconds(latency.value(key, 0.0)));
    }
    out->append(".");
    const nlohmann::json warmup = aggregates.value("warmup", nlohmann::json::object());
    if (warmup.is_object() && warmup.value("n", int64_t{0}) > 0) {
      const bool first_call = warmup.value("signal", std::string()) == "first_call";
      out->append(" Warm-up: " + std::to_string(warmup.value("n", int64_t{0})) +
                  (first_call ? " first calls (start-up included, kept out of the latency)"
                              : " workers ready") +
                  ", mean " + FormatMilliseconds(warmup.value("mean_ms", 0.0)) + ", max " +
                  FormatMilliseconds(warmup.value("max_ms", 0.0)) + ".");
    }
    const nlohmann::json usage = aggregates.value("usage", nlohmann::json::object());
    const int64_t in = usage.value("input_tokens", int64_t{0});
    const int64_t outt = usage.value("output_tokens", int64_t{0});
    if (in > 0 || outt > 0) {
      out->append(" Tokens: " + std::to_string(in) + " in, " + std::to_string(outt) + " out.");
    }
    out->append("</p>");
  }
  // Issue 21: streamed replies' time to first token, and what the replies cost.
  const nlohmann::json ttft = aggregates.value("ttft_ms", nlohmann::json::object());
  if (ttft.is_object() && ttft.value("n", int64_t{0}) > 0) {
    std::string words = "Time to first token over " + std::to_string(ttft.value("n", int64_t{0})) +
                        " streamed replies: ";
    bool first = true;
    for (const char* key : {"p50", "p90", "p95", "p99", "mean", "max"}) {
      words += (first ? "" : " \xC2\xB7 ") + std::string(key) + " " +
               FormatMilliseconds(ttft.value(key, 0.0));
      first = false;
      const nlohmann::json iv = ttft.value(std::string(key) + "_interval", nlohmann::json());
      if (iv.is_array() && iv.size() == 2 && iv[0].is_number() && iv[1].is_number()) {
        words += " (95% interval " + FormatMilliseconds(iv[0].get<double>()) + "\xE2\x80\x93" +
                 FormatMilliseconds(iv[1].get<double>()) + ")";
      }
    }
    out->append("<p class=\"note\" id=\"ttft\">");
    AppendHtmlText(out, words + ".");
    out->append("</p>");
  }
  const nlohmann::json cost = aggregates.value("cost", nlohmann::json());
  if (cost.is_object()) {
    const std::string currency = cost.value("currency", nlohmann::json()).is_string()
                                     ? cost["currency"].get<std::string>()
                                     : "";
    auto money = [&](double x) {
      return fmt::format("{:.6g}", x) + (currency.empty() ? "" : " " + currency);
    };
    std::string words;
    if (cost.value("items", int64_t{0}) == 0) {
      words = "Cost: no reply carried the token counts its price needs.";
    } else {
      words = "Cost: " + money(cost.value("total", 0.0)) + " in all over " +
              std::to_string(cost.value("items", int64_t{0})) + " replies; per case mean " +
              money(cost.value("mean", 0.0));
      const nlohmann::json iv = cost.value("interval", nlohmann::json());
      if (iv.is_array() && iv.size() == 2 && iv[0].is_number() && iv[1].is_number()) {
        words += " (95% interval " + fmt::format("{:.6g}", iv[0].get<double>()) + "\xE2\x80\x93" +
                 fmt::format("{:.6g}", iv[1].get<double>()) + ")";
      }
      words += ", " + money(cost.value("per_1000_cases", 0.0)) + " per 1,000 cases.";
    }
    out->append("<p class=\"note\" id=\"cost\">");
    AppendHtmlText(out, words);
    out->append("</p>");
  }
  AppendSessions(out, record.value("sessions", nlohmann::json()));
  const nlohmann::json unstable = aggregates.value("unstable_cases", nlohmann::json::array());
  if (!unstable.empty()) {
    out->append("<p class=\"note\">" + std::to_string(unstable.size()) +
                " cases passed on some repeats and failed on others (unstable).</p>");
  }
  out->append("</section>");
}

/// A session's turn (issue 22): the conversation that led to it, from the history its request
/// carried (the earlier questions and the pipeline's own answers), each earlier turn linked to
/// its own card. Nothing for a plain case.
void AppendConversation(std::string* out, const CaseEntry& c) {
  std::string session;
  int turn = 0;
  if (c.shown == nullptr || !SplitTurnId(c.id, &session, &turn) || turn < 2) return;
  const nlohmann::json request = nlohmann::json::parse(c.shown->request, nullptr, false);
  const nlohmann::json history =
      request.is_object() ? request.value("history", nlohmann::json()) : nlohmann::json();
  if (!history.is_array()) return;
  out->append("<div class=\"conversation\"><p class=\"note\">Turn " + std::to_string(turn) +
              " of session <code>");
  AppendHtmlText(out, session);
  out->append("</code>; the conversation so far, as the pipeline was sent it:</p><ol>");
  for (size_t i = 0; i < history.size(); ++i) {
    const nlohmann::json& entry = history[i];
    if (!entry.is_object()) continue;
    out->append("<li><a href=\"#case-");
    AppendHtmlAttribute(out, TurnId(session, static_cast<int>(i) + 1));
    out->append("\">Q</a> ");
    const nlohmann::json q = entry.value("question", nlohmann::json());
    AppendClippedText(out, q.is_string() ? q.get<std::string>() : "", kShownQuestionCodePoints);
    out->append("<br>A: ");
    const nlohmann::json a = entry.value("answer", nlohmann::json());
    if (a.is_string()) {
      AppendBoundedText(out, a.get<std::string>());
    } else {
      out->append("<em>(no answer: errored or abstained)</em>");
    }
    out->append("</li>");
  }
  out->append("</ol></div>");
}

void AppendCaseCard(std::string* out, const CaseEntry& c, CaseCardWriter* cards, bool open) {
  static const nlohmann::json kNoGold = nlohmann::json::object();
  const nlohmann::json& gold = c.gold != nullptr ? *c.gold : kNoGold;
  const char* status = CaseStatusName(c.status);
  out->append("<details class=\"case st-");
  out->append(status);
  out->append("\" id=\"case-");
  AppendHtmlAttribute(out, c.id);
  out->append("\" data-status=\"");
  out->append(status);
  const FailureCause cause = c.shown != nullptr && c.status != CaseStatus::kPassed
                                 ? c.shown->scores.cause
                                 : FailureCause::kNone;
  if (cause != FailureCause::kNone) {
    out->append("\" data-cause=\"");
    out->append(FailureCauseId(cause));
  }
  out->append("\" data-tags=\"");
  AppendHtmlAttribute(out, TagsAttribute(JsonStrings(gold, "tags")));
  out->append("\" data-scores=\"");
  if (c.shown != nullptr) AppendHtmlAttribute(out, ScoresAttribute(c.shown->scores.values));
  out->append("\"");
  if (c.shown != nullptr) {
    out->append(" data-latency=\"" + FormatNumber(c.shown->latency_ms) + "\"");
  }
  out->append(open ? " open>" : ">");
  out->append("<summary><span class=\"badge\">");
  out->append(c.status == CaseStatus::kPassed    ? "PASSED"
              : c.status == CaseStatus::kErrored ? "ERRORED"
                                                 : "FAILED");
  out->append("</span>");
  if (cause != FailureCause::kNone && cause != FailureCause::kErrored) {
    out->append("<span class=\"cause\">");
    out->append(FailureCauseLabel(cause));
    out->append("</span>");
  }
  out->append("<code class=\"cid\">");
  AppendHtmlText(out, c.id);
  out->append("</code><span class=\"sq\"" + LangAttribute(cards->QuestionLang(gold)) + ">");
  AppendClippedText(out, JsonString(gold, "question"), kShownQuestionCodePoints);
  out->append("</span><span class=\"key\">");
  if (c.shown != nullptr) AppendHtmlText(out, cards->KeyScores(*c.shown));
  out->append("</span></summary><div class=\"cbody\">");
  AppendConversation(out, c);
  cards->AppendGold(out, gold);
  if (c.shown != nullptr) {
    cards->AppendReply(out, *c.shown, gold, /*two_columns=*/true, /*draw_clean=*/false);
  } else {
    out->append("<p class=\"warnbox\">The journal holds no reply for this case.</p>");
  }
  out->append("</div></details>\n");
}

}  // namespace

namespace {

void AppendLatency(std::string* out, const LoadedRun& run) {
  out->append("<section id=\"latency\"><h2>Latency</h2>");
  const nlohmann::json pipeline = run.record.value("pipeline", nlohmann::json::object());
  AppendLatencyChart(out, "latency-chart", {RunLatencies(JsonString(pipeline, "name"), run)});
  out->append("</section>");
}

std::string Percent(double share) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.1f%%", 100 * share);
  return buffer;
}

// Why the failed cases failed, at the top of the page: each cause (runner/run/failure_cause.h)
// with its count and share of all cases with a 95% interval, as a link that filters the cards
// (#cause=ID); under "errored", the most common error reasons, each a link to its cards.
void AppendCauses(std::string* out, const CauseBreakdown& breakdown,
                  const std::vector<ErrorReasonGroup>& reasons) {
  out->append("<section id=\"causes\"><h2>Why cases failed</h2>");
  if (breakdown.causes.empty()) {
    out->append("<p class=\"note\">No case failed or errored.</p></section>");
    return;
  }
  out->append(
      "<table class=\"causes\"><thead><tr><th>cause</th><th class=\"num\">cases</th><th>share "
      "of all " +
      std::to_string(breakdown.cases) + " (95% interval)</th></tr></thead><tbody>");
  for (const CauseCount& c : breakdown.causes) {
    out->append("<tr><td><a href=\"#cause=");
    out->append(FailureCauseId(c.cause));
    out->append("\">");
    out->append(FailureCauseLabel(c.cause));
    out->append("</a></td><td class=\"num\"><strong>" + std::to_string(c.count) +
                "</strong></td><td class=\"num\">" + Percent(c.share) + " (" +
                Percent(c.interval.low) + "\xE2\x80\x93" + Percent(c.interval.high) +
                ")</td></tr>");
    if (c.cause != FailureCause::kErrored || reasons.empty()) continue;
    out->append("<tr class=\"sub\"><td colspan=\"3\"><ol class=\"reasons\">");
    const size_t shown = std::min<size_t>(reasons.size(), 3);
    for (size_t i = 0; i < shown; ++i) {
      out->append("<li><a href=\"#errors-" + std::to_string(i + 1) + "\"><strong>" +
                  std::to_string(reasons[i].members.size()) + "</strong></a> ");
      AppendClippedText(out, reasons[i].reason, kShownQuestionCodePoints);
      if (reasons[i].variants > 1) {
        out->append(" <span class=\"note\">(and " + std::to_string(reasons[i].variants - 1) +
                    " like it)</span>");
      }
      out->append("</li>");
    }
    if (reasons.size() > shown) {
      out->append("<li class=\"note\">" + std::to_string(reasons.size() - shown) +
                  " more reasons, listed with the errored cases</li>");
    }
    out->append("</ol></td></tr>");
  }
  out->append(
      "</tbody></table><p class=\"note\">Each failed case has one cause, the first that applies "
      "in this order. A cause shows its cards.</p></section>");
}

// Cards open on arrival: the first kOpenCards failed or errored ones; the rest are folded.
constexpr int kOpenCards = 10;

std::string RenderRunPage(const LoadedRun& run) {
  CaseCardWriter cards(run);
  const std::vector<CaseEntry> cases = CollectCases(run);
  const nlohmann::json suite = run.record.value("suite", nlohmann::json::object());
  const nlohmann::json pipeline = run.record.value("pipeline", nlohmann::json::object());

  std::set<std::string> tags;
  std::map<std::string, nlohmann::json> metric_seen;
  std::map<CaseStatus, int64_t> counts;
  std::vector<const CaseEntry*> errored;
  std::vector<std::string> errors;
  for (const CaseEntry& c : cases) {
    counts[c.status] += 1;
    if (c.gold != nullptr) {
      for (const std::string& tag : JsonStrings(*c.gold, "tags")) tags.insert(tag);
    }
    if (c.shown != nullptr) {
      for (const auto& [metric, value] : c.shown->scores.values) metric_seen[metric] = value;
    }
    if (c.status == CaseStatus::kErrored) {
      errored.push_back(&c);
      errors.push_back(c.shown != nullptr ? c.shown->error : std::string());
    }
  }
  const std::vector<ErrorReasonGroup> reasons = GroupErrorReasons(errors);

  std::string html;
  html.reserve(4096 + cases.size() * 4096);
  AppendPageStart(&html,
                  "plumb run \xC2\xB7 " + JsonString(suite, "name") + " \xC2\xB7 " +
                      JsonString(pipeline, "name"),
                  "run");
  AppendMasthead(&html, run, cases, cards);
  html.append("<main class=\"wrap\">");
  html.append("<div class=\"top\">");
  AppendFloors(&html, run.record);
  AppendCauses(&html, RunCauseBreakdown(run), reasons);
  html.append("</div>");

  html.append("<section id=\"cases\"><h2>Cases</h2>");
  html.append(MarkLegendHtml());
  AppendFilterForm(&html,
                   {{"failed", "failed", counts[CaseStatus::kFailed]},
                    {"errored", "errored", counts[CaseStatus::kErrored]},
                    {"passed", "passed", counts[CaseStatus::kPassed]}},
                   {tags.begin(), tags.end()}, MetricOrder(nlohmann::json(metric_seen)), "score of",
                   static_cast<int64_t>(cases.size()));
  int open_left = kOpenCards;
  auto folded_note = [&](int64_t count) -> std::string {
    const int64_t open = std::min<int64_t>(count, std::max(open_left, 0));
    if (open == count) return "";
    return "<span class=\"n\">" + (open > 0 ? "first " + std::to_string(open) + " open, " : "") +
           std::to_string(count - open) + " folded</span>";
  };
  auto failed_group = [&] {
    AppendCaseGroup(&html, "failed", "Failed", counts[CaseStatus::kFailed],
                    folded_note(counts[CaseStatus::kFailed]), "No case failed on its answer.", [&] {
                      for (const CaseEntry& c : cases) {
                        if (c.status != CaseStatus::kFailed) continue;
                        AppendCaseCard(&html, c, &cards, open_left-- > 0);
                      }
                    });
  };
  // Errored cards under one heading per reason, the most common reason first.
  auto errored_group = [&] {
    AppendCaseGroup(&html, "errored", "Errored", counts[CaseStatus::kErrored],
                    folded_note(counts[CaseStatus::kErrored]), "No call failed.", [&] {
                      for (size_t g = 0; g < reasons.size(); ++g) {
                        std::string heading =
                            "<strong>" + std::to_string(reasons[g].members.size()) + "</strong> ";
                        AppendClippedText(&heading, reasons[g].reason, kShownQuestionCodePoints);
                        AppendCardListBreak(&html, "errors-" + std::to_string(g + 1), heading);
                        for (size_t i : reasons[g].members) {
                          AppendCaseCard(&html, *errored[i], &cards, open_left-- > 0);
                        }
                      }
                    });
  };
  // When the run failed for its errors, they lead.
  const bool errors_first =
      run.record.value("verdict", nlohmann::json::object()).value("exit_code", 0) == 3;
  if (errors_first) {
    errored_group();
    failed_group();
  } else {
    failed_group();
    errored_group();
  }
  AppendCaseGroup(&html, "passed", "Passed", counts[CaseStatus::kPassed],
                  counts[CaseStatus::kPassed] > 0
                      ? "<span class=\"n\">folded: open a case to read it</span>"
                      : "",
                  "No case passed.", [&] {
                    for (const CaseEntry& c : cases) {
                      if (c.status == CaseStatus::kPassed) AppendCaseCard(&html, c, &cards, false);
                    }
                  });
  html.append("</section>");
  AppendScoresTable(&html, run.record);
  html.append(
      FreshnessHtml(FreshnessFromJson(run.record.value("aggregates", nlohmann::json::object())
                                          .value("freshness", nlohmann::json()))));
  AppendLatency(&html, run);
  AppendTagGrid(&html, run.record, RunFailures(run));
  html.append("</main>");
  AppendPageEnd(&html);
  return html;
}

}  // namespace

bool WriteHtmlRunReport(const LoadedRun& run, const std::string& path, std::string* error) {
  return WriteHtmlPage(
      "HTML report", [&] { return RenderRunPage(run); }, path, error);
}

}  // namespace plumb
