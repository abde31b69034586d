#ifndef PLUMB_RUNNER_REPORT_HTML_CASE_CARD_H_
#define PLUMB_RUNNER_REPORT_HTML_CASE_CARD_H_

/// CaseCardWriter draws the parts of one case that the run and drift pages of the HTML report
/// share (runner/report/html_report.h): the question and gold, and for one reply the answer with
/// its token diff, the scores, the error details, the citations drawn on the source text and the
/// retrieved list. It reads everything from a LoadedRun (the gold recorded in run.json, the
/// journal records) and the run's corpus directory when that still exists; it never needs the
/// suite file or the pipeline. Every string it writes from the run is escaped.

#include <map>
#include <memory>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "metrics/normalize.h"
#include "metrics/offset_units.h"
#include "runner/run/case_record.h"
#include "runner/run/run_reader.h"
#include "runner/suite/corpus.h"

namespace plumb {

/// How a case came out over its repeats.
enum class CaseStatus { kPassed, kFailed, kErrored };
const char* CaseStatusName(CaseStatus status);  // "passed" | "failed" | "errored"

/// The record a card shows for a case: the first repeat that did not pass, else the first.
/// Null when `records` is empty.
const CaseRecord* RepresentativeRecord(const std::vector<const CaseRecord*>& records);

/// Passed when every repeat passed; errored when the representative record errored; else failed.
CaseStatus StatusOf(const std::vector<const CaseRecord*>& records);

/// Not thread-safe. `run` must outlive the writer.
class CaseCardWriter {
 public:
  explicit CaseCardWriter(const LoadedRun& run);
  CaseCardWriter(const CaseCardWriter&) = delete;
  CaseCardWriter& operator=(const CaseCardWriter&) = delete;

  /// True when the run's corpus directory could be opened here.
  bool corpus_available() const { return corpus_ != nullptr; }
  /// A sentence for the page header when citations cannot be drawn on the documents exactly as
  /// the run saw them (no corpus, corpus unreadable, corpus changed); empty otherwise.
  const std::string& corpus_note() const { return corpus_note_; }

  /// The question, gold answers, patterns, numeric gold and tags (as filter links).
  void AppendGold(std::string* out, const nlohmann::json& gold) const;

  /// One reply of the case whose gold is `gold`: the answer and its token diff against the
  /// closest gold answer, the scores (those under a case_pass minimum marked), latency, attempts
  /// and usage, error details, warnings, citations drawn on the source text, and the retrieved
  /// list with the rank at which a gold span first appeared. `two_columns` puts the scores and
  /// the retrieved list beside the answer and citations (a full-width card) instead of below.
  /// Unless `draw_clean` is set, a passed reply whose every citation hits gold and whose every
  /// gold span is cited gets a sentence saying so instead of the drawn excerpts (nothing there
  /// needs review, and large reports stay small).
  void AppendReply(std::string* out, const CaseRecord& record, const nlohmann::json& gold,
                   bool two_columns, bool draw_clean);

  /// The answer with its token diff and the scores only: for cases whose outcome did not change
  /// between two runs, where the full reply would only repeat what the reviewer need not read.
  void AppendReplyBrief(std::string* out, const CaseRecord& record, const nlohmann::json& gold);

  /// The language to mark on the case's question (text_language.h), "" for English; its gold
  /// answers and the reply fall back to it when their own text does not tell.
  std::string QuestionLang(const nlohmann::json& gold) const;

  /// The short line of key scores a folded card shows: case_pass metrics, token_f1 and
  /// citation_recall when defined, and the latency.
  std::string KeyScores(const CaseRecord& record) const;

 private:
  struct PlacedRef;
  const std::string* DocumentText(const std::string& doc);
  const metrics::CodePointIndex* DocumentIndex(const std::string& doc);
  std::vector<PlacedRef> Place(const std::vector<SourceRef>& refs,
                               const std::vector<nlohmann::json>& gold_spans, const char* what);
  void AppendAnswer(std::string* out, const CaseRecord& record, const nlohmann::json& gold) const;
  void AppendScores(std::string* out, const CaseRecord& record) const;
  void AppendCitations(std::string* out, const CaseRecord& record, const nlohmann::json& gold,
                       bool draw_clean);
  void AppendRetrieved(std::string* out, const CaseRecord& record, const nlohmann::json& gold);

  metrics::NormalizationProfile profile_ = metrics::NormalizationProfile::kSquad;
  std::string lang_;
  double min_overlap_ = 0;
  metrics::OffsetUnit offsets_ = metrics::OffsetUnit::kCodePoints;
  std::map<std::string, double> case_pass_;
  std::unique_ptr<Corpus> corpus_;
  std::string corpus_note_;
  std::map<std::string, std::unique_ptr<metrics::CodePointIndex>> indexes_;
  std::map<std::string, std::string> document_langs_;  // doc -> language to mark
  std::map<std::string, std::vector<const CaseRecord*>> records_by_id_;
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_HTML_CASE_CARD_H_
