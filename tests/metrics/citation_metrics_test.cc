// Citation metrics, checked against the SPEC §6.3 definition on hand-worked cases: the
// overlap arithmetic, the distinct-citation counts and the precision/recall/f1 fractions are
// written out beside each check.

#include "metrics/citation_metrics.h"

#include <catch2/catch.hpp>
#include <map>
#include <string>
#include <vector>

namespace plumb::metrics {
namespace {

// boarding.md, 102 code points (all ASCII):
//   [0, 45)   "Boarding closes ten minutes before departure."
//   45        '\n'
//   [46, 101) "Vehicles must check in thirty minutes before departure."
//   101       '\n'
// Inside the first sentence: Boarding0-7 closes9-14 ten16-18 minutes20-26 before28-33
// departure.35-44. fares.md: "Adult single fare: 12 euros.\n", 29 code points.
const std::map<std::string, std::string> kCorpus = {
    {"boarding.md",
     "Boarding closes ten minutes before departure.\n"
     "Vehicles must check in thirty minutes before departure.\n"},
    {"fares.md", "Adult single fare: 12 euros.\n"},
    // "Le départ est à 8h.": 19 code points, 21 bytes (é and à take two).
    {"depart.md", "Le d\u00e9part est \u00e0 8h."},
};

const DocumentLookup kDocuments = [](const std::string& doc) -> const std::string* {
  auto it = kCorpus.find(doc);
  return it == kCorpus.end() ? nullptr : &it->second;
};

const GoldSpanRef kFirstSentence{"boarding.md", 0, 45};
const GoldSpanRef kSecondSentence{"boarding.md", 46, 101};

CitedRef Span(const std::string& doc, int64_t start, int64_t end) {
  CitedRef ref;
  ref.doc = doc;
  ref.start = start;
  ref.end = end;
  return ref;
}

CitedRef Quote(const std::string& doc, const std::string& quote) {
  CitedRef ref;
  ref.doc = doc;
  ref.quote = quote;
  return ref;
}

CitedRef DocOnly(const std::string& doc) {
  CitedRef ref;
  ref.doc = doc;
  return ref;
}

TEST_CASE("the overlap threshold is max(1, ceil(min_overlap * gold length))", "[citations]") {
  // Gold [10, 30) is 20 code points; citation [25, 40) shares [25, 30), 5 code points.
  CHECK(SpanOverlap(25, 40, 10, 30) == 5);
  CHECK(MinOverlapCodePoints(20, 0.5) == 10);   // ceil(0.5 * 20) = 10 > 5: a miss
  CHECK(MinOverlapCodePoints(20, 0.25) == 5);   // ceil(0.25 * 20) = 5 <= 5: a hit
  CHECK(MinOverlapCodePoints(20, 0.0) == 1);    // max(1, ceil(0)) = 1: any shared code point
  CHECK(MinOverlapCodePoints(20, 0.51) == 11);  // ceil(10.2) = 11
  CHECK(MinOverlapCodePoints(20, 1.0) == 20);   // the whole gold span
  CHECK(MinOverlapCodePoints(20, 1.5) == 21);   // more than the gold span: nothing can hit
  // 0.07 * 100 is 7.000000000000001 in IEEE doubles; the user wrote 7% of 100, which is 7.
  CHECK(MinOverlapCodePoints(100, 0.07) == 7);
  // Touching half-open spans share nothing: [30, 40) and [10, 30).
  CHECK(SpanOverlap(30, 40, 10, 30) == 0);
  CHECK(SpanOverlap(0, 5, 10, 30) == 0);     // disjoint
  CHECK(SpanOverlap(0, 100, 10, 30) == 20);  // covering

  const DocumentLookup documents = [](const std::string&) -> const std::string* {
    static const std::string text(50, 'x');
    return &text;
  };
  const std::vector<GoldSpanRef> gold = {{"a.md", 10, 30}};
  const std::vector<CitedRef> citations = {Span("a.md", 25, 40)};
  CHECK(ScoreCitations(citations, gold, 0.5, documents).citations_hit == 0);
  CHECK(ScoreCitations(citations, gold, 0.25, documents).citations_hit == 1);
  CHECK(ScoreCitations(citations, gold, 0.0, documents).citations_hit == 1);
  CHECK(ScoreCitations({Span("a.md", 30, 40)}, gold, 0.0, documents).citations_hit == 0);
}

TEST_CASE("duplicates count once: precision, recall and f1 by hand", "[citations]") {
  // min_overlap 0.2:
  //  [16, 27) "ten minutes" vs first sentence [0, 45): overlap 11 >= ceil(0.2 * 45) = 9, a hit.
  //  the same [16, 27) again: the same distinct citation.
  //  fares.md doc-only: fares.md has no gold span, a miss.
  //  [60, 62) vs second sentence [46, 101): overlap 2 < ceil(0.2 * 55) = 11, a miss.
  // Distinct citations 3, hitting 1: precision 1/3. Gold 2, hit 1: recall 1/2.
  // f1 = 2 * (1/3) * (1/2) / (1/3 + 1/2) = (1/3) / (5/6) = 2/5.
  const std::vector<CitedRef> citations = {Span("boarding.md", 16, 27), Span("boarding.md", 16, 27),
                                           DocOnly("fares.md"), Span("boarding.md", 60, 62)};
  const CitationScores s =
      ScoreCitations(citations, {kFirstSentence, kSecondSentence}, 0.2, kDocuments);
  CHECK(s.citations == 3);
  CHECK(s.citations_hit == 1);
  CHECK(s.gold == 2);
  CHECK(s.gold_hit == 1);
  REQUIRE(s.precision);
  REQUIRE(s.recall);
  REQUIRE(s.f1);
  CHECK(*s.precision == Approx(1.0 / 3));
  CHECK(*s.recall == Approx(0.5));
  CHECK(*s.f1 == Approx(0.4));
  CHECK(s.citation_hit == std::vector<bool>{true, true, false, false});
  CHECK(s.gold_hit_flags == std::vector<bool>{true, false});
  CHECK(s.warnings.empty());  // misses that are well formed are not warnings
  REQUIRE(s.resolved.size() == 4);
  CHECK(*s.resolved[3].start == 60);
}

TEST_CASE("a doc-only citation hits every gold span of its doc", "[citations]") {
  // One distinct citation, hitting both gold spans: precision 1/1, recall 2/2, f1 1.
  CitationScores s =
      ScoreCitations({DocOnly("boarding.md")}, {kFirstSentence, kSecondSentence}, 0.9, kDocuments);
  CHECK(s.citations == 1);
  CHECK(s.gold_hit == 2);
  CHECK(*s.precision == 1.0);
  CHECK(*s.recall == 1.0);
  CHECK(*s.f1 == 1.0);

  // A doc-only citation is distinct from a span citation of the same doc: 2 distinct, both hit.
  s = ScoreCitations({DocOnly("boarding.md"), Span("boarding.md", 0, 45)}, {kFirstSentence}, 0,
                     kDocuments);
  CHECK(s.citations == 2);
  CHECK(s.citations_hit == 2);
  // Another doc's doc-only citation hits nothing: 1 of 2 distinct citations hit.
  s = ScoreCitations({DocOnly("fares.md"), DocOnly("boarding.md")}, {kFirstSentence}, 0,
                     kDocuments);
  CHECK(s.citations == 2);
  CHECK(*s.precision == Approx(0.5));
  CHECK(s.citation_hit == std::vector<bool>{false, true});
}

TEST_CASE("quote citations are located, then scored as spans", "[citations]") {
  // Exact: "ten minutes before departure" is ten16 .. departure35-43, [16, 44); it overlaps the
  // first sentence by 28 >= ceil(0.5 * 45) = 23.
  CitationScores s = ScoreCitations({Quote("boarding.md", "ten minutes before departure")},
                                    {kFirstSentence}, 0.5, kDocuments);
  REQUIRE(s.resolved.size() == 1);
  CHECK(*s.resolved[0].start == 16);
  CHECK(*s.resolved[0].end == 44);
  CHECK(*s.resolved[0].quote == "ten minutes before departure");
  CHECK(s.citations_hit == 1);
  CHECK(*s.recall == 1.0);

  // Whitespace-collapsed, extra whitespace in the citation: "Boarding  closes\nten" is the
  // document's "Boarding closes ten", [0, 19); overlap 19 >= ceil(0.4 * 45) = 18.
  s = ScoreCitations({Quote("boarding.md", "Boarding  closes\nten")}, {kFirstSentence}, 0.4,
                     kDocuments);
  CHECK(*s.resolved[0].start == 0);
  CHECK(*s.resolved[0].end == 19);
  CHECK(s.citations_hit == 1);
  CHECK(s.warnings.empty());

  // Whitespace-collapsed, extra whitespace in the document: the quote's space stands for the
  // newline at 45. departure.35-44 '\n'45 Vehicles46-53 ' '54 must55-58: [35, 59). At
  // min_overlap 0 it hits both sentences (overlaps 10 and 13).
  s = ScoreCitations({Quote("boarding.md", "departure. Vehicles must")},
                     {kFirstSentence, kSecondSentence}, 0, kDocuments);
  CHECK(*s.resolved[0].start == 35);
  CHECK(*s.resolved[0].end == 59);
  CHECK(s.gold_hit == 2);
}

TEST_CASE("a quote that resolves to a cited span is the same citation", "[citations]") {
  // "ten minutes" resolves to [16, 27), equal to the span citation: 1 distinct citation.
  const CitationScores s =
      ScoreCitations({Quote("boarding.md", "ten minutes"), Span("boarding.md", 16, 27)},
                     {kFirstSentence}, 0, kDocuments);
  CHECK(s.citations == 1);
  CHECK(s.citation_hit == std::vector<bool>{true, true});
  CHECK(*s.precision == 1.0);
}

TEST_CASE("an unlocated quote is a miss with a warning", "[citations]") {
  // The warning quotes the first 40 code points: "Boarding closes eleven minutes before de".
  const CitedRef quote =
      Quote("boarding.md", "Boarding closes eleven minutes before departure, always.");
  CitationScores s = ScoreCitations({quote, quote}, {kFirstSentence}, 0, kDocuments);
  CHECK(s.citations == 1);  // the same unlocated quote twice is one citation, one warning
  CHECK(s.citations_hit == 0);
  REQUIRE(s.warnings.size() == 1);
  CHECK(s.warnings[0] ==
        "citation 1: quote not found in boarding.md: "
        "'Boarding closes eleven minutes before de\u2026'");
  CHECK(*s.precision == 0.0);
  CHECK(*s.recall == 0.0);
  CHECK(*s.f1 == 0.0);  // P + R = 0
  CHECK_FALSE(s.resolved[0].start.has_value());

  // A short quote is quoted whole.
  s = ScoreCitations({Quote("fares.md", "Child fare")}, {}, 0, kDocuments);
  REQUIRE(s.warnings.size() == 1);
  CHECK(s.warnings[0] == "citation 1: quote not found in fares.md: 'Child fare'");
}

TEST_CASE("unknown documents and invalid spans are misses with warnings", "[citations]") {
  const std::vector<CitedRef> citations = {
      Span("tides.md", 0, 5),         // not in the corpus
      Span("boarding.md", 30, 10),    // reversed
      Span("boarding.md", 5, 5),      // empty
      Span("boarding.md", -1, 5),     // negative
      Span("boarding.md", 100, 110),  // beyond 102 code points
      Span("boarding.md", 100, 102),  // ends exactly at the end: valid
  };
  CitedRef start_only = DocOnly("boarding.md");
  start_only.start = 3;
  std::vector<CitedRef> all = citations;
  all.push_back(start_only);
  const GoldSpanRef tail{"boarding.md", 95, 102};
  const CitationScores s = ScoreCitations(all, {tail}, 0, kDocuments);
  // 7 distinct citations; only [100, 102) hits [95, 102) (overlap 2): precision 1/7.
  CHECK(s.citations == 7);
  CHECK(s.citations_hit == 1);
  CHECK(*s.precision == Approx(1.0 / 7));
  CHECK(s.citation_hit == std::vector<bool>{false, false, false, false, false, true, false});
  REQUIRE(s.warnings.size() == 6);
  CHECK(s.warnings[0] == "citation 1: unknown document 'tides.md' (not in the corpus)");
  CHECK(s.warnings[1] ==
        "citation 2: span [30, 10) in boarding.md is empty or reversed (start must be below end)");
  CHECK(s.warnings[2] ==
        "citation 3: span [5, 5) in boarding.md is empty or reversed (start must be below end)");
  CHECK(s.warnings[3] == "citation 4: span [-1, 5) in boarding.md has a negative offset");
  CHECK(s.warnings[4] ==
        "citation 5: span [100, 110) in boarding.md ends beyond the document (102 code points)");
  CHECK(s.warnings[5] == "citation 7: citation of boarding.md has a start but no end");
}

TEST_CASE("document length is counted in code points", "[citations]") {
  // depart.md is 19 code points in 21 bytes: [15, 20) is beyond it, [15, 19) is not.
  const GoldSpanRef time{"depart.md", 14, 18};  // "à 8h": à14 ' '15 8(16) h17
  CitationScores s = ScoreCitations({Span("depart.md", 15, 20)}, {time}, 0, kDocuments);
  CHECK(s.citations_hit == 0);
  REQUIRE(s.warnings.size() == 1);
  CHECK(s.warnings[0] ==
        "citation 1: span [15, 20) in depart.md ends beyond the document (19 code points)");
  s = ScoreCitations({Span("depart.md", 15, 19)}, {time}, 0, kDocuments);
  CHECK(s.citations_hit == 1);
  // The quote "à 8h" is [14, 18) in code points (bytes [15, 20)).
  s = ScoreCitations({Quote("depart.md", "\u00e0 8h")}, {time}, 1.0, kDocuments);
  CHECK(*s.resolved[0].start == 14);
  CHECK(*s.resolved[0].end == 18);
  CHECK(s.citations_hit == 1);
}

TEST_CASE("precision, recall and f1 are defined only where SPEC §6.3 says", "[citations]") {
  // No gold and no citation: nothing is defined.
  CitationScores s = ScoreCitations({}, {}, 0, kDocuments);
  CHECK_FALSE(s.precision);
  CHECK_FALSE(s.recall);
  CHECK_FALSE(s.f1);
  CHECK(s.citations == 0);
  CHECK(s.gold == 0);

  // Gold spans and no citation: precision undefined (no citation), recall 0/1, f1 0.
  s = ScoreCitations({}, {kFirstSentence}, 0, kDocuments);
  CHECK_FALSE(s.precision);
  REQUIRE(s.recall);
  CHECK(*s.recall == 0.0);
  REQUIRE(s.f1);
  CHECK(*s.f1 == 0.0);

  // Citations and no gold: precision 0/1 (nothing to hit), recall and f1 undefined.
  s = ScoreCitations({Span("boarding.md", 0, 45)}, {}, 0, kDocuments);
  REQUIRE(s.precision);
  CHECK(*s.precision == 0.0);
  CHECK_FALSE(s.recall);
  CHECK_FALSE(s.f1);

  // All hit: 1, 1, 1.
  s = ScoreCitations({Span("boarding.md", 0, 45)}, {kFirstSentence}, 1.0, kDocuments);
  CHECK(*s.precision == 1.0);
  CHECK(*s.recall == 1.0);
  CHECK(*s.f1 == 1.0);
}

TEST_CASE("a malformed gold span stays in the denominator and is never hit", "[citations]") {
  // Gold 2, of which [10, 10) is empty: a doc-only citation hits only the first. recall 1/2.
  const CitationScores s = ScoreCitations({DocOnly("boarding.md")},
                                          {kFirstSentence, {"boarding.md", 10, 10}}, 0, kDocuments);
  CHECK(s.gold == 2);
  CHECK(s.gold_hit == 1);
  CHECK(*s.recall == Approx(0.5));
  REQUIRE(s.warnings.size() == 1);
  CHECK(s.warnings[0] ==
        "gold span 2: [10, 10) in boarding.md is empty or reversed; it cannot be hit");
}

TEST_CASE("without a corpus, spans stand and quotes cannot be located", "[citations]") {
  const DocumentLookup none;
  const CitationScores s = ScoreCitations(
      {Span("boarding.md", 16, 27), Quote("boarding.md", "ten minutes"), Span("x.md", 500, 600)},
      {kFirstSentence}, 0, none);
  CHECK(s.citations == 3);
  CHECK(s.citation_hit == std::vector<bool>{true, false, false});
  REQUIRE(s.warnings.size() == 1);
  CHECK(s.warnings[0] ==
        "citation 2: cannot locate a quote in boarding.md without the corpus: 'ten minutes'");
}

TEST_CASE("a caller's prebuilt index gives the same scores", "[citations]") {
  // One index per document, as a runner would keep for a whole run.
  std::map<std::string, CodePointIndex> indexes;
  for (const auto& [doc, text] : kCorpus) indexes.emplace(doc, CodePointIndex(text));
  int lookups = 0;
  const CodePointIndexLookup index_lookup = [&](const std::string& doc) -> const CodePointIndex* {
    ++lookups;
    auto it = indexes.find(doc);
    return it == indexes.end() ? nullptr : &it->second;
  };
  const std::vector<CitedRef> citations = {Quote("depart.md", "\u00e0 8h"),
                                           Span("depart.md", 15, 20), Span("depart.md", 0, 2)};
  const std::vector<GoldSpanRef> gold = {{"depart.md", 14, 18}};
  const CitationScores with = ScoreCitations(citations, gold, 0.5, kDocuments, index_lookup);
  const CitationScores without = ScoreCitations(citations, gold, 0.5, kDocuments);
  CHECK(lookups == 1);  // one document, looked up once for three citations
  CHECK(with.citation_hit == without.citation_hit);
  CHECK(with.citation_hit == std::vector<bool>{true, false, false});
  CHECK(with.warnings == without.warnings);
  CHECK(*with.resolved[0].start == 14);
}

}  // namespace
}  // namespace plumb::metrics
