#ifndef PLUMB_METRICS_ARTICLES_H_
#define PLUMB_METRICS_ARTICLES_H_

/// Per-language article lists for the `mlqa` and `unicode` normalization profiles (SPEC §6.1).
/// Words are lowercase UTF-8 in NFC, as typed in the MLQA evaluation script. Lookups are by
/// exact ISO 639-1 code ("de", not "DE" or "de-AT"); an unknown code has no articles.

#include <string_view>
#include <vector>

namespace plumb::metrics {

/// The Arabic definite article "ال", written joined to its noun. MLQA's script removes it
/// wherever it occurs (see normalize_mlqa.cc); the unicode profile strips it as a word prefix.
inline constexpr std::string_view kArabicArticle = "\u0627\u0644";

/// The words MLQA's remove_articles deletes: en, es, de, vi (from memory of
/// mlqa_evaluation_v1.py). Empty for every other code, ar and zh included.
const std::vector<std::string_view>& MlqaArticleWords(std::string_view lang);

/// The unicode profile's article words: MLQA's lists plus fr, it and pt (common practice). Empty
/// for every other code; Arabic is handled through kArabicArticle.
const std::vector<std::string_view>& ArticleWords(std::string_view lang);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_ARTICLES_H_
