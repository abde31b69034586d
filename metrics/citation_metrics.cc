#include "metrics/citation_metrics.h"

#include <unicode/utf8.h>

#include <algorithm>
#include <cmath>
#include <tuple>
#include <utility>

#include "metrics/quote_locator.h"

namespace plumb::metrics {
namespace {

// Warnings quote at most this many code points of a quote: enough to recognise it.
constexpr int64_t kExcerptCodePoints = 40;

std::string Excerpt(const std::string& quote) {
  const auto* s = reinterpret_cast<const uint8_t*>(quote.data());
  const auto n = static_cast<int64_t>(quote.size());
  int64_t pos = 0;
  for (int64_t count = 0; pos < n && count < kExcerptCodePoints; ++count) {
    UChar32 c = 0;
    U8_NEXT(s, pos, n, c);
  }
  if (pos == n) return "'" + quote + "'";
  return "'" + quote.substr(0, static_cast<size_t>(pos)) + "\u2026'";
}

std::string SpanText(const std::string& doc, int64_t start, int64_t end) {
  return "span [" + std::to_string(start) + ", " + std::to_string(end) + ") in " + doc;
}

// What makes two citations "the same" (SPEC §6.3 counts distinct citations).
using DistinctKey = std::tuple<std::string, int, int64_t, int64_t, std::string>;

DistinctKey KeyOf(const CitedRef& ref) {
  if (ref.start && ref.end) return {ref.doc, 0, *ref.start, *ref.end, ""};
  if (ref.start || ref.end) return {ref.doc, 1, ref.start.value_or(-1), ref.end.value_or(-1), ""};
  if (ref.quote) return {ref.doc, 2, 0, 0, *ref.quote};
  return {ref.doc, 3, 0, 0, ""};
}

}  // namespace

int64_t MinOverlapCodePoints(int64_t gold_length, double min_overlap) {
  const double product = min_overlap * static_cast<double>(gold_length);
  if (!(product > 0)) return 1;  // also catches NaN
  // The tolerance undoes binary rounding of a decimal min_overlap (see the header).
  const double needed = std::ceil(product - product * 1e-9);
  if (needed > static_cast<double>(gold_length)) return gold_length + 1;
  return std::max<int64_t>(1, static_cast<int64_t>(needed));
}

int64_t SpanOverlap(int64_t a_start, int64_t a_end, int64_t b_start, int64_t b_end) {
  return std::max<int64_t>(0, std::min(a_end, b_end) - std::max(a_start, b_start));
}

CitationMatcher::CitationMatcher(double min_overlap, const DocumentLookup& documents,
                                 const CodePointIndexLookup& indexes)
    : min_overlap_(min_overlap), documents_(documents), indexes_(indexes) {}

CitationMatcher::Document& CitationMatcher::Lookup(const std::string& doc) {
  auto [it, inserted] = cache_.try_emplace(doc);
  if (inserted) {
    it->second.text = documents_(doc);
    if (it->second.text != nullptr && indexes_) it->second.index = indexes_(doc);
  }
  return it->second;
}

const CodePointIndex& CitationMatcher::IndexOf(Document& document) {
  if (document.index == nullptr) {
    document.own.emplace(*document.text);
    document.index = &*document.own;
  }
  return *document.index;
}

PlacedCitation CitationMatcher::Place(const CitedRef& citation, const std::string& label) {
  PlacedCitation placed;
  placed.ref = citation;
  const auto miss = [&](const std::string& why) {
    placed.kind = PlacedCitation::Kind::kMiss;
    placed.warning = label + ": " + why;
    return placed;
  };
  const std::string& doc = citation.doc;

  Document* document = nullptr;
  if (documents_) {
    document = &Lookup(doc);
    if (document->text == nullptr)
      return miss("unknown document '" + doc + "' (not in the corpus)");
  }

  if (citation.start.has_value() != citation.end.has_value()) {
    return miss("citation of " + doc + " has " +
                (citation.start ? "a start but no end" : "an end but no start"));
  }

  if (citation.start) {
    const int64_t start = *citation.start;
    const int64_t end = *citation.end;
    if (start < 0 || end < 0) return miss(SpanText(doc, start, end) + " has a negative offset");
    if (start >= end) {
      return miss(SpanText(doc, start, end) + " is empty or reversed (start must be below end)");
    }
    if (document != nullptr) {
      const int64_t length = IndexOf(*document).code_points();
      if (end > length) {
        return miss(SpanText(doc, start, end) + " ends beyond the document (" +
                    std::to_string(length) + " code points)");
      }
    }
    placed.kind = PlacedCitation::Kind::kSpan;
    return placed;
  }

  if (citation.quote) {
    if (document == nullptr) {
      return miss("cannot locate a quote in " + doc +
                  " without the corpus: " + Excerpt(*citation.quote));
    }
    int64_t start = 0;
    int64_t end = 0;
    if (!LocateQuote(*document->text, IndexOf(*document), *citation.quote, &start, &end)) {
      return miss("quote not found in " + doc + ": " + Excerpt(*citation.quote));
    }
    placed.ref.start = start;
    placed.ref.end = end;
    placed.kind = PlacedCitation::Kind::kSpan;
    return placed;
  }

  placed.kind = PlacedCitation::Kind::kDocOnly;
  return placed;
}

bool CitationMatcher::Hits(const PlacedCitation& citation, const GoldSpanRef& gold) const {
  if (citation.kind == PlacedCitation::Kind::kMiss || citation.ref.doc != gold.doc) return false;
  if (citation.kind == PlacedCitation::Kind::kDocOnly) return true;
  const int64_t overlap = SpanOverlap(*citation.ref.start, *citation.ref.end, gold.start, gold.end);
  return overlap >= MinOverlapCodePoints(gold.end - gold.start, min_overlap_);
}

std::string CitationMatcher::GoldProblem(const GoldSpanRef& gold, const std::string& label) {
  const std::string span = label + ": [" + std::to_string(gold.start) + ", " +
                           std::to_string(gold.end) + ") in " + gold.doc;
  if (gold.start < 0 || gold.end < 0) return span + " has a negative offset";
  if (gold.start >= gold.end) return span + " is empty or reversed";
  return "";
}

std::vector<bool> CitationMatcher::ValidGold(const std::vector<GoldSpanRef>& gold,
                                             std::vector<std::string>* warnings) {
  std::vector<bool> valid(gold.size());
  for (size_t j = 0; j < gold.size(); ++j) {
    const std::string problem = GoldProblem(gold[j], "gold span " + std::to_string(j + 1));
    valid[j] = problem.empty();
    if (!valid[j]) warnings->push_back(problem + "; it cannot be hit");
  }
  return valid;
}

CitationScores ScoreCitations(const std::vector<CitedRef>& citations,
                              const std::vector<GoldSpanRef>& gold, double min_overlap,
                              const DocumentLookup& documents,
                              const CodePointIndexLookup& indexes) {
  CitationMatcher matcher(min_overlap, documents, indexes);
  CitationScores scores;

  const std::vector<bool> gold_valid = CitationMatcher::ValidGold(gold, &scores.warnings);
  scores.gold_hit_flags.assign(gold.size(), false);

  std::map<DistinctKey, bool> distinct;  // -> whether it hits some gold span
  for (size_t i = 0; i < citations.size(); ++i) {
    PlacedCitation placed = matcher.Place(citations[i], "citation " + std::to_string(i + 1));
    auto [it, inserted] = distinct.try_emplace(KeyOf(placed.ref), false);
    if (inserted) {
      if (placed.kind == PlacedCitation::Kind::kMiss) scores.warnings.push_back(placed.warning);
      for (size_t j = 0; j < gold.size(); ++j) {
        if (gold_valid[j] && matcher.Hits(placed, gold[j])) {
          it->second = true;
          scores.gold_hit_flags[j] = true;
        }
      }
      if (it->second) ++scores.citations_hit;
    }
    scores.citation_hit.push_back(it->second);
    scores.placed_span.push_back(placed.kind == PlacedCitation::Kind::kSpan);
    scores.resolved.push_back(std::move(placed.ref));
  }

  scores.citations = static_cast<int64_t>(distinct.size());
  scores.gold = static_cast<int64_t>(gold.size());
  scores.gold_hit = std::count(scores.gold_hit_flags.begin(), scores.gold_hit_flags.end(), true);

  if (scores.citations > 0) {
    scores.precision = static_cast<double>(scores.citations_hit) / scores.citations;
  }
  if (scores.gold > 0) {
    scores.recall = static_cast<double>(scores.gold_hit) / scores.gold;
    const double p = scores.precision.value_or(0);
    const double r = *scores.recall;
    scores.f1 = p + r > 0 ? 2 * p * r / (p + r) : 0;
  }
  return scores;
}

}  // namespace plumb::metrics
