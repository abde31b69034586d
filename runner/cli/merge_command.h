#ifndef PLUMB_RUNNER_CLI_MERGE_COMMAND_H_
#define PLUMB_RUNNER_CLI_MERGE_COMMAND_H_

/// `plumb merge RUN_DIR... --out DIR` (SPEC §8, §9): the run directories of one run's shards
/// (`plumb run --shard I/N`, I = 1..N) become one run, as if the suite had been run unsharded:
/// the journals' lines in suite order, and run.json with aggregates, thresholds and verdict
/// computed afresh over every case. The shards must be complete and of one suite, corpus,
/// pipeline config and repeat count; every mismatch is named with the directories it is between.
/// Exits like `plumb run` with the merged run's verdict (0, 1 or 3), or 2 when nothing merged.

#include <map>
#include <string>
#include <vector>

namespace plumb {

struct MergeOptions {
  std::vector<std::string> run_dirs;
  std::string out_dir;
  std::map<std::string, std::string> labels;  // --label: set on the merged run, over the shards'
  bool json = false;
};

int MergeCommand(const MergeOptions& options);

}  // namespace plumb

#endif  // PLUMB_RUNNER_CLI_MERGE_COMMAND_H_
