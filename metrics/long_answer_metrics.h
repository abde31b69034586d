#ifndef PLUMB_METRICS_LONG_ANSWER_METRICS_H_
#define PLUMB_METRICS_LONG_ANSWER_METRICS_H_

/// Metrics for answers written as sentences rather than extracted spans, where exact_match and
/// token_f1 punish every word around a right answer: token_recall, covers_gold, knowledge_f1 and
/// cited_support. All work on token lists a normalization profile produced (metrics/normalize.h),
/// so they follow the suite's `normalize:` exactly as exact_match does. Pure functions.
///
/// Definitions (tokens are the profile's normalized tokens; Counter is a multiset):
///  - token_recall = max over gold answers g of |Counter(g) & Counter(answer)| / |g|.
///    Recall alone, because a verbose answer's extra words are not an error. Common practice
///    for long-form answers (e.g. the recall half of SQuAD's token F1).
///  - covers_gold = 1 when some gold answer's token sequence occurs as a contiguous run in the
///    answer's tokens, else 0.
///    Both: an abstention case (no gold answer) scores 1 iff the answer has no tokens (abstained
///    or normalized to nothing), else 0; a non-abstention case answered with no tokens scores 0
///    (SPEC §6.2's abstention rule for exact_match).
///  - knowledge_f1 = SQuAD token F1 (TokenF1) between the answer's tokens and the tokens of the
///    case's gold source spans' text, the spans taken in suite order and joined by a space.
///    "Knowledge F1" of Shuster, Poff, Chen, Kiela, Weston (2021), "Retrieval Augmentation Reduces
///    Hallucination in Conversation" (Findings of EMNLP 2021): unigram F1 between the model's
///    response and the gold knowledge the response should draw on. Defined when the gold spans'
///    text has at least one token; an answer with no tokens scores 0.
///  - cited_support = the share of the answer's tokens (each occurrence counted) that occur
///    anywhere in the text of the spans the answer itself cites. A lexical proxy for
///    groundedness: a token found in a cited span is not a fact the span supports. Defined when
///    the answer has at least one token and its cited spans have at least one.

#include <optional>
#include <string>
#include <vector>

#include "metrics/answer_metrics.h"

namespace plumb::metrics {

/// |Counter(gold) & Counter(answer)| / |gold|; 0 when gold is empty.
double TokenRecall(const std::vector<std::string>& answer, const std::vector<std::string>& gold);

/// Whether `gold` (non-empty) occurs as a contiguous run of `answer`.
bool ContainsRun(const std::vector<std::string>& answer, const std::vector<std::string>& gold);

struct LongAnswerScores {
  double token_recall = 0;
  double covers_gold = 0;
};

/// token_recall and covers_gold of `answer_tokens` (the normalized answer; empty when the
/// pipeline abstained) against the gold answers NormalizeGold produced.
LongAnswerScores ScoreLongAnswer(const std::vector<std::string>& answer_tokens,
                                 const NormalizedGold& gold);

/// knowledge_f1: TokenF1(answer_tokens, knowledge_tokens), where knowledge_tokens normalizes the
/// gold spans' text joined by spaces (see KnowledgeTokens). nullopt when knowledge_tokens is
/// empty.
std::optional<double> KnowledgeF1(const std::vector<std::string>& answer_tokens,
                                  const std::vector<std::string>& knowledge_tokens);

/// The normalized tokens of `texts` joined by single spaces (gold span texts, cited span texts).
std::vector<std::string> JoinedTokens(const std::vector<std::string>& texts,
                                      NormalizationProfile profile, std::string_view lang);

/// cited_support: the share of `answer_tokens` found in `cited_tokens`; nullopt when either
/// list is empty.
std::optional<double> CitedSupport(const std::vector<std::string>& answer_tokens,
                                   const std::vector<std::string>& cited_tokens);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_LONG_ANSWER_METRICS_H_
