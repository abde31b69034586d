#include "runner/cli/run_outputs.h"

#include "runner/base/report_stdout.h"
#include "runner/compare/drift_json.h"
#include "runner/report/junit_report.h"
#include "runner/report/markdown_report.h"

#if __has_include("runner/report/html_report.h")
#include "runner/report/html_report.h"
#define PLUMB_HAVE_HTML_REPORT 1
#endif

namespace plumb {
namespace {

#ifndef PLUMB_HAVE_HTML_REPORT
bool NoHtmlYet(const std::string& path, std::string* error) {
  *error = "cannot write " + path +
           ": this build of plumb has no HTML report writer yet "
           "(runner/report/html_report.h); use --markdown or --junit";
  return false;
}
#endif

std::string WithSuffix(const std::string& path, const std::string& pipeline) {
  if (path.empty() || path == kStdoutPath) return path;  // "-": each run's file in turn
  const size_t slash = path.find_last_of('/');
  const size_t dot = path.find_last_of('.');
  const bool has_extension =
      dot != std::string::npos && dot > 0 && (slash == std::string::npos || dot > slash + 1);
  if (!has_extension) return path + "." + pipeline;
  return path.substr(0, dot) + "." + pipeline + path.substr(dot);
}

}  // namespace

bool WriteRunOutputs(const LoadedRun& run, const OutputOptions& options, std::string* error) {
  if (!options.junit.empty() && !WriteJUnitReport(run, options.junit, error)) return false;
  if (!options.markdown.empty() && !WriteRunMarkdown(run, options.markdown, error)) return false;
  if (!options.html.empty()) {
#ifdef PLUMB_HAVE_HTML_REPORT
    if (!WriteHtmlRunReport(run, options.html, error)) return false;
#else
    return NoHtmlYet(options.html, error);
#endif
  }
  return true;
}

bool WriteDriftOutputs(const DriftReport& report, const LoadedRun& base, const LoadedRun& cand,
                       const OutputOptions& options, std::string* error) {
  if (!options.junit.empty() && !WriteJUnitReport(cand, options.junit, error, &report)) {
    return false;
  }
  if (!options.markdown.empty() && !WriteDriftMarkdown(report, options.markdown, error)) {
    return false;
  }
  if (!options.html.empty()) {
#ifdef PLUMB_HAVE_HTML_REPORT
    if (!WriteHtmlDriftReport(DriftReportToJson(report), base, cand, options.html, error)) {
      return false;
    }
#else
    (void)base;
    return NoHtmlYet(options.html, error);
#endif
  }
  return true;
}

OutputOptions OutputsForPipeline(const OutputOptions& options, const std::string& pipeline) {
  return {WithSuffix(options.html, pipeline), WithSuffix(options.junit, pipeline),
          WithSuffix(options.markdown, pipeline)};
}

}  // namespace plumb
