#ifndef PLUMB_RUNNER_REPORT_HTML_ESCAPE_H_
#define PLUMB_RUNNER_REPORT_HTML_ESCAPE_H_

/// Escaping for the HTML report (runner/report/html_report.h). Everything the report shows that
/// came from a suite, a corpus or a pipeline is untrusted and goes through these functions on its
/// way into the page, so no such string can open a tag, end an attribute or start a character
/// reference. Ill-formed UTF-8 (one U+FFFD per maximal subpart, as a browser decodes it) and
/// control characters other than tab and line breaks are replaced by U+FFFD, so the page stays
/// well-formed whatever bytes a pipeline sent. The bidi embedding, override and isolate
/// controls (U+202A..U+202E, U+2066..U+2069) are shown as the text "[U+202E]" instead of
/// reordering what the reader sees.

#include <string>
#include <string_view>

namespace plumb {

/// Appends `text` for use as element content: `&`, `<` and `>` become character references.
void AppendHtmlText(std::string* out, std::string_view text);

/// Appends `text` for use inside a double- or single-quoted attribute value: `&`, `<`, `>`,
/// `"` and `'` become character references.
void AppendHtmlAttribute(std::string* out, std::string_view text);

std::string EscapeHtmlText(std::string_view text);
std::string EscapeHtmlAttribute(std::string_view text);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_HTML_ESCAPE_H_
