#ifndef PLUMB_RUNNER_RUN_PREDICTION_READER_H_
#define PLUMB_RUNNER_RUN_PREDICTION_READER_H_

/// PredictionReader scores a file of recorded replies for `plumb score` (SPEC §8): one reply
/// object per line, with the "id" of its case and an optional "repeat". The file is read in
/// blocks; the lines of a block are parsed and scored on several threads (each reply is held
/// only while its block is scored, so memory grows with the number of cases, not with reply
/// sizes) and then taken in file order: records go to the journal in that order, and every bad
/// line is printed with its line and column. Any bad line makes the whole file unusable; the
/// caller then discards the journal. Cases with no reply are recorded last, as errored items.
///
/// The PreparedSuite and the journal must outlive the reader; one reader reads one file once.

#include <cstdint>
#include <string>
#include <string_view>
#include <unordered_set>
#include <vector>

#include "runner/base/json_writer.h"
#include "runner/pipeline/flat_reply.h"
#include "runner/run/case_record.h"
#include "runner/run/prepared_suite.h"
#include "runner/run/run_journal.h"
#include "runner/run/scheduler.h"

namespace plumb {

class PredictionReader {
 public:
  PredictionReader(const std::string& path, const PreparedSuite& prepared, RunJournal* journal);
  PredictionReader(const PredictionReader&) = delete;
  PredictionReader& operator=(const PredictionReader&) = delete;

  /// False with *error set when the file cannot be read, holds a bad line, or the journal
  /// cannot be written; `max_repeat` is the highest repeat number seen.
  bool ReadAll(std::vector<CaseOutcome>* outcomes, int* max_repeat, std::string* error);

 private:
  struct Line {
    std::string_view text;
    int number = 0;
  };
  /// What one line came to; `journal_begin`/`journal_end` delimit its record in the chunk's text.
  struct LineResult {
    enum class Kind { kProblem, kUnknownCase, kScored };
    Kind kind = Kind::kProblem;
    int line_number = 0;
    int column = 1;
    std::string message;  // kProblem: what is wrong; kUnknownCase: the id
    size_t case_index = 0;
    int repeat = 0;
    size_t journal_begin = 0;
    size_t journal_end = 0;
    CaseOutcome outcome;
  };
  /// One thread's share of a block; kept from block to block so its buffers are reused.
  struct Chunk {
    JsonWriter journal;  // the records of its scored lines, each ending in a newline
    std::vector<LineResult> results;
    FlatReply flat;  // scratch for ReadFlat
  };
  enum class LineRead { kRecord, kNoRecord, kDeclined };

  /// The common flat reply (runner/pipeline/flat_reply.h) read without a JSON tree, scored, and its
  /// record written to chunk->journal and *result; kDeclined leaves the line to ReadGeneral.
  /// kNoRecord: the line names a case the suite does not have.
  LineRead ReadFlat(const Line& line, Chunk* chunk, size_t* next_index, LineResult* result) const;
  /// Any line, through nlohmann::json, scored and written as ReadFlat does; kNoRecord with the
  /// problem in *result.
  LineRead ReadGeneral(const Line& line, Chunk* chunk, size_t* next_index,
                       LineResult* result) const;
  /// Ends the record written into chunk->journal from `begin` with its newline, and keeps its
  /// place and its outcome in *result.
  static void KeepRecord(size_t begin, CaseRecord&& record, Chunk* chunk, LineResult* result);
  /// Sets result->case_index (trying *next_index first), or marks the case unknown.
  bool FindCase(std::string_view id, size_t* next_index, LineResult* result) const;
  /// Scores one block's lines; safe to call from several threads on disjoint chunks.
  void ScoreChunk(const std::vector<Line>& lines, size_t begin, size_t end, Chunk* chunk) const;
  bool ScoreBlock(const std::vector<Line>& lines, std::vector<CaseOutcome>* outcomes,
                  int* max_repeat, std::string* error);
  /// Takes one chunk's results in order: duplicates, problems, then records and outcomes.
  bool Merge(Chunk& chunk, std::vector<CaseOutcome>* outcomes, int* max_repeat, std::string* error);
  /// False when a reply for (case, repeat) was taken already; otherwise records it.
  bool MarkSeen(size_t case_index, int repeat);
  void Problem(int line_number, int column, const std::string& message);
  bool RecordMissing(size_t case_index, std::vector<CaseOutcome>* outcomes, std::string* error);
  static uint64_t Key(size_t case_index, int repeat) {
    return (static_cast<uint64_t>(case_index) << 20) ^ static_cast<uint64_t>(repeat);
  }

  const std::string& path_;
  const PreparedSuite& prepared_;
  RunJournal* journal_;
  const PipelineConfig recorded_;  // replies in the protocol's own shape, offsets in code points
  std::vector<bool> seen_first_;   // by case: a reply for repeat 0 was taken
  std::unordered_set<uint64_t> seen_later_;  // Key(case, repeat) of the later repeats taken
  std::vector<Chunk> chunks_;
  int problems_ = 0;
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_PREDICTION_READER_H_
