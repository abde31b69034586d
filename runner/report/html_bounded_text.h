#ifndef PLUMB_RUNNER_REPORT_HTML_BOUNDED_TEXT_H_
#define PLUMB_RUNNER_REPORT_HTML_BOUNDED_TEXT_H_

/// Untrusted text of any length in the HTML report, drawn at a bounded length (issue 17 item 10:
/// a 1 MB answer made a 7.4 MB case card that took 14 s to open). Text up to the limit is
/// escaped as it is (html_escape.h). Longer text shows its first `limit` code points, a
/// "show all" button, and the whole text escaped once more inside an inert <template>, which
/// the browser neither lays out nor searches; the page's script (html_page_assets.cc) moves
/// that copy into view with textContent when the button is pressed. Without scripting the
/// reader sees the bounded text and a note of how much was left out.

#include <cstddef>
#include <string>
#include <string_view>

namespace plumb {

/// Code points shown of each piece of untrusted text before "show all".
inline constexpr size_t kShownCodePoints = 2000;

/// Code points of a question shown in a case's one-line summary.
inline constexpr size_t kShownQuestionCodePoints = 500;

/// Appends `text` as element content (not inside an attribute, not inside <summary>).
void AppendBoundedText(std::string* out, std::string_view text, size_t limit = kShownCodePoints);

/// The first `limit` code points of `text`, escaped, with "..." when cut; for places where a
/// button cannot go (a <summary>, an attribute is never fed untrusted text of this size).
void AppendClippedText(std::string* out, std::string_view text, size_t limit);

/// The byte length of the first `limit` code points of `text` (all of it when shorter).
size_t PrefixBytes(std::string_view text, size_t limit);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_HTML_BOUNDED_TEXT_H_
