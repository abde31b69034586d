#ifndef PLUMB_RUNNER_REPORT_FRESHNESS_REPORT_H_
#define PLUMB_RUNNER_REPORT_FRESHNESS_REPORT_H_

/// Freshness after corpus updates (issue 23) as the terminal summary, Markdown and HTML show
/// it: per update, the refresh time(s), and the fresh and stale rates of the cases asked after
/// it with their Wilson 95% intervals. Each returns "" when the run has no updates.

#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "runner/run/freshness.h"

namespace plumb {

/// Lines for the terminal summary, each indented by two spaces.
std::string FreshnessTerminalLines(const std::vector<UpdateFreshness>& freshness);
/// A Markdown section ("Freshness after corpus updates" and a table).
std::string FreshnessMarkdown(const std::vector<UpdateFreshness>& freshness);
/// An HTML <section id="freshness">, every string escaped.
std::string FreshnessHtml(const std::vector<UpdateFreshness>& freshness);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_FRESHNESS_REPORT_H_
