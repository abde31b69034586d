#include "runner/report/freshness_report.h"

#include <fmt/format.h>

#include <cmath>

#include "runner/report/html_escape.h"
#include "runner/report/markdown_report.h"

namespace plumb {
namespace {

std::string Rate(const std::optional<metrics::MetricSummary>& s) {
  if (!s) return "n/a";
  if (!std::isfinite(s->interval.low) || !std::isfinite(s->interval.high)) {
    return fmt::format("{:.3f} (n {})", s->mean, s->n);
  }
  return fmt::format("{:.3f} [{:.3f}, {:.3f}] (n {})", s->mean, s->interval.low, s->interval.high,
                     s->n);
}

/// "412 ms", "412 ms, 398 ms (shards 1/2, 2/2)", "not called (no refresh:)", "failed: ...".
std::string RefreshText(const UpdateFreshness& u) {
  if (u.refreshes.empty()) return "not run";
  std::string out;
  for (const RefreshRecord& r : u.refreshes) {
    std::string one;
    if (!r.called) {
      one = "none (the pipeline has no refresh hook)";
    } else if (r.ok) {
      one = fmt::format("{:.0f} ms", r.ms);
    } else {
      one = fmt::format("failed after {:.0f} ms: {}", r.ms, r.error);
    }
    if (!r.shard.empty()) one += " (shard " + r.shard + ")";
    out += (out.empty() ? "" : "; ") + one;
  }
  return out;
}

}  // namespace

std::string FreshnessTerminalLines(const std::vector<UpdateFreshness>& freshness) {
  std::string out;
  for (const UpdateFreshness& u : freshness) {
    out += fmt::format("  {:<20} update {}: refresh {}\n", "freshness", u.update, RefreshText(u));
    out += fmt::format("  {:<20}   fresh {}  stale {}  ({} case{} after it)\n", "", Rate(u.fresh),
                       Rate(u.stale), u.cases, u.cases == 1 ? "" : "s");
  }
  return out;
}

std::string FreshnessMarkdown(const std::vector<UpdateFreshness>& freshness) {
  if (freshness.empty()) return "";
  std::string out =
      "\n**Freshness after corpus updates**\n\n"
      "| update | refresh | fresh (95% interval) | stale (95% interval) | cases |\n"
      "|---|---|---|---|---:|\n";
  for (const UpdateFreshness& u : freshness) {
    out += fmt::format("| `{}` | {} | {} | {} | {} |\n", u.update,
                       MarkdownText(RefreshText(u), 200), Rate(u.fresh), Rate(u.stale), u.cases);
  }
  return out;
}

std::string FreshnessHtml(const std::vector<UpdateFreshness>& freshness) {
  if (freshness.empty()) return "";
  std::string out =
      "<section id=\"freshness\"><h2>Freshness after corpus updates</h2>"
      "<p>Cases asked after each update: <b>fresh</b> answered right against the new text, "
      "<b>stale</b> still gave what the corpus said before it (95% Wilson intervals).</p>"
      "<table><thead><tr><th>update</th><th>refresh</th><th>fresh</th><th>stale</th>"
      "<th>cases</th></tr></thead><tbody>";
  for (const UpdateFreshness& u : freshness) {
    out += "<tr><td>" + EscapeHtmlText(u.update) + "</td><td>" + EscapeHtmlText(RefreshText(u)) +
           "</td><td>" + EscapeHtmlText(Rate(u.fresh)) + "</td><td>" +
           EscapeHtmlText(Rate(u.stale)) + "</td><td>" + std::to_string(u.cases) + "</td></tr>";
  }
  out += "</tbody></table></section>";
  return out;
}

}  // namespace plumb
