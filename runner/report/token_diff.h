#ifndef PLUMB_RUNNER_REPORT_TOKEN_DIFF_H_
#define PLUMB_RUNNER_REPORT_TOKEN_DIFF_H_

/// The token-level diff the HTML report draws under an answer: the answer's tokens against the
/// closest gold answer's, both as the suite's normalization profile sees them (SPEC §6.1), so a
/// reviewer sees exactly which words token_f1 counted. Pure functions; thread-safe.

#include <string>
#include <string_view>
#include <vector>

#include "metrics/normalize.h"

namespace plumb {

struct DiffToken {
  enum class Kind {
    kMatched,  // in the answer and in the gold answer
    kMissing,  // in the gold answer only
    kExtra,    // in the answer only
  };
  Kind kind = Kind::kMatched;
  std::string text;
};

/// Diffs `answer` tokens against `gold` tokens. The order comes from a longest common
/// subsequence (an answer token is dropped before a gold token when both choices keep the LCS
/// as long); then each extra token that equals a still-unpaired missing token is paired with it
/// and counts as matched where it stands in the answer, because token F1 is a bag-of-tokens
/// score that ignores order. So the matched tokens are exactly the multiset overlap token_f1
/// counts: precision = matched / answer tokens, recall = matched / gold tokens.
/// The result lists every answer token in answer order, with the missing gold tokens placed
/// where the alignment left them. Lists whose product of lengths exceeds kMaxDiffCells are
/// first trimmed of their common prefix and suffix; if still too long, the alignment is skipped
/// (answer tokens in order, then the missing ones) and the pairing alone decides matches.
std::vector<DiffToken> DiffTokens(const std::vector<std::string>& answer,
                                  const std::vector<std::string>& gold);

/// Bound on the LCS table (cells), about 16 MiB.
inline constexpr size_t kMaxDiffCells = size_t{4} << 20;

/// A diff against the gold answer that scores best.
struct AnswerDiff {
  int gold_index = -1;  // index into the gold answers; -1 when none has tokens (abstention case)
  double token_f1 = 0;  // the answer's token F1 against that gold answer
  std::vector<DiffToken> tokens;
};

/// Normalizes `answer` and every gold answer with `profile` / `lang`, picks the gold answer
/// with the highest token F1 (the first of equals; gold answers with no tokens are skipped, as
/// the SQuAD evaluation skips them) and diffs against it. A null answer (abstention) diffs as
/// no tokens. With no usable gold answer every answer token is extra.
AnswerDiff DiffAgainstClosestGold(const std::string* answer,
                                  const std::vector<std::string>& gold_answers,
                                  metrics::NormalizationProfile profile, std::string_view lang);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_TOKEN_DIFF_H_
