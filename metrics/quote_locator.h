#ifndef PLUMB_METRICS_QUOTE_LOCATOR_H_
#define PLUMB_METRICS_QUOTE_LOCATOR_H_

/// Finds a quoted passage in a document and returns it as a code-point span. The suite loader
/// turns gold quotes into offsets with it (SPEC §4), `plumb check` re-resolves them, and the
/// citation and retrieval metrics place quote citations (§6.3). Pure functions; thread-safe.

#include <cstdint>
#include <string>
#include <string_view>

#include "metrics/offset_units.h"

namespace plumb::metrics {

/// Sets [*start_cp, *end_cp) to the first occurrence of `quote` in `text`, in code points.
///
/// Two passes, the first that finds the quote wins:
///  1. exact: the quote's bytes as they are;
///  2. whitespace-collapsed: in both the text and the quote every run of Unicode White_Space
///     (ICU u_isUWhiteSpace: tab, newline, space, NBSP, U+3000, ...) counts as one space, and the
///     quote's leading and trailing whitespace is dropped. The span is mapped back onto the
///     original text, so it covers the text's own whitespace runs inside the match and starts
///     and ends on a non-whitespace code point.
/// Nothing else is forgiven: case, Unicode normalization form, and typographic quotes or dashes
/// must match as written. Matches start and end on code-point boundaries.
///
/// Returns false, leaving the outputs untouched, when the quote is not found or is empty or only
/// whitespace. Cost: a byte search (std::string::find) for the exact pass; the collapsed pass,
/// run only when the exact one fails, searches the bytes for the quote's first word and checks
/// the rest at each occurrence, copying nothing (O(n) typically, O(n * m) at worst).
bool LocateQuote(const std::string& text, std::string_view quote, int64_t* start_cp,
                 int64_t* end_cp);

/// The same, with a CodePointIndex built from this very `text`, for callers that locate many
/// quotes in one document: byte offsets then map to code points without decoding the text.
bool LocateQuote(const std::string& text, const CodePointIndex& index, std::string_view quote,
                 int64_t* start_cp, int64_t* end_cp);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_QUOTE_LOCATOR_H_
