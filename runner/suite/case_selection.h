#ifndef PLUMB_RUNNER_SUITE_CASE_SELECTION_H_
#define PLUMB_RUNNER_SUITE_CASE_SELECTION_H_

/// Which cases a run takes (SPEC §8): `--tag T` (any of the tags), `--case GLOB` (any glob,
/// fnmatch syntax, on the id), `--shard I/N` (the cases whose stable id hash falls in shard I of
/// N), then `--limit N` (the first N of what is left, in suite order). Filters combine with AND.
/// A multi-turn session (issue 22) is one unit: it is selected whole or not at all. `--tag` and
/// `--case` select it when any of its turns matches (a glob is tried on the session's id and on
/// each turn id), `--shard` hashes the session's id, and `--limit` counts it as one.

#include <cstdint>
#include <string>
#include <vector>

#include "runner/suite/suite.h"

namespace plumb {

struct Shard {
  int index = 1;  // 1-based
  int count = 1;
};

struct CaseSelection {
  std::vector<std::string> tags;
  std::vector<std::string> id_globs;
  Shard shard;
  int64_t limit = -1;  // < 0: no limit
};

/// Parses "I/N" with 1 <= I <= N; false with a sentence in *error otherwise.
bool ParseShard(const std::string& text, Shard* shard, std::string* error);

/// FNV-1a (64-bit) of the id: stable across runs, machines and case order, so shards of one
/// suite never overlap and always cover it.
uint64_t StableIdHash(const std::string& id);

/// Indices into suite.cases of the selected cases, in suite order.
std::vector<size_t> SelectCases(const Suite& suite, const CaseSelection& selection);

}  // namespace plumb

#endif  // PLUMB_RUNNER_SUITE_CASE_SELECTION_H_
