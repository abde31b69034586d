#include "runner/report/html_case_card.h"

#include <algorithm>
#include <cstdio>

#include "metrics/citation_metrics.h"
#include "runner/report/html_bounded_text.h"
#include "runner/report/html_escape.h"
#include "runner/report/html_report_parts.h"
#include "runner/report/source_excerpt.h"
#include "runner/report/text_language.h"
#include "runner/report/token_diff.h"

namespace plumb {

const char* CaseStatusName(CaseStatus status) {
  switch (status) {
    case CaseStatus::kPassed:
      return "passed";
    case CaseStatus::kFailed:
      return "failed";
    case CaseStatus::kErrored:
      return "errored";
  }
  return "failed";
}

const CaseRecord* RepresentativeRecord(const std::vector<const CaseRecord*>& records) {
  if (records.empty()) return nullptr;
  const CaseRecord* first = records.front();
  const CaseRecord* first_failing = nullptr;
  for (const CaseRecord* r : records) {
    if (r->repeat < first->repeat) first = r;
    if (!r->scores.pass && (first_failing == nullptr || r->repeat < first_failing->repeat)) {
      first_failing = r;
    }
  }
  return first_failing != nullptr ? first_failing : first;
}

CaseStatus StatusOf(const std::vector<const CaseRecord*>& records) {
  const CaseRecord* shown = RepresentativeRecord(records);
  if (shown == nullptr) return CaseStatus::kErrored;
  if (shown->scores.pass) return CaseStatus::kPassed;
  return shown->scores.errored ? CaseStatus::kErrored : CaseStatus::kFailed;
}

namespace {

std::vector<nlohmann::json> GoldSpans(const nlohmann::json& gold) {
  std::vector<nlohmann::json> out;
  auto it = gold.find("sources");
  if (it == gold.end() || !it->is_array()) return out;
  for (const nlohmann::json& span : *it) {
    if (span.is_object() && span.value("doc", nlohmann::json()).is_string() &&
        span.value("start", nlohmann::json()).is_number_integer() &&
        span.value("end", nlohmann::json()).is_number_integer()) {
      out.push_back(span);
    }
  }
  return out;
}

std::string SpanWords(int64_t start, int64_t end) {
  return "characters " + std::to_string(start) + "\xE2\x80\x93" + std::to_string(end);
}

constexpr size_t kMaxRetrievedShown = 20;
// Tokens of an answer's diff drawn as elements (issue 17 item 10); the rest is plain text.
constexpr size_t kDiffTokensDrawn = 300;
// A doc id a pipeline cites is untrusted too; ids longer than this are cut with "show all".
constexpr size_t kShownDocIdCodePoints = 200;

}  // namespace

/// A citation or retrieved item placed on its document, with the gold spans it hits.
struct CaseCardWriter::PlacedRef {
  metrics::PlacedCitation placed;
  std::vector<size_t> hits;  // indexes of the gold spans it hits
};

CaseCardWriter::CaseCardWriter(const LoadedRun& run) {
  for (const CaseRecord& r : run.records) records_by_id_[r.id].push_back(&r);
  const nlohmann::json& record = run.record;
  const nlohmann::json suite = record.value("suite", nlohmann::json::object());
  metrics::ParseNormalizationProfile(JsonString(suite, "normalize"), &profile_);
  lang_ = suite.value("lang", std::string("en"));
  if (suite.contains("min_overlap") && suite["min_overlap"].is_number()) {
    min_overlap_ = suite["min_overlap"].get<double>();
  }
  if (suite.contains("case_pass") && suite["case_pass"].is_object()) {
    for (const auto& [metric, minimum] : suite["case_pass"].items()) {
      if (minimum.is_number()) case_pass_[metric] = minimum.get<double>();
    }
  }
  const nlohmann::json pipeline = record.value("pipeline", nlohmann::json::object());
  const nlohmann::json config = pipeline.value("config", nlohmann::json::object());
  if (config.is_object()) metrics::ParseOffsetUnit(JsonString(config, "offsets"), &offsets_);

  const std::string dir = JsonString(record, "corpus_dir");
  if (dir.empty()) {
    corpus_note_ =
        "The suite names no corpus: citations are listed, and drawn only on the gold span texts "
        "recorded in the run.";
    return;
  }
  auto corpus = std::make_unique<Corpus>();
  std::string error;
  if (!corpus->Open(dir, &error)) {
    corpus_note_ = "The corpus was not available here (" + error +
                   "): citations are drawn on the gold span texts recorded in the run, and parts "
                   "of citations outside them are not shown.";
    return;
  }
  const std::string recorded = JsonString(record, "corpus_fingerprint");
  if (!recorded.empty() && corpus->Fingerprint() != recorded) {
    corpus_note_ = "The corpus in " + dir +
                   " has changed since the run (its fingerprint differs): citations are drawn on "
                   "the documents as they are now, and may sit on different text than the run "
                   "saw.";
  }
  corpus_ = std::move(corpus);
}

const std::string* CaseCardWriter::DocumentText(const std::string& doc) {
  if (corpus_ == nullptr) return nullptr;
  std::string error;
  const Document* document = corpus_->Get(doc, &error);
  return document == nullptr ? nullptr : &document->text;
}

const metrics::CodePointIndex* CaseCardWriter::DocumentIndex(const std::string& doc) {
  const std::string* text = DocumentText(doc);
  if (text == nullptr) return nullptr;
  std::unique_ptr<metrics::CodePointIndex>& index = indexes_[doc];
  if (index == nullptr) index = std::make_unique<metrics::CodePointIndex>(*text);
  return index.get();
}

std::vector<CaseCardWriter::PlacedRef> CaseCardWriter::Place(
    const std::vector<SourceRef>& refs, const std::vector<nlohmann::json>& gold_spans,
    const char* what) {
  metrics::DocumentLookup documents;
  if (corpus_ != nullptr) documents = [this](const std::string& doc) { return DocumentText(doc); };
  const metrics::CodePointIndexLookup indexes = [this](const std::string& doc) {
    return DocumentIndex(doc);
  };
  metrics::CitationMatcher matcher(min_overlap_, documents, indexes);
  std::vector<metrics::GoldSpanRef> gold;
  for (const nlohmann::json& span : gold_spans) {
    gold.push_back(
        {span["doc"].get<std::string>(), span["start"].get<int64_t>(), span["end"].get<int64_t>()});
  }
  std::vector<PlacedRef> out;
  for (size_t i = 0; i < refs.size(); ++i) {
    const SourceRef& ref = refs[i];
    const std::string label = std::string(what) + " " + std::to_string(i + 1);
    metrics::CitedRef cited{ref.doc, ref.start, ref.end, ref.quote};
    PlacedRef placed;
    bool converted = true;
    if (offsets_ != metrics::OffsetUnit::kCodePoints && ref.start && ref.end) {
      // As the scorer does: the pipeline's offsets become code points before anything else.
      const metrics::CodePointIndex* index = DocumentIndex(ref.doc);
      int64_t start = 0, end = 0;
      std::string error;
      if (index != nullptr) {
        if (metrics::ConvertToCodePoints(*index, offsets_, *ref.start, &start, &error) &&
            metrics::ConvertToCodePoints(*index, offsets_, *ref.end, &end, &error)) {
          cited.start = start;
          cited.end = end;
        } else {
          placed.placed.kind = metrics::PlacedCitation::Kind::kMiss;
          placed.placed.ref = cited;
          placed.placed.warning = label + ": " + error;
          converted = false;
        }
      }
    }
    if (converted) placed.placed = matcher.Place(cited, label);
    for (size_t g = 0; g < gold.size(); ++g) {
      if (matcher.Hits(placed.placed, gold[g])) placed.hits.push_back(g);
    }
    out.push_back(std::move(placed));
  }
  return out;
}

std::string CaseCardWriter::QuestionLang(const nlohmann::json& gold) const {
  return LangToMark(JsonString(gold, "question"), lang_);
}

void CaseCardWriter::AppendGold(std::string* out, const nlohmann::json& gold) const {
  const std::vector<std::string> answers = JsonStrings(gold, "answers");
  out->append("<h4>Gold answers</h4>");
  if (answers.empty()) {
    out->append("<p class=\"answer none\">none: the pipeline should abstain</p>");
  } else {
    std::string joined;
    for (const std::string& a : answers) joined += a + "\n";
    const std::string question = QuestionLang(gold);
    out->append("<ol class=\"gold\"" +
                LangAttribute(LangToMark(joined, question.empty() ? "en" : question)) + ">");
    for (const std::string& a : answers) {
      out->append("<li>");
      AppendBoundedText(out, a);
      out->append("</li>");
    }
    out->append("</ol>");
  }
  const std::vector<std::string> patterns = JsonStrings(gold, "patterns");
  if (!patterns.empty()) {
    out->append("<p class=\"meta\">patterns: ");
    for (size_t i = 0; i < patterns.size(); ++i) {
      if (i > 0) out->append(", ");
      out->append("<code>");
      AppendBoundedText(out, patterns[i]);
      out->append("</code>");
    }
    out->append("</p>");
  }
  auto number = gold.find("number");
  if (number != gold.end() && number->is_object()) {
    out->append("<p class=\"meta\">number: ");
    if (number->value("value", nlohmann::json()).is_number()) {
      out->append(FormatNumber(number->at("value").get<double>()));
    }
    if (number->value("tolerance", 0.0) != 0.0) {
      out->append(" \xC2\xB1 " + FormatNumber(number->value("tolerance", 0.0)));
    }
    const std::string unit = JsonString(*number, "unit");
    if (!unit.empty()) {
      out->append(" ");
      AppendHtmlText(out, unit);
    }
    out->append("</p>");
  }
  const std::vector<std::string> tags = JsonStrings(gold, "tags");
  if (!tags.empty()) {
    out->append("<p class=\"tags\">");
    for (const std::string& tag : tags) {
      out->append("<a href=\"#tag=");
      AppendHtmlAttribute(out, PercentEncode(tag));
      out->append("\">#");
      AppendHtmlText(out, tag);
      out->append("</a>");
    }
    out->append("</p>");
  }
}

void CaseCardWriter::AppendAnswer(std::string* out, const CaseRecord& record,
                                  const nlohmann::json& gold) const {
  out->append("<h4>Answer</h4>");
  const std::string* answer = nullptr;
  if (!record.error.empty()) {
    out->append("<p class=\"answer none\">no answer: the call failed</p>");
    return;
  }
  if (record.parsed.answer && !record.parsed.abstained) {
    answer = &*record.parsed.answer;
    const std::string question = QuestionLang(gold);
    out->append("<p class=\"answer\"" +
                LangAttribute(LangToMark(*answer, question.empty() ? "en" : question)) + ">");
    AppendBoundedText(out, *answer);
    out->append("</p>");
  } else {
    out->append("<p class=\"answer none\">abstained</p>");
  }
  const std::vector<std::string> answers = JsonStrings(gold, "answers");
  const AnswerDiff diff = DiffAgainstClosestGold(answer, answers, profile_, lang_);
  if (diff.tokens.empty()) return;
  size_t matched = 0, missing = 0, extra = 0;
  size_t all_matched = 0;
  for (const DiffToken& t : diff.tokens) all_matched += t.kind == DiffToken::Kind::kMatched;
  if (all_matched == diff.tokens.size() && diff.gold_index >= 0) {
    out->append("<p class=\"legend\">All " + std::to_string(all_matched) +
                " answer tokens match gold answer " + std::to_string(diff.gold_index + 1) +
                " (F1 " + FormatScore(diff.token_f1) + ").</p>");
    return;
  }
  out->append("<p class=\"diff\">");
  // A diff of some hundred thousand tokens is as many elements: the first kDiffTokensDrawn are
  // drawn, the rest of the answer's tokens follow as plain text, bounded (the whole answer is
  // above, with "show all"); the counts below cover every token.
  size_t drawn = 0;
  std::string rest;
  for (const DiffToken& t : diff.tokens) {
    if (drawn == kDiffTokensDrawn) {
      if (t.kind == DiffToken::Kind::kMatched) ++matched;
      if (t.kind == DiffToken::Kind::kMissing) ++missing;
      if (t.kind == DiffToken::Kind::kExtra) ++extra;
      if (t.kind != DiffToken::Kind::kMissing && rest.size() < 4 * kShownCodePoints) {
        rest += (rest.empty() ? "" : " ") + t.text;
      }
      continue;
    }
    ++drawn;
    switch (t.kind) {
      case DiffToken::Kind::kMatched:
        ++matched;
        out->append("<span class=\"tk ok\">");
        AppendHtmlText(out, t.text);
        out->append("</span>");
        break;
      case DiffToken::Kind::kMissing:
        ++missing;
        out->append("<del class=\"tk miss\">");
        AppendHtmlText(out, t.text);
        out->append("</del>");
        break;
      case DiffToken::Kind::kExtra:
        ++extra;
        out->append("<ins class=\"tk extra\">");
        AppendHtmlText(out, t.text);
        out->append("</ins>");
        break;
    }
  }
  if (drawn < diff.tokens.size()) {
    out->append(" <span class=\"rest\">");
    AppendClippedText(out, rest, kShownCodePoints);
    out->append("</span>");
  }
  out->append("</p><p class=\"legend\">");
  if (drawn < diff.tokens.size()) {
    out->append("The diff is drawn for the first " + std::to_string(drawn) + " of " +
                std::to_string(diff.tokens.size()) +
                " tokens; the rest of the answer's tokens follow plain, cut at " +
                std::to_string(kShownCodePoints) + " characters. ");
  }
  if (diff.gold_index >= 0) {
    out->append("vs gold answer " + std::to_string(diff.gold_index + 1) + ", the closest (F1 " +
                FormatScore(diff.token_f1) + "): ");
  } else {
    out->append("no gold answer has tokens, so every answer token is extra: ");
  }
  out->append(std::to_string(matched) + " matched \xC2\xB7 " + std::to_string(missing) +
              " missing \xC2\xB7 " + std::to_string(extra) + " extra</p>");
}

void CaseCardWriter::AppendScores(std::string* out, const CaseRecord& record) const {
  // </dt> and </dd> are left out, as HTML allows before the next <dt>, <dd> or </dl>: a
  // 10,000-case page lists some 100,000 scores, and the end tags were 1 MB of it.
  out->append("<h4>Scores</h4><dl class=\"sc\">");
  for (const auto& [metric, value] : record.scores.values) {
    auto minimum = case_pass_.find(metric);
    const bool gate = minimum != case_pass_.end();
    const bool low = gate && value < minimum->second;
    out->append(low ? "<dt class=\"low\">" : "<dt>");
    AppendHtmlText(out, metric);
    out->append(low ? "<dd class=\"low\">" : "<dd>");
    out->append(FormatScore(value));
    if (gate) {
      out->append(low ? "<span> \xE2\x9C\x97 case needs \xE2\x89\xA5 "
                      : "<span> \xE2\x9C\x93 case needs \xE2\x89\xA5 ");
      out->append(FormatScore(minimum->second) + "</span>");
    }
  }
  out->append("</dl><p class=\"meta\">");
  out->append(record.error.empty() ? "latency " + FormatMilliseconds(record.latency_ms)
              : record.latency_lower_bound
                  ? "latency at least " + FormatMilliseconds(record.latency_ms) + " (timed out)"
                  : "failed after " + FormatMilliseconds(record.latency_ms));
  out->append(" \xC2\xB7 attempts " + std::to_string(record.attempts));
  if (record.parsed.input_tokens || record.parsed.output_tokens) {
    out->append(" \xC2\xB7 tokens in " +
                (record.parsed.input_tokens ? std::to_string(*record.parsed.input_tokens) : "?") +
                ", out " +
                (record.parsed.output_tokens ? std::to_string(*record.parsed.output_tokens) : "?"));
  }
  auto found = records_by_id_.find(record.id);
  const std::vector<const CaseRecord*> repeats =
      found == records_by_id_.end() ? std::vector<const CaseRecord*>() : found->second;
  if (repeats.size() > 1) {
    size_t passed = 0;
    for (const CaseRecord* r : repeats) passed += r->scores.pass ? 1 : 0;
    out->append(" \xC2\xB7 repeat " + std::to_string(record.repeat) + " shown; passed " +
                std::to_string(passed) + " of " + std::to_string(repeats.size()) + " repeats");
    if (passed != 0 && passed != repeats.size()) out->append(" (unstable)");
  }
  out->append("</p>");
}

std::string CaseCardWriter::KeyScores(const CaseRecord& record) const {
  std::vector<std::string> metrics;
  for (const auto& [metric, minimum] : case_pass_) metrics.push_back(metric);
  for (const char* m : {"token_f1", "citation_recall"}) {
    if (std::find(metrics.begin(), metrics.end(), m) == metrics.end()) metrics.push_back(m);
  }
  std::string out;
  for (const std::string& metric : metrics) {
    auto it = record.scores.values.find(metric);
    if (it == record.scores.values.end()) continue;
    if (!out.empty()) out += " \xC2\xB7 ";
    out += metric + " " + FormatScore(it->second);
  }
  if (!out.empty()) out += " \xC2\xB7 ";
  out += FormatMilliseconds(record.latency_ms);
  return out;
}

void CaseCardWriter::AppendCitations(std::string* out, const CaseRecord& record,
                                     const nlohmann::json& gold, bool draw_clean) {
  const std::vector<nlohmann::json> gold_spans = GoldSpans(gold);
  const std::vector<SourceRef>& citations = record.parsed.citations;
  if (gold_spans.empty() && citations.empty()) return;
  const std::vector<PlacedRef> placed = Place(citations, gold_spans, "citation");
  std::vector<bool> gold_hit(gold_spans.size(), false);
  for (const PlacedRef& p : placed) {
    for (size_t g : p.hits) gold_hit[g] = true;
  }

  out->append("<h4>Citations</h4><ul class=\"refs\">");
  for (size_t g = 0; g < gold_spans.size(); ++g) {
    const nlohmann::json& span = gold_spans[g];
    out->append("<li><span class=\"lbl\">G" + std::to_string(g + 1) + "</span> gold ");
    AppendBoundedText(out, span["doc"].get<std::string>(), kShownDocIdCodePoints);
    out->append(" \xC2\xB7 " + SpanWords(span["start"].get<int64_t>(), span["end"].get<int64_t>()) +
                " \xC2\xB7 ");
    out->append(gold_hit[g] ? "<span class=\"hit\">cited</span>"
                            : "<span class=\"nohit\">missed</span>");
    out->append("</li>");
  }
  for (size_t i = 0; i < placed.size(); ++i) {
    const metrics::PlacedCitation& p = placed[i].placed;
    out->append("<li><span class=\"lbl\">C" + std::to_string(i + 1) + "</span> ");
    AppendBoundedText(out, p.ref.doc, kShownDocIdCodePoints);
    if (p.kind == metrics::PlacedCitation::Kind::kSpan) {
      out->append(" \xC2\xB7 " + SpanWords(*p.ref.start, *p.ref.end));
      if (citations[i].quote && !citations[i].start) out->append(" (quote located)");
    } else if (p.kind == metrics::PlacedCitation::Kind::kDocOnly) {
      out->append(" \xC2\xB7 the whole document");
    }
    out->append(" \xC2\xB7 ");
    if (!placed[i].hits.empty()) {
      out->append("<span class=\"hit\">hits");
      for (size_t g : placed[i].hits) out->append(" G" + std::to_string(g + 1));
      out->append("</span>");
    } else if (p.kind == metrics::PlacedCitation::Kind::kMiss) {
      // The warning opens with "citation N: ", which the label already says.
      const std::string prefix = "citation " + std::to_string(i + 1) + ": ";
      const std::string why =
          p.warning.rfind(prefix, 0) == 0 ? p.warning.substr(prefix.size()) : p.warning;
      out->append("<span class=\"nohit\">stray: ");
      AppendBoundedText(out, why);
      out->append("</span>");
    } else {
      out->append("<span class=\"nohit\">stray</span>");
    }
    out->append("</li>");
  }
  out->append("</ul>");

  // A passed case whose every citation hits gold and whose every gold span is cited has
  // nothing to see on the source; not drawing it keeps large reports small.
  bool clean = true;
  for (const PlacedRef& p : placed) clean = clean && !p.hits.empty();
  for (bool hit : gold_hit) clean = clean && hit;
  if (clean && record.scores.pass && !draw_clean) {
    out->append("<p class=\"meta\">Every citation hits gold and every gold span is cited.</p>");
    return;
  }

  // One excerpt per document that holds a gold span or a cited span, gold documents first.
  std::vector<std::string> docs;
  auto add_doc = [&docs](const std::string& doc) {
    if (std::find(docs.begin(), docs.end(), doc) == docs.end()) docs.push_back(doc);
  };
  for (const nlohmann::json& span : gold_spans) add_doc(span["doc"].get<std::string>());
  for (const PlacedRef& p : placed) {
    if (p.placed.kind == metrics::PlacedCitation::Kind::kSpan) add_doc(p.placed.ref.doc);
  }
  for (const std::string& doc : docs) {
    std::vector<MarkedSpan> gold_marks, cited_marks;
    for (size_t g = 0; g < gold_spans.size(); ++g) {
      if (gold_spans[g]["doc"] != doc) continue;
      gold_marks.push_back({gold_spans[g]["start"].get<int64_t>(),
                            gold_spans[g]["end"].get<int64_t>(),
                            "G" + std::to_string(g + 1) + (gold_hit[g] ? "" : " missed")});
    }
    std::vector<std::string> whole_doc;
    for (size_t i = 0; i < placed.size(); ++i) {
      const metrics::PlacedCitation& p = placed[i].placed;
      if (p.ref.doc != doc) continue;
      const std::string label = "C" + std::to_string(i + 1);
      if (p.kind == metrics::PlacedCitation::Kind::kSpan) {
        cited_marks.push_back(
            {*p.ref.start, *p.ref.end, label + (placed[i].hits.empty() ? " stray" : "")});
      } else if (p.kind == metrics::PlacedCitation::Kind::kDocOnly) {
        whole_doc.push_back(label);
      }
    }
    const std::string* text = DocumentText(doc);
    out->append("<h5>");
    AppendHtmlText(out, doc);
    if (!whole_doc.empty()) {
      out->append(" <span class=\"meta\">(cited as a whole by");
      for (const std::string& label : whole_doc) out->append(" " + label);
      out->append(")</span>");
    }
    out->append("</h5>");
    if (text != nullptr) {
      const SourceExcerpt excerpt =
          BuildSourceExcerpt(*text, *DocumentIndex(doc), gold_marks, cited_marks);
      auto lang = document_langs_.find(doc);
      if (lang == document_langs_.end()) {
        lang = document_langs_.emplace(doc, LangToMark(*text, lang_)).first;
      }
      AppendSourceExcerptHtml(out, excerpt, lang->second);
      continue;
    }
    // No document: each gold span's recorded text stands in for it, with the cited parts that
    // fall inside it marked; cited text outside the gold spans cannot be shown.
    bool any = false;
    for (size_t g = 0; g < gold_spans.size(); ++g) {
      const nlohmann::json& span = gold_spans[g];
      if (span["doc"] != doc) continue;
      const std::string recorded = JsonString(span, "text");
      if (recorded.empty()) continue;
      const int64_t base = span["start"].get<int64_t>();
      const metrics::CodePointIndex index(recorded);
      const std::vector<MarkedSpan> g_marks = {
          {0, index.code_points(), "G" + std::to_string(g + 1) + (gold_hit[g] ? "" : " missed")}};
      std::vector<MarkedSpan> c_marks;
      for (const MarkedSpan& m : cited_marks) {
        if (m.end > base && m.start < base + index.code_points()) {
          c_marks.push_back({m.start - base, m.end - base, m.start >= base ? m.label : ""});
        }
      }
      const SourceExcerpt excerpt = BuildSourceExcerpt(recorded, index, g_marks, c_marks);
      out->append("<p class=\"meta\">gold span text as recorded in the run, " +
                  SpanWords(base, span["end"].get<int64_t>()) + ":</p>");
      AppendSourceExcerptHtml(out, excerpt, LangToMark(recorded, lang_));
      any = true;
    }
    if (!any) {
      out->append("<p class=\"meta\">");
      out->append(corpus_ == nullptr ? "Not drawn: the corpus is not available."
                                     : "Not drawn: the document is not in the corpus.");
      out->append("</p>");
    }
  }
}

void CaseCardWriter::AppendRetrieved(std::string* out, const CaseRecord& record,
                                     const nlohmann::json& gold) {
  if (!record.parsed.has_retrieved) return;
  const std::vector<nlohmann::json> gold_spans = GoldSpans(gold);
  const std::vector<SourceRef>& retrieved = record.parsed.retrieved;
  const std::vector<PlacedRef> placed = Place(retrieved, gold_spans, "retrieved item");
  size_t first_hit = 0;
  for (size_t i = 0; i < placed.size() && first_hit == 0; ++i) {
    if (!placed[i].hits.empty()) first_hit = i + 1;
  }
  out->append("<h4>Retrieved</h4><p class=\"meta\">");
  if (gold_spans.empty()) {
    out->append("The case has no gold span to find.");
  } else if (first_hit > 0) {
    out->append("A gold span first appears at rank <strong>" + std::to_string(first_hit) +
                "</strong> of " + std::to_string(retrieved.size()) + ".");
  } else {
    out->append("<strong>No retrieved item holds a gold span</strong> (" +
                std::to_string(retrieved.size()) +
                " retrieved): the reader never saw the passage.");
  }
  out->append("</p>");
  if (retrieved.empty()) return;
  out->append("<ol class=\"retr\">");
  for (size_t i = 0; i < placed.size() && i < kMaxRetrievedShown; ++i) {
    const metrics::PlacedCitation& p = placed[i].placed;
    out->append(placed[i].hits.empty() ? "<li>" : "<li class=\"hit\">");
    AppendBoundedText(out, p.ref.doc, kShownDocIdCodePoints);
    if (p.kind == metrics::PlacedCitation::Kind::kSpan) {
      out->append(" \xC2\xB7 " + SpanWords(*p.ref.start, *p.ref.end));
    } else if (p.kind == metrics::PlacedCitation::Kind::kMiss) {
      const std::string prefix = "retrieved item " + std::to_string(i + 1) + ": ";
      out->append(" \xC2\xB7 ");
      AppendHtmlText(out,
                     p.warning.rfind(prefix, 0) == 0 ? p.warning.substr(prefix.size()) : p.warning);
    }
    out->append("</li>");
  }
  out->append("</ol>");
  if (placed.size() > kMaxRetrievedShown) {
    out->append("<p class=\"meta\">and " + std::to_string(placed.size() - kMaxRetrievedShown) +
                " more.</p>");
  }
}

void CaseCardWriter::AppendReply(std::string* out, const CaseRecord& record,
                                 const nlohmann::json& gold, bool two_columns, bool draw_clean) {
  out->append(two_columns ? "<div class=\"cols\"><div>" : "<div>");
  AppendAnswer(out, record, gold);
  if (!record.error.empty()) {
    out->append("<div class=\"error\"><strong>The call failed:</strong> ");
    AppendBoundedText(out, record.error);
    if (!record.stdout_excerpt.empty()) {
      out->append("<h4>stdout (excerpt)</h4><pre>");
      AppendBoundedText(out, record.stdout_excerpt);
      out->append("</pre>");
    }
    if (!record.stderr_excerpt.empty()) {
      out->append("<h4>stderr (excerpt)</h4><pre>");
      AppendBoundedText(out, record.stderr_excerpt);
      out->append("</pre>");
    }
    if (record.response.is_object() && record.response.contains("excerpt")) {
      out->append("<h4>reply (excerpt of ");
      out->append(record.response.value("bytes", nlohmann::json(0)).dump());
      out->append(" bytes)</h4><pre>");
      AppendBoundedText(out, JsonString(record.response, "excerpt"));
      out->append("</pre>");
    }
    out->append("</div>");
  }
  AppendCitations(out, record, gold, draw_clean);
  out->append("</div><div>");
  AppendScores(out, record);
  if (!record.scores.warnings.empty()) {
    out->append("<h4>Warnings</h4><ul class=\"refs\">");
    for (const std::string& w : record.scores.warnings) {
      out->append("<li>");
      AppendBoundedText(out, w);
      out->append("</li>");
    }
    out->append("</ul>");
  }
  AppendRetrieved(out, record, gold);
  out->append(two_columns ? "</div></div>" : "</div>");
}

void CaseCardWriter::AppendReplyBrief(std::string* out, const CaseRecord& record,
                                      const nlohmann::json& gold) {
  AppendAnswer(out, record, gold);
  if (!record.error.empty()) {
    out->append("<div class=\"error\"><strong>The call failed:</strong> ");
    AppendBoundedText(out, record.error);
    out->append("</div>");
  }
  AppendScores(out, record);
}

}  // namespace plumb
