#ifndef PLUMB_METRICS_NORMALIZE_H_
#define PLUMB_METRICS_NORMALIZE_H_

/// Answer normalization profiles (SPEC §6.1). Each turns a raw answer into the token list the
/// answer metrics compare. Pure functions over UTF-8 text; invalid UTF-8 is decoded with U+FFFD
/// replacement (as Python's errors="replace" would) so no input is ever rejected.

#include <string>
#include <string_view>
#include <vector>

#include "metrics/token_views.h"

namespace plumb::metrics {

enum class NormalizationProfile {
  kSquad,    // the SQuAD v1.1/v2.0 evaluation script's normalize_answer, as Python 3 runs it
  kMlqa,     // the MLQA evaluation script's normalization, with per-language articles
  kUnicode,  // NFKC, full case folding, P* removed, UAX #29 words
};

/// Parses "squad" | "mlqa" | "unicode"; returns false for anything else.
bool ParseNormalizationProfile(std::string_view name, NormalizationProfile* out);
const char* NormalizationProfileName(NormalizationProfile profile);

/// The profile's tokens for `text`. `lang` is an ISO 639-1 code used by mlqa and unicode.
std::vector<std::string> NormalizeTokens(std::string_view text, NormalizationProfile profile,
                                         std::string_view lang);

/// The same tokens as views, refilling `out`; for squad, pure-ASCII text takes one pass and no
/// allocation (up to 256 bytes).
void NormalizeTokens(std::string_view text, NormalizationProfile profile, std::string_view lang,
                     TokenViews* out);

/// SQuAD's normalize_answer(text): the tokens joined by single spaces.
std::string NormalizeSquad(std::string_view text);

/// The per-profile tokenizers NormalizeTokens dispatches to.
std::vector<std::string> NormalizeSquadTokens(std::string_view text);
void NormalizeSquadTokens(std::string_view text, TokenViews* out);
std::vector<std::string> NormalizeMlqaTokens(std::string_view text, std::string_view lang);
std::vector<std::string> NormalizeUnicodeTokens(std::string_view text, std::string_view lang);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_NORMALIZE_H_
