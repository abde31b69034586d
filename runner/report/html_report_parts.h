#ifndef PLUMB_RUNNER_REPORT_HTML_REPORT_PARTS_H_
#define PLUMB_RUNNER_REPORT_HTML_REPORT_PARTS_H_

/// Small pieces the run and drift pages of the HTML report (runner/report/html_report.h) both use:
/// the report's number formats, tolerant reads of run.json / drift JSON fields (a report of an
/// older or partial record shows what it can rather than failing), and a few escaped fragments.

#include <map>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "runner/run/metric_values.h"

namespace plumb {

/// Scores: three decimals ("0.308", "1.000").
std::string FormatScore(double value);
/// A difference of scores: three decimals with its sign, a true minus sign for negatives
/// ("+0.250", "\u22120.500", "0.000").
std::string FormatSignedScore(double value);
/// Other numbers (gold values, tolerances): shortest form, "10", "0.25", "1e+06".
std::string FormatNumber(double value);
/// Latencies: "0.42 ms", "812 ms", "31.0 s".
std::string FormatMilliseconds(double ms);

/// `object[key]` when it is a string, else "".
std::string JsonString(const nlohmann::json& object, const char* key);
/// `object[key]` when it is a number, else nullopt (null, missing, another type).
std::optional<double> JsonNumber(const nlohmann::json& object, const char* key);
/// The strings of the array `object[key]` (other items and other types are skipped).
std::vector<std::string> JsonStrings(const nlohmann::json& object, const char* key);
/// `value` as compact JSON text for display (ill-formed UTF-8 replaced); escape it on output.
std::string JsonText(const nlohmann::json& value);

/// Per-case scores for the data-scores attribute the page's script filters and sorts on:
/// "name value name value ...", names percent-encoded (so a space never appears in one),
/// values in shortest round-trip-enough form ("0.75", "1"). Escape it with AppendHtmlAttribute.
std::string ScoresAttribute(const MetricValues& scores);

/// Tags for the data-tags attribute: percent-encoded and space-separated.
std::string TagsAttribute(const std::vector<std::string>& tags);

/// Metric ids of `metrics` (an object keyed by metric id) in the order the run summary lists
/// them (answer, citation, retrieval, rates), then any others alphabetically.
std::vector<std::string> MetricOrder(const nlohmann::json& metrics);

/// `text` percent-encoded for a URL fragment parameter (all but A-Z a-z 0-9 - . _ ~).
std::string PercentEncode(const std::string& text);

/// <dt>term</dt><dd>escaped value</dd>
void AppendFact(std::string* out, const char* term, const std::string& value);
/// Labels {"git": "abc"} as <code>git=abc</code> items, or "none".
void AppendLabels(std::string* out, const nlohmann::json& labels);
/// A link that filters the cases by `tag` (#tag=...).
void AppendTagLink(std::string* out, const std::string& tag);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_HTML_REPORT_PARTS_H_
