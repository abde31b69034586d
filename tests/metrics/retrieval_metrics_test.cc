// Retrieval metrics (SPEC §6.4) on hand-worked ranked lists. recall@k is the fraction of gold
// spans found in the first k items (common practice); the reciprocal rank is 1 / rank of the
// first item that hits any gold span, 0 if none (Voorhees 1999, TREC-8 Question Answering Track
// Report; from memory). An item hits a gold span by the SPEC §6.3 definition.

#include "metrics/retrieval_metrics.h"

#include <catch2/catch.hpp>
#include <map>
#include <string>
#include <vector>

namespace plumb::metrics {
namespace {

// boarding.md is 102 code points: [0, 45) the first sentence, [46, 101) the second.
// fares.md is 29 code points.
const std::map<std::string, std::string> kCorpus = {
    {"boarding.md",
     "Boarding closes ten minutes before departure.\n"
     "Vehicles must check in thirty minutes before departure.\n"},
    {"fares.md", "Adult single fare: 12 euros.\n"},
};

const DocumentLookup kDocuments = [](const std::string& doc) -> const std::string* {
  auto it = kCorpus.find(doc);
  return it == kCorpus.end() ? nullptr : &it->second;
};

CitedRef Span(const std::string& doc, int64_t start, int64_t end) {
  CitedRef ref;
  ref.doc = doc;
  ref.start = start;
  ref.end = end;
  return ref;
}

const std::vector<int> kKs = {1, 3, 5};

TEST_CASE("gold found at rank 2", "[retrieval]") {
  // Rank 1: fares.md, another doc, a miss. Rank 2: all of boarding.md covers the gold span.
  // Rank 3: the second sentence, disjoint from the gold. So the gold is first hit at rank 2:
  // recall@1 = 0/1, recall@3 = 1/1, recall@5 = 1/1 (the list is shorter than 5), mrr = 1/2.
  const std::vector<CitedRef> ranked = {Span("fares.md", 0, 29), Span("boarding.md", 0, 102),
                                        Span("boarding.md", 46, 101)};
  const RetrievalScores s = ScoreRetrieval(ranked, {{"boarding.md", 0, 45}}, kKs, 0, kDocuments);
  CHECK(s.recall_at == std::map<int, double>{{1, 0.0}, {3, 1.0}, {5, 1.0}});
  REQUIRE(s.mrr);
  CHECK(*s.mrr == 0.5);
  CHECK(s.first_hit_rank == 2);
  CHECK(s.retrieved_hit == std::vector<bool>{false, true, false});
  CHECK(s.warnings.empty());
}

TEST_CASE("two gold spans, one found at rank 1 and the other never", "[retrieval]") {
  // Gold: boarding.md's first sentence [0, 45) and fares.md [0, 28). The list never retrieves
  // fares.md. recall@1 = recall@3 = recall@5 = 1/2; the first item hits, so mrr = 1/1.
  const std::vector<CitedRef> ranked = {Span("boarding.md", 0, 45), Span("boarding.md", 46, 101),
                                        Span("boarding.md", 50, 60)};
  const RetrievalScores s =
      ScoreRetrieval(ranked, {{"boarding.md", 0, 45}, {"fares.md", 0, 28}}, kKs, 0, kDocuments);
  CHECK(s.recall_at == std::map<int, double>{{1, 0.5}, {3, 0.5}, {5, 0.5}});
  CHECK(*s.mrr == 1.0);
  CHECK(s.first_hit_rank == 1);
}

TEST_CASE("recall@k counts each gold span once across the top k", "[retrieval]") {
  // Gold A = [0, 45), B = [46, 101). Rank 1 hits A, rank 2 hits A again, rank 3 hits B.
  // recall@1 = 1/2, recall@2 = 1/2 (A twice is still one span), recall@3 = 2/2.
  const std::vector<CitedRef> ranked = {Span("boarding.md", 0, 10), Span("boarding.md", 20, 30),
                                        Span("boarding.md", 60, 70)};
  const RetrievalScores s = ScoreRetrieval(
      ranked, {{"boarding.md", 0, 45}, {"boarding.md", 46, 101}}, {1, 2, 3}, 0, kDocuments);
  CHECK(s.recall_at == std::map<int, double>{{1, 0.5}, {2, 0.5}, {3, 1.0}});
  CHECK(*s.mrr == 1.0);
}

TEST_CASE("the citation overlap rule decides retrieval hits", "[retrieval]") {
  // Gold [10, 30) of 20 code points, item [25, 40): overlap 5. With min_overlap 0.5 the
  // threshold is ceil(0.5 * 20) = 10 > 5, a miss; with 0.25 it is ceil(5) = 5, a hit at rank 1.
  const std::vector<GoldSpanRef> gold = {{"boarding.md", 10, 30}};
  const std::vector<CitedRef> ranked = {Span("boarding.md", 25, 40)};
  RetrievalScores s = ScoreRetrieval(ranked, gold, kKs, 0.5, kDocuments);
  CHECK(*s.mrr == 0.0);
  CHECK(s.first_hit_rank == 0);
  CHECK(s.recall_at.at(5) == 0.0);
  s = ScoreRetrieval(ranked, gold, kKs, 0.25, kDocuments);
  CHECK(*s.mrr == 1.0);
  CHECK(s.recall_at.at(1) == 1.0);
}

TEST_CASE("doc-only and quote items hit like citations", "[retrieval]") {
  CitedRef doc_only;
  doc_only.doc = "boarding.md";
  CitedRef quote;
  quote.doc = "boarding.md";
  quote.quote = "Vehicles  must\ncheck";  // collapsed: [46, 65), inside the second sentence
  const std::vector<GoldSpanRef> gold = {{"boarding.md", 46, 101}};
  // Rank 1: an unknown doc (a miss with a warning); rank 2: the quote, a hit; rank 3: doc-only.
  const RetrievalScores s =
      ScoreRetrieval({Span("tides.md", 0, 5), quote, doc_only}, gold, kKs, 0, kDocuments);
  CHECK(s.first_hit_rank == 2);
  CHECK(*s.mrr == 0.5);
  CHECK(s.retrieved_hit == std::vector<bool>{false, true, true});
  REQUIRE(s.warnings.size() == 1);
  CHECK(s.warnings[0] == "retrieved item 1: unknown document 'tides.md' (not in the corpus)");
}

TEST_CASE("retrieval scores are defined only when there is gold", "[retrieval]") {
  // No gold spans: nothing defined, whatever was retrieved.
  RetrievalScores s = ScoreRetrieval({Span("boarding.md", 0, 45)}, {}, kKs, 0, kDocuments);
  CHECK(s.recall_at.empty());
  CHECK_FALSE(s.mrr);
  CHECK(s.first_hit_rank == 0);
  CHECK(s.retrieved_hit == std::vector<bool>{false});
  // Gold and an empty list: recall 0 at every k and mrr 0.
  s = ScoreRetrieval({}, {{"boarding.md", 0, 45}}, kKs, 0, kDocuments);
  CHECK(s.recall_at == std::map<int, double>{{1, 0.0}, {3, 0.0}, {5, 0.0}});
  REQUIRE(s.mrr);
  CHECK(*s.mrr == 0.0);
}

TEST_CASE("k below 1 is skipped and repeated ks are one entry", "[retrieval]") {
  const RetrievalScores s = ScoreRetrieval({Span("boarding.md", 0, 45)}, {{"boarding.md", 0, 45}},
                                           {0, -2, 1, 1}, 0, kDocuments);
  CHECK(s.recall_at == std::map<int, double>{{1, 1.0}});
}

}  // namespace
}  // namespace plumb::metrics
