#ifndef PLUMB_RUNNER_SUITE_DID_YOU_MEAN_H_
#define PLUMB_RUNNER_SUITE_DID_YOU_MEAN_H_

/// Suggestions for misspelt names (unknown suite keys, metric ids, enum values), so a
/// Diagnostic's hint can say "did you mean 'answers'?". Used by the suite loader.

#include <string>
#include <string_view>
#include <vector>

namespace plumb {

/// Optimal string alignment distance (Levenshtein plus transposition of adjacent characters,
/// each substring edited once), over bytes.
int EditDistance(std::string_view a, std::string_view b);

/// The candidate closest to `word` when its distance is at most 2 and shorter than `word` (ties:
/// the earlier candidate); empty when none is that close.
std::string ClosestName(std::string_view word, const std::vector<std::string>& candidates);

/// "did you mean 'X'?" when a candidate is close, otherwise "valid KIND are: a, b, c" (`kind`
/// is a plural noun such as "keys" or "metric ids").
std::string DidYouMeanHint(std::string_view word, const std::vector<std::string>& candidates,
                           std::string_view kind);

}  // namespace plumb

#endif  // PLUMB_RUNNER_SUITE_DID_YOU_MEAN_H_
