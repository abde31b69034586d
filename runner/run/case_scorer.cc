#include "runner/run/case_scorer.h"

#include <string_view>

#include "metrics/citation_metrics.h"
#include "metrics/long_answer_metrics.h"
#include "metrics/number_match.h"
#include "metrics/retrieval_metrics.h"
#include "runner/base/parallel_chunks.h"

namespace plumb {
namespace {

// Metrics a case usually defines besides recall@K (room set aside in one allocation).
constexpr size_t kUsualMetrics = 8;
// Below this many cases per thread, preparing them on one thread is quicker.
constexpr size_t kCasesPerChunk = 2000;

std::vector<metrics::GoldSpanRef> GoldRefs(const Case& c) {
  std::vector<metrics::GoldSpanRef> gold;
  gold.reserve(c.sources.size());
  for (const GoldSpan& span : c.sources) gold.push_back({span.doc, span.start, span.end});
  return gold;
}

void ScoreErroredCase(const Case& c, bool has_knowledge, CaseScores* scores) {
  scores->errored = true;
  if (c.after >= 0) {
    scores->values["fresh"] = 0;
    if (!c.stale_answers.empty()) scores->values["stale"] = 0;
  }
  scores->values["exact_match"] = 0;
  scores->values["token_f1"] = 0;
  scores->values["token_recall"] = 0;
  scores->values["covers_gold"] = 0;
  if (has_knowledge) scores->values["knowledge_f1"] = 0;
  scores->values["correct"] = 0;
  if (!c.patterns.empty()) scores->values["pattern_match"] = 0;
  if (c.number) scores->values["number_match"] = 0;
  if (!c.sources.empty()) {
    scores->values["citation_recall"] = 0;
    scores->values["citation_f1"] = 0;
  }
  // Retrieval metrics stay undefined: whether the pipeline retrieves at all is unknown here.
}

}  // namespace

std::unique_ptr<CaseScorer> CaseScorer::Create(const Suite& suite, Corpus* corpus,
                                               std::string* error) {
  std::unique_ptr<CaseScorer> scorer(new CaseScorer(suite, corpus));
  scorer->prepared_.resize(suite.cases.size());
  // Cases are prepared independently; a failed chunk keeps its first error, and the error of
  // the earliest chunk is the one reported (the case that comes first in the suite).
  std::vector<std::string> errors(static_cast<size_t>(WorkerCount()));
  ForEachChunk(suite.cases.size(), kCasesPerChunk, [&](size_t chunk, size_t begin, size_t end) {
    for (size_t i = begin; i < end; ++i) {
      const Case& c = suite.cases[i];
      PreparedCase& prepared = scorer->prepared_[i];
      prepared.gold = metrics::NormalizeGold(c.answers, suite.normalize, suite.lang);
      if (!c.sources.empty()) {
        std::vector<std::string> texts;
        texts.reserve(c.sources.size());
        for (const GoldSpan& span : c.sources) texts.push_back(span.text);
        prepared.knowledge = metrics::JoinedTokens(texts, suite.normalize, suite.lang);
      }
      for (const std::string& stale : c.stale_answers) {
        std::vector<std::string> tokens =
            metrics::NormalizeTokens(stale, suite.normalize, suite.lang);
        if (!tokens.empty()) prepared.stale.push_back(std::move(tokens));
      }
      if (c.patterns.empty()) continue;
      std::string pattern_error;
      if (!metrics::PatternSet::Compile(c.patterns, &prepared.patterns, &pattern_error)) {
        errors[chunk] = "case '" + c.id + "': " + pattern_error;
        return;
      }
      prepared.has_patterns = true;
    }
  });
  for (const std::string& chunk_error : errors) {
    if (chunk_error.empty()) continue;
    *error = chunk_error;
    return nullptr;
  }
  return scorer;
}

Corpus* CaseScorer::CorpusOf(const Case& c) const {
  if (c.after >= 0 && size_t(c.after) < update_corpora_.size() &&
      update_corpora_[size_t(c.after)] != nullptr) {
    return update_corpora_[size_t(c.after)];
  }
  return corpus_;
}

const std::string* CaseScorer::DocumentText(Corpus* corpus, const std::string& doc) const {
  if (corpus == nullptr) return nullptr;
  std::string error;  // an unknown or unreadable doc: the citation metrics warn and miss
  const Document* document = corpus->Get(doc, &error);
  return document == nullptr ? nullptr : &document->text;
}

const metrics::CodePointIndex* CaseScorer::DocumentIndex(Corpus* corpus,
                                                         const std::string& doc) const {
  const std::string* text = DocumentText(corpus, doc);
  if (text == nullptr) return nullptr;
  std::lock_guard<std::mutex> lock(index_mutex_);
  std::unique_ptr<metrics::CodePointIndex>& index = indexes_[{corpus, doc}];
  if (index == nullptr) index = std::make_unique<metrics::CodePointIndex>(*text);
  return index.get();
}

std::vector<metrics::CitedRef> CaseScorer::ToCodePoints(Corpus* corpus,
                                                        const std::vector<SourceRef>& refs,
                                                        metrics::OffsetUnit unit, const char* what,
                                                        std::vector<std::string>* warnings) const {
  std::vector<metrics::CitedRef> out;
  out.reserve(refs.size());
  for (size_t i = 0; i < refs.size(); ++i) {
    const SourceRef& ref = refs[i];
    metrics::CitedRef cited{ref.doc, ref.start, ref.end, ref.quote};
    if (unit != metrics::OffsetUnit::kCodePoints && ref.start && ref.end) {
      const metrics::CodePointIndex* index = DocumentIndex(corpus, ref.doc);
      int64_t start = 0, end = 0;
      std::string error;
      if (index != nullptr &&
          (!metrics::ConvertToCodePoints(*index, unit, *ref.start, &start, &error) ||
           !metrics::ConvertToCodePoints(*index, unit, *ref.end, &end, &error))) {
        warnings->push_back(std::string(what) + " " + std::to_string(i + 1) + " in " + ref.doc +
                            ": " + error);
        start = end = -1;  // an invalid span: a miss, never a doc-level hit
      }
      if (index != nullptr) {
        cited.start = start;
        cited.end = end;
      }
    }
    out.push_back(std::move(cited));
  }
  return out;
}

std::vector<std::string> CaseScorer::CitedTexts(Corpus* corpus,
                                                const std::vector<metrics::CitedRef>& resolved,
                                                const std::vector<bool>& placed) const {
  std::vector<std::string> texts;
  for (size_t i = 0; i < resolved.size(); ++i) {
    const metrics::CitedRef& ref = resolved[i];
    if (i >= placed.size() || !placed[i] || !ref.start || !ref.end) continue;
    const std::string* text = DocumentText(corpus, ref.doc);
    const metrics::CodePointIndex* index = DocumentIndex(corpus, ref.doc);
    if (text == nullptr || index == nullptr) continue;
    const int64_t begin = index->ByteOfCodePoint(*ref.start);
    const int64_t end = index->ByteOfCodePoint(*ref.end);
    if (begin >= 0 && end > begin) texts.push_back(text->substr(begin, end - begin));
  }
  return texts;
}

void CaseScorer::Conclude(CaseScores* scores) const {
  if (scores->errored) {
    scores->values["correct"] = 0;
    scores->pass = false;
    scores->cause = FailureCause::kErrored;
    return;
  }
  double correct = 0;
  for (const std::string& metric : suite_.correct_from) {
    auto it = scores->values.find(metric);
    if (it != scores->values.end()) correct = std::max(correct, it->second);
  }
  scores->values["correct"] = correct;
  if (scores->values.count("fresh") > 0) scores->values["fresh"] = correct;
  scores->pass = Passes(*scores);
  scores->cause = ClassifyFailure(*scores, suite_.case_pass);
}

bool CaseScorer::Passes(const CaseScores& scores) const {
  if (scores.errored) return false;
  for (const auto& [metric, minimum] : suite_.case_pass) {
    auto it = scores.values.find(metric);
    // A minimum on a metric the case does not define (citation_recall on a case without gold
    // spans) does not apply to it.
    if (it != scores.values.end() && it->second < minimum) return false;
  }
  return true;
}

CaseScores CaseScorer::Score(size_t case_index, const Response* response,
                             metrics::OffsetUnit offsets) const {
  const Case& c = suite_.cases[case_index];
  const PreparedCase& prepared = prepared_[case_index];
  CaseScores scores;
  scores.values.reserve(kUsualMetrics + suite_.retrieval_k.size());
  scores.abstention_case = c.answers.empty();
  if (response == nullptr) {
    ScoreErroredCase(c, !prepared.knowledge.empty(), &scores);
    scores.cause = FailureCause::kErrored;
    return scores;
  }

  const metrics::AnswerScores answer =
      metrics::ScoreAnswer(response->answer, prepared.gold, suite_.normalize, suite_.lang);
  scores.values["exact_match"] = answer.exact_match;
  scores.values["token_f1"] = answer.token_f1;
  // The reply abstained, or its answer normalized to no tokens (SPEC §6.2).
  scores.abstained = answer.abstained;

  // The long-answer metrics read the answer's tokens; an abstention has none.
  const std::vector<std::string> answer_tokens =
      response->answer ? metrics::NormalizeTokens(*response->answer, suite_.normalize, suite_.lang)
                       : std::vector<std::string>();
  const metrics::LongAnswerScores long_answer =
      metrics::ScoreLongAnswer(answer_tokens, prepared.gold);
  scores.values["token_recall"] = long_answer.token_recall;
  scores.values["covers_gold"] = long_answer.covers_gold;
  if (const auto knowledge = metrics::KnowledgeF1(answer_tokens, prepared.knowledge)) {
    scores.values["knowledge_f1"] = *knowledge;
  }
  if (c.after >= 0) {
    scores.values["fresh"] = 0;  // Conclude sets it to `correct`
    // Stale: the answer still says what the corpus said before the update, by covers_gold's
    // rule (a stale answer's tokens as a contiguous run of the answer's), which also takes an
    // answer that is exactly a stale answer under the suite's normalization.
    if (!c.stale_answers.empty()) {
      double stale = 0;
      for (const std::vector<std::string>& tokens : prepared.stale) {
        if (metrics::ContainsRun(answer_tokens, tokens)) stale = 1;
      }
      scores.values["stale"] = stale;
    }
  }

  const std::string_view raw_answer =
      response->answer ? std::string_view(*response->answer) : std::string_view();
  if (prepared.has_patterns) {
    const double pattern = !response->abstained && prepared.patterns.AnyMatch(raw_answer) ? 1 : 0;
    scores.values["pattern_match"] = pattern;
  }
  if (c.number) {
    const double number =
        !response->abstained &&
                metrics::NumberMatches(raw_answer, c.number->value, c.number->tolerance)
            ? 1
            : 0;
    scores.values["number_match"] = number;
  }

  Corpus* corpus = CorpusOf(c);
  const metrics::DocumentLookup lookup = [this, corpus](const std::string& doc) {
    return DocumentText(corpus, doc);
  };
  const metrics::CodePointIndexLookup indexes = [this, corpus](const std::string& doc) {
    return DocumentIndex(corpus, doc);
  };
  const std::vector<metrics::GoldSpanRef> gold = GoldRefs(c);
  const metrics::CitationScores citations = metrics::ScoreCitations(
      ToCodePoints(corpus, response->citations, offsets, "citation", &scores.warnings), gold,
      suite_.min_overlap, lookup, indexes);
  if (citations.precision) scores.values["citation_precision"] = *citations.precision;
  if (citations.recall) scores.values["citation_recall"] = *citations.recall;
  if (citations.f1) scores.values["citation_f1"] = *citations.f1;
  scores.warnings.insert(scores.warnings.end(), citations.warnings.begin(),
                         citations.warnings.end());
  if (!answer_tokens.empty() && !citations.resolved.empty()) {
    const std::vector<std::string> cited =
        metrics::JoinedTokens(CitedTexts(corpus, citations.resolved, citations.placed_span),
                              suite_.normalize, suite_.lang);
    if (const auto support = metrics::CitedSupport(answer_tokens, cited)) {
      scores.values["cited_support"] = *support;
    }
  }

  if (response->has_retrieved && !gold.empty()) {
    const metrics::RetrievalScores retrieval = metrics::ScoreRetrieval(
        ToCodePoints(corpus, response->retrieved, offsets, "retrieved item", &scores.warnings),
        gold, suite_.retrieval_k, suite_.min_overlap, lookup, indexes);
    scores.warnings.insert(scores.warnings.end(), retrieval.warnings.begin(),
                           retrieval.warnings.end());
    for (const auto& [k, recall] : retrieval.recall_at) {
      scores.values["recall@" + std::to_string(k)] = recall;
    }
    if (retrieval.mrr) scores.values["mrr"] = *retrieval.mrr;
  }
  Conclude(&scores);
  return scores;
}

}  // namespace plumb
