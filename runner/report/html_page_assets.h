#ifndef PLUMB_RUNNER_REPORT_HTML_PAGE_ASSETS_H_
#define PLUMB_RUNNER_REPORT_HTML_PAGE_ASSETS_H_

/// What every HTML report page carries besides its content: the one inline style sheet, the one
/// inline script (it only filters, sorts and folds what the HTML already holds), and the
/// Content-Security-Policy that lets exactly these two run, by hash. Used by the run and drift
/// pages (runner/report/html_report.h), so both share one look and one behaviour.

#include <cstdint>
#include <functional>
#include <string>
#include <string_view>
#include <vector>

namespace plumb {

/// The page's style sheet and script, verbatim as they appear in the page.
extern const std::string_view kReportStyle;
extern const std::string_view kReportScript;

/// "sha256-" + base64 of the raw SHA-256 digest of `text`: a CSP hash source (CSP Level 3,
/// "hash-source").
std::string CspHashSource(std::string_view text);

/// The page's policy: nothing may load; only kReportScript runs and only kReportStyle applies.
std::string ReportContentSecurityPolicy();

/// Base64 (RFC 4648 §4, with padding) of `bytes`.
std::string Base64(std::string_view bytes);

/// Appends everything up to and including <body ...>: doctype, the CSP meta tag (first in
/// <head>, before any untrusted text), the escaped `title` and the style sheet. `page` names the
/// page kind for the script ("run" or "drift").
void AppendPageStart(std::string* out, std::string_view title, std::string_view page);

/// A status the filter form offers as a toggle chip, e.g. {"failed", "Failed"}.
struct FilterStatus {
  std::string id;     // the cards' data-status value
  std::string label;  // shown on the chip
  int64_t count = 0;  // cases with this status; the script updates it as filters change
};

/// Appends the filter form the script drives (id "filters", hidden until the script runs, since
/// without scripting it could do nothing): status chips, a tag choice, "metric under a value",
/// a text search, a sort order and fold buttons, and the "shown" line. `metric_note` says whose
/// scores the metric filter reads (e.g. "candidate").
void AppendFilterForm(std::string* out, const std::vector<FilterStatus>& statuses,
                      const std::vector<std::string>& tags, const std::vector<std::string>& metrics,
                      std::string_view metric_note, int64_t total_cases);

/// Appends one group of case cards (failed, lost, ...) the script counts and filters: a heading
/// with `title`, the group's `count` and the count the filters leave shown, then `aside`
/// (trusted HTML, may be empty); the `empty` note when the group has no case; and the cards,
/// which `cards` appends to `out`.
void AppendCaseGroup(std::string* out, std::string_view name, std::string_view title, int64_t count,
                     std::string_view aside, std::string_view empty,
                     const std::function<void()>& cards);

/// Inside a group's `cards` callback: ends the current list of cards and starts another under an
/// <h4> whose content is `heading` (trusted HTML; escape untrusted parts first) and whose id is
/// `id` (plain ASCII), so a group can hold its cards in several labelled lists.
void AppendCardListBreak(std::string* out, std::string_view id, std::string_view heading);

/// Appends the footer with SPEC §12's caution, the script and the closing tags.
void AppendPageEnd(std::string* out);

/// Renders a page with `render` and writes it to `path` (WriteFileAtomically: "-" is stdout).
/// A record of an unexpected shape (nlohmann throws while rendering) or a failed write is false
/// with a sentence naming `what` ("HTML report", "HTML drift report").
bool WriteHtmlPage(std::string_view what, const std::function<std::string()>& render,
                   const std::string& path, std::string* error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_HTML_PAGE_ASSETS_H_
