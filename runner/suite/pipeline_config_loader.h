#ifndef PLUMB_RUNNER_SUITE_PIPELINE_CONFIG_LOADER_H_
#define PLUMB_RUNNER_SUITE_PIPELINE_CONFIG_LOADER_H_

/// Reads a suite's (or a --pipelines file's) `pipelines:` block (SPEC §5) into PipelineConfigs:
/// validates every key, expands `${VAR}` in command items, env values, cwd, url and header
/// values, and keeps a redacted copy of the config for run.json. Called by the suite loader.
///
/// Keys: subprocess pipelines (`command`) take mode, env, cwd; HTTP pipelines (`url`) take
/// method, headers, request, retries, rate, insecure, ready_url and stream; both take timeout,
/// jobs, max_response_bytes, reply, offsets (the last two describe the reply, which both adapters
/// parse the same way), startup_timeout and price.

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "runner/suite/node_checker.h"
#include "runner/suite/source_node.h"
#include "runner/suite/suite.h"

namespace plumb {

/// Which pipelines get their `${VAR}`s expanded from the environment. A pipeline that is not
/// expanded reads nothing from the environment: each ExpandedString's value is its template
/// unchanged (see RedactEnv), for pipelines a command will not start.
struct PipelineExpansion {
  bool enabled = true;
  /// Names of the pipelines to expand; "" stands for the first one in the block. Empty: all.
  std::vector<std::string> only;

  bool Expands(const std::string& name, bool first) const;
};

/// Appends one PipelineConfig per entry of the `pipelines` mapping, in file order, reporting
/// every problem through *check; `${VAR}`s are expanded as `expansion` says.
void ReadPipelines(const SourceNode& pipelines, const PipelineExpansion& expansion,
                   NodeChecker* check, std::vector<PipelineConfig>* out);

/// "500ms", "30s", "2m" (decimals allowed) or a bare number of seconds, > 0. False otherwise.
bool ParseDuration(std::string_view text, int64_t* milliseconds);
/// "16MiB", "512KiB", "1GiB", "100B" or a bare number of bytes, > 0. False otherwise.
bool ParseByteSize(std::string_view text, int64_t* bytes);
/// "1M", "1K" (or "1k") or a bare number of tokens, at least 1. False otherwise.
bool ParseTokenCount(std::string_view text, double* tokens);
/// "20/s" or "100/m" (decimals allowed), > 0, as requests per second. False otherwise.
bool ParseRate(std::string_view text, double* per_second);

}  // namespace plumb

#endif  // PLUMB_RUNNER_SUITE_PIPELINE_CONFIG_LOADER_H_
