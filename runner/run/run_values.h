#ifndef PLUMB_RUNNER_RUN_RUN_VALUES_H_
#define PLUMB_RUNNER_RUN_RUN_VALUES_H_

/// RunValues is what a comparison of runs (`plumb drift`, SPEC §7) needs of a finished run, without
/// its records: run.json's members but the per-case gold, each listed case's gold hash and tags,
/// and the journal folded per case over its repeats (per metric the sum and count of its values,
/// pass and repeat counts, the latency of the repeats that did not error), plus where the lowest
/// repeat's record is, so the few cases a report shows can be read back. LoadRunValues streams
/// the two files and keeps only that (100,000 cases: some tens of MB instead of some GB as a
/// LoadedRun); RunValuesOf folds a LoadedRun already in memory into the same values.

#include <cstdint>
#include <map>
#include <memory>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "runner/run/case_record.h"
#include "runner/run/run_reader.h"

namespace plumb {

struct RunValues {
  std::string dir;
  nlohmann::json record;  // run.json without its "cases" member
  /// The cases run.json lists, in its order: a row each. Journal records of other ids (a
  /// journal reused with another selection) are not folded in.
  std::vector<std::string> ids;
  std::vector<std::string> gold_hashes;  // "" when the case's gold_hash is not a string
  /// Row r's tags are tag_ids[tag_begin[r] .. tag_begin[r + 1]), indices into tag_names; the
  /// strings of the gold's "tags" array, each once, in ascending order of name.
  std::vector<uint32_t> tag_begin;
  std::vector<uint32_t> tag_ids;
  std::vector<std::string> tag_names;
  /// Metric ids in the order the journal first shows them; sums[m][row] and counts[m][row] are
  /// the sum and number of the row's values of metric m over its repeats.
  std::vector<std::string> metrics;
  std::vector<std::vector<double>> sums;
  std::vector<std::vector<uint32_t>> counts;
  std::vector<int> repeats;  // journal records per row
  std::vector<int> passes;   // of them, records that passed
  std::vector<double> latency_sum;
  std::vector<int> latency_count;   // records without an error, or timed out (at the timeout)
  std::vector<int> latency_bounds;  // of those, timeouts (a lower bound)
  /// Issue 21, over the records without an error: streamed replies' time to first token, token
  /// counts (records whose reply carried one) and cost (records with one).
  std::vector<double> ttft_sum;
  std::vector<int> ttft_count;
  std::vector<double> input_tokens_sum, output_tokens_sum;
  std::vector<int> usage_count;
  std::vector<double> cost_sum;
  std::vector<int> cost_count;
  /// The row's record with the lowest repeat (the first of equals), and its failed record with
  /// the lowest repeat: the byte offset in dir/cases.jsonl (LoadRunValues), or the address in
  /// the LoadedRun (RunValuesOf); -1 and nullptr when there is none.
  std::vector<int64_t> first_offset;
  std::vector<const CaseRecord*> first_record;
  std::vector<int64_t> first_failed_offset;
  std::vector<const CaseRecord*> first_failed_record;
  /// The row's gold: where its value lies in dir/run.json, or its address in the LoadedRun.
  std::vector<int64_t> gold_offset;
  std::vector<uint32_t> gold_length;
  std::vector<const nlohmann::json*> gold_record;
  std::vector<std::string> warnings;  // e.g. a torn last journal line, as LoadRun words it
  /// The LoadedRun first_record points into when LoadRunValues fell back to LoadRun.
  std::shared_ptr<const LoadedRun> loaded;

  size_t rows() const { return ids.size(); }
  /// The mean over repeats of metric m on row r; NaN when no repeat defines it.
  double Value(uint32_t row, size_t m) const;
  bool HasRecord(uint32_t row) const {
    return first_offset[row] >= 0 || first_record[row] != nullptr;
  }
  bool HasFailedRecord(uint32_t row) const {
    return first_failed_offset[row] >= 0 || first_failed_record[row] != nullptr;
  }
  /// The lowest repeat's record of `row` into *record: from the LoadedRun, or read back from
  /// the journal. False with a sentence when the journal cannot be read there any more, or the
  /// row has no record.
  bool FirstRecord(uint32_t row, CaseRecord* record, std::string* error) const;
  /// The same for the lowest failed repeat; read back from a journal written before causes
  /// were recorded, it gets its cause as LoadRun gives it (ClassifyFailure with the gold and
  /// case_pass).
  bool FirstFailedRecord(uint32_t row, CaseRecord* record, std::string* error) const;
  /// The row's gold as run.json records it (null when it lists none). False with a sentence
  /// when run.json cannot be read there any more.
  bool Gold(uint32_t row, nlohmann::json* gold, std::string* error) const;
  /// The suite's case_pass minimums (CasePassOf the record).
  std::map<std::string, double> CasePass() const { return CasePassOf(record); }
};

/// Reads `dir`/run.json and `dir`/cases.jsonl into *values in one pass over each, keeping only
/// the values above. A member it reads (a case's "gold_hash" and "tags"; a record's "id",
/// "repeat", "latency_ms", "latency_lower_bound", "ttft_ms", "usage", "cost", "error", "scores",
/// "pass" and "cause") is read as
/// LoadRun reads it; the rest of each file is stepped over by its brackets, quotes and escapes, not
/// checked as strictly as LoadRun checks it (a reply's citations, say, are not validated). Whenever
/// that quick reading declines a file (any line it does not take as LoadRun would, a torn last line
/// included), the run is read by LoadRun and folded by RunValuesOf instead, so a damaged run gets
/// LoadRun's sentence and warnings. False with that sentence when the run cannot be read.
bool LoadRunValues(const std::string& dir, RunValues* values, std::string* error);

/// Folds `run`'s records into *values; `run` must outlive *values (first_record points into it).
void RunValuesOf(const LoadedRun& run, RunValues* values);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_RUN_VALUES_H_
