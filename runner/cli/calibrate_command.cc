#include "runner/cli/calibrate_command.h"

#include <fmt/format.h>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "metrics/utf8.h"
#include "runner/base/atomic_file.h"
#include "runner/base/interrupt.h"
#include "runner/base/terminal_palette.h"
#include "runner/run/calibration.h"
#include "runner/run/exit_code.h"
#include "runner/run/grader_identity.h"
#include "runner/run/human_labels.h"
#include "runner/run/run_record.h"

namespace plumb {
namespace {

int Fail(const std::string& message, int code = kExitUsage) {
  std::fprintf(stderr, "plumb calibrate: %s\n", message.c_str());
  return code;
}

double Num(const nlohmann::json& j) { return j.is_number() ? j.get<double>() : std::nan(""); }

std::string Fixed(double value) {
  return std::isfinite(value) ? fmt::format("{:.3f}", value) : std::string("n/a");
}

std::string IntervalText(const nlohmann::json& estimate) {
  const nlohmann::json interval = estimate.value("interval", nlohmann::json::array());
  if (!interval.is_array() || interval.size() != 2) return "";
  return "[" + Fixed(Num(interval[0])) + ", " + Fixed(Num(interval[1])) + "]";
}

// An answer as a terminal shows it safely: JSON-quoted (control characters escaped), C1
// controls and bidi controls written as [U+XXXX], cut at 300 code points.
std::string TerminalQuoted(const nlohmann::json& answer) {
  if (!answer.is_string()) return "(abstained)";
  const std::string text = answer.get<std::string>();
  std::string kept;
  size_t pos = 0, count = 0;
  while (pos < text.size() && count < 300) {
    const size_t start = pos;
    const char32_t cp = metrics::NextCodePoint(text, &pos);
    count += 1;
    if ((cp >= 0x80 && cp <= 0x9F) || (cp >= 0x202A && cp <= 0x202E) ||
        (cp >= 0x2066 && cp <= 0x2069)) {
      kept += fmt::format("[U+{:04X}]", static_cast<uint32_t>(cp));
    } else {
      kept.append(text, start, pos - start);
    }
  }
  std::string quoted =
      nlohmann::json(kept).dump(-1, ' ', false, nlohmann::json::error_handler_t::replace);
  if (pos < text.size()) quoted += " ...";
  return quoted;
}

std::string FormatCalibration(const nlohmann::json& r, const GraderConfig& grader,
                              const CalibrationStatus& status, const std::string& record_path,
                              bool unchanged, bool colour) {
  const Palette p = MakePalette(colour);
  const nlohmann::json table = r["table"];
  const int64_t pp = table.value("pass_pass", int64_t{0}),
                pf = table.value("pass_fail", int64_t{0});
  const int64_t fp = table.value("fail_pass", int64_t{0}),
                ff = table.value("fail_fail", int64_t{0});
  std::string out = fmt::format("{}grader {}{} ({}, {}), identity {}\n", p.bold, grader.name,
                                p.reset, r.value("suite", ""), r.value("scale", ""),
                                r.value("identity", "").substr(0, 12));
  const nlohmann::json labels = r["labels"];
  out += fmt::format(
      "labels {}: {} labelled answers{}\n", labels.value("file", ""), labels.value("labelled", 0),
      labels.value("unlabelled", 0) > 0
          ? fmt::format(" ({} lines not labelled yet, left out)", labels.value("unlabelled", 0))
          : std::string());
  if (!r["grader_failed"].empty()) {
    out += fmt::format("{}the grader failed on {} labelled answers; they are left out{}\n", p.bad,
                       r["grader_failed"].size(), p.reset);
  }
  out +=
      fmt::format("\n  {}{:<20} {:>7}   {:<16}{}\n", p.dim, "", "value", "95% interval", p.reset);
  out += fmt::format("  {:<20} {:>7}\n", "n", r.value("n", 0));
  out += fmt::format("  {:<20} {:>7}   {:<16} people passed {} of {}\n", "base rate (human)",
                     Fixed(Num(r["base_rate"])), "", pp + pf, pp + pf + fp + ff);
  out += fmt::format("  {:<20} {:>7}   {:<16} the grader passed {}\n", "grader pass rate",
                     Fixed(Num(r["grader_pass_rate"])), "", pp + fp);
  out += fmt::format("  {:<20} {:>7}   {:<16}\n", "agreement", Fixed(Num(r["agreement"]["value"])),
                     IntervalText(r["agreement"]));
  out += fmt::format("  {:<20} {:>7}   {:<16} with base rate {}\n", "Cohen's kappa",
                     Fixed(Num(r["kappa"]["value"])), IntervalText(r["kappa"]),
                     Fixed(Num(r["base_rate"])));
  out += fmt::format("  {:<20} {:>7}   {:<16} passed {} of the {} answers people passed\n",
                     "sensitivity", Fixed(Num(r["sensitivity"]["value"])),
                     IntervalText(r["sensitivity"]), pp, pp + pf);
  out += fmt::format("  {:<20} {:>7}   {:<16} failed {} of the {} answers people failed\n",
                     "specificity", Fixed(Num(r["specificity"]["value"])),
                     IntervalText(r["specificity"]), ff, fp + ff);
  if (r.contains("spearman_rho")) {
    out += fmt::format("  {:<20} {:>7}\n", "Spearman's rho", Fixed(Num(r["spearman_rho"])));
    out += fmt::format("  {:<20} {:>7}   (on the grader's scale)\n", "mean abs. difference",
                       Fixed(Num(r["mean_absolute_difference"])));
  }
  if (r["self_consistency"].is_object()) {
    const nlohmann::json& s = r["self_consistency"];
    out += fmt::format(
        "  {:<20} {:>7}   {:<16} share of {} answers graded alike on all {} "
        "repeats\n",
        "self-consistency", Fixed(Num(s["value"])), "", s.value("answers", 0),
        s.value("repeats", 0));
  } else {
    out += fmt::format("  {:<20} {:>7}   {:<16} (--repeat 2 or more measures it)\n",
                       "self-consistency", "n/a", "");
  }
  out += fmt::format("\n  {:<12} {:>12} {:>12}\n", "", "grader pass", "grader fail");
  out += fmt::format("  {:<12} {:>12} {:>12}\n", "human pass", pp, pf);
  out += fmt::format("  {:<12} {:>12} {:>12}\n", "human fail", fp, ff);
  const nlohmann::json& disagreements = r["disagreements"];
  out += fmt::format("\n{} disagreement{}{}\n", disagreements.size(),
                     disagreements.size() == 1 ? "" : "s",
                     disagreements.empty() ? "" : ", worst first:");
  for (const nlohmann::json& d : disagreements) {
    out += fmt::format("  line {:<4} {}  human {}, grade {}: {}\n", d.value("line", 0),
                       d.value("id", ""), d["label"].dump(), Fixed(Num(d["grade"])),
                       TerminalQuoted(d["reason"]));
    out += fmt::format("      answer {}\n", TerminalQuoted(d["answer"]));
  }
  if (status.AllowsGate()) {
    out += fmt::format(
        "\n{}grade.{} may gate{}: n {} >= min_labels {}, kappa's lower bound {} >= "
        "min_kappa {}\n",
        p.good, grader.name, p.reset, r.value("n", 0), grader.min_labels,
        Fixed(Num(r["kappa"]["interval"][0])), Fixed(grader.min_kappa));
  } else {
    out += fmt::format("\n{}grade.{} may not gate{}: it {}\n", p.bad, grader.name, p.reset,
                       status.why_not);
  }
  out += (unchanged ? "record unchanged: " : "record written to ") + record_path + "\n";
  return out;
}

}  // namespace

int CalibrateCommand(const CalibrateOptions& options) {
  if (options.repeat < 1 || options.repeat > 20) {
    return Fail("--repeat must be 1 to 20 (2 or more measures self-consistency)");
  }
  PreparedSuite prepared;
  if (!PrepareSuite(options.suite_path, options.pipelines_file, /*expand_env=*/true, &prepared)) {
    return kExitUsage;
  }
  Suite& suite = prepared.suite;
  GraderConfig* grader = nullptr;
  for (GraderConfig& g : suite.graders) {
    if (g.name == options.grader) grader = &g;
  }
  if (grader == nullptr) {
    std::string list;
    for (const GraderConfig& g : suite.graders) list += (list.empty() ? "" : ", ") + g.name;
    return Fail("--grader " + options.grader + ": no such grader in " + suite.path + " (it has: " +
                (list.empty() ? std::string("none; add a graders: block") : list) + ")");
  }
  const std::string labels_path =
      !options.labels_path.empty() ? options.labels_path : grader->labels_path;
  if (labels_path.empty()) {
    return Fail("no labels file for grader '" + grader->name +
                "': pass --labels FILE or name one "
                "with `labels:` under graders." +
                grader->name + " (plumb label RUN_DIR --out FILE writes a sheet to fill in)");
  }
  HumanLabels labels;
  std::vector<std::string> problems;
  if (!ReadHumanLabels(labels_path, suite, grader->scale, &labels, &problems)) {
    for (const std::string& problem : problems) std::fprintf(stderr, "%s\n", problem.c_str());
    return Fail(std::to_string(problems.size()) + " problem" + (problems.size() == 1 ? "" : "s") +
                " in " + labels_path + "; nothing was graded");
  }
  if (labels.labelled.empty()) {
    return Fail(labels_path + " has no labelled answer yet (" + std::to_string(labels.unlabelled) +
                " lines with an empty \"label\")");
  }

  // Each calibration repeat is a whole grade (the grader's own `repeat` calls); round k asks
  // with grader repeat indices k*R .. k*R+R-1, so round 0 is exactly what a run asks and shares
  // its cache entries, and later rounds are real calls (their requests, and keys, differ).
  const int per_grade = grader->repeat;
  grader->repeat = per_grade * options.repeat;
  GraderSession session;
  std::string error;
  if (!StartGraders(prepared, {grader->name}, options.cache, "", nlohmann::json::object(), &session,
                    &error)) {
    return Fail(error);
  }
  const std::string identity = session.inputs.graders.front().identity;
  std::vector<CaseRecord> records(labels.labelled.size());
  std::vector<GradeTarget> targets;
  for (size_t i = 0; i < labels.labelled.size(); ++i) {
    const HumanLabel& label = labels.labelled[i];
    CaseRecord& record = records[i];
    record.id = label.id;
    record.repeat = static_cast<int>(i);  // one answer per (case, repeat) in the grading pass
    if (label.answer.is_string()) {
      record.parsed.answer = label.answer.get<std::string>();
    } else {
      record.parsed.abstained = true;
    }
    for (const nlohmann::json& c : label.cited) {
      if (!c.is_object() || !c.value("doc", nlohmann::json()).is_string()) continue;
      SourceRef ref;
      ref.doc = c["doc"].get<std::string>();
      if (c.value("start", nlohmann::json()).is_number_integer())
        ref.start = c["start"].get<int64_t>();
      if (c.value("end", nlohmann::json()).is_number_integer()) ref.end = c["end"].get<int64_t>();
      if (!(ref.start && ref.end) && c.value("text", nlohmann::json()).is_string() &&
          !c["text"].get<std::string>().empty()) {
        ref.quote = c["text"].get<std::string>();
      }
      record.parsed.citations.push_back(std::move(ref));
    }
    targets.push_back({&record, suite.case_ids.Find(suite.cases, label.id)});
  }
  GradingCounts counts;
  bool interrupted = false;
  {
    InterruptWatch watch([&session] { session.Shutdown(); });
    session.inputs.stop = &watch.interrupted();
    const bool ok = GradeRecords(session.inputs, targets, &counts, &interrupted, &error);
    session.Shutdown();
    if (!ok) return Fail(error);
  }
  std::fprintf(stderr, "%s\n", GradingSummaryLine(counts).c_str());
  if (interrupted) {
    return Fail(
        "interrupted; no record written. Grades already given are in the cache, so "
        "running plumb calibrate again continues from there",
        kExitInterrupted);
  }
  grader->repeat = per_grade;

  CalibrationInputs in;
  in.suite = &suite;
  in.grader = grader;
  in.identity = identity;
  in.labels = &labels;
  in.repeat = options.repeat;
  in.created_at = NowIso8601();
  for (size_t i = 0; i < records.size(); ++i) {
    GradedLabel g;
    g.label = &labels.labelled[i];
    const nlohmann::json entry = records[i].grades.value(grader->name, nlohmann::json());
    if (!entry.is_object() || entry.contains("error")) {
      g.reason = entry.is_object() ? entry.value("error", std::string("not graded"))
                                   : std::string("not graded");
    } else {
      const nlohmann::json scores = entry.value("scores", nlohmann::json::array());
      g.reason = entry.value("reason", std::string());
      for (int k = 0; k < options.repeat; ++k) {
        double sum = 0;
        for (int r = 0; r < per_grade; ++r) {
          sum += scores.at(static_cast<size_t>(k * per_grade + r)).get<double>();
        }
        g.rounds.push_back(sum / per_grade);
      }
    }
    in.graded.push_back(std::move(g));
  }
  const nlohmann::json record = CalibrationRecordJson(in);
  const std::string path = CalibrationRecordPath(suite.path, grader->name);
  std::error_code ec;
  std::filesystem::create_directories(std::filesystem::path(path).parent_path(), ec);
  // A record that says the same as the one in place is not rewritten (only its time would
  // change), so a committed record stays as it is when nothing changed.
  bool unchanged = false;
  if (std::ifstream old_file(path, std::ios::binary); old_file) {
    std::stringstream old_text;
    old_text << old_file.rdbuf();
    nlohmann::json old_record = nlohmann::json::parse(old_text.str(), nullptr, false);
    nlohmann::json new_record = record;
    if (old_record.is_object()) {
      old_record.erase("created_at");
      new_record.erase("created_at");
      // Compared as written, so numbers read back from the file compare as they were printed.
      unchanged = old_record.dump() ==
                  nlohmann::json::parse(
                      new_record.dump(-1, ' ', false, nlohmann::json::error_handler_t::replace),
                      nullptr, false)
                      .dump();
    }
  }
  if (!unchanged) {
    std::unique_ptr<AtomicFile> file = AtomicFile::Open(path, &error);
    if (file == nullptr) return Fail(error);
    file->Write(record.dump(2, ' ', false, nlohmann::json::error_handler_t::replace) + "\n");
    if (!file->Commit(&error)) return Fail(error);
  }
  const CalibrationStatus status = AssessCalibration(suite.path, *grader, identity);
  if (options.json) {
    nlohmann::json out = record;
    out["gate"] = CalibrationSummary(status, *grader);
    std::printf("%s\n", out.dump(2, ' ', false, nlohmann::json::error_handler_t::replace).c_str());
  } else {
    std::fputs(
        FormatCalibration(record, *grader, status, path, unchanged, UseColour(stdout)).c_str(),
        stdout);
  }
  return kExitOk;
}

}  // namespace plumb
