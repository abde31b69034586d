#ifndef PLUMB_RUNNER_RUN_RUN_JOURNAL_H_
#define PLUMB_RUNNER_RUN_RUN_JOURNAL_H_

/// RunJournal is the append-only record of finished cases, DIR/cases.jsonl (SPEC §9): one JSON
/// object per line, each line handed to the OS with a single write() as its case finishes, so a
/// crash or SIGINT loses at most the line being written. A torn last line (no newline, or not
/// JSON) is detected on read and dropped with a warning; reopening for --resume truncates it
/// away before appending, so it is never misread.
///
/// `plumb score` opens its journal with a buffer instead: it writes a pending file that is
/// renamed into place only when complete, so nothing is gained by a write() per line, and 20,000
/// of them cost more than the scoring.

#include <memory>
#include <mutex>
#include <nlohmann/json.hpp>
#include <string>
#include <string_view>
#include <vector>

namespace plumb {

class RunJournal {
 public:
  /// Opens `path` for appending. With `keep_bytes` < 0 the file is truncated (a new run);
  /// otherwise it is cut to its first `keep_bytes` bytes (the valid prefix found by ReadJournal).
  /// With `buffer_bytes` > 0 lines are gathered and written once that many bytes are waiting,
  /// and by Flush(); call Flush() before relying on the file (the destructor only tries).
  static std::unique_ptr<RunJournal> Open(const std::string& path, long long keep_bytes,
                                          std::string* error, size_t buffer_bytes = 0);
  ~RunJournal();
  RunJournal(const RunJournal&) = delete;
  RunJournal& operator=(const RunJournal&) = delete;

  /// Appends `line` (one JSON value, no newline in it) and a newline: in one write, or into the
  /// buffer of a buffered journal. Thread-safe.
  bool AppendLine(std::string line, std::string* error);
  /// Appends `lines`: whole lines, each already ending in a newline, kept together. Thread-safe.
  bool AppendLines(std::string_view lines, std::string* error);
  /// Writes what a buffered journal holds. Thread-safe; a no-op without a buffer.
  bool Flush(std::string* error);

 private:
  RunJournal(int fd, size_t buffer_bytes) : fd_(fd), buffer_bytes_(buffer_bytes) {}
  /// Writes all of `data`; the caller holds mutex_.
  bool WriteAll(std::string_view data, std::string* error);

  int fd_;
  size_t buffer_bytes_;
  std::string pending_;
  std::mutex mutex_;
};

struct JournalContents {
  std::vector<nlohmann::json> records;  // every complete, parseable line, in order
  long long valid_bytes = 0;            // length of the prefix those lines occupy
  std::vector<std::string> warnings;    // e.g. the torn last line that was dropped
  std::vector<std::string> lines;       // with keep_lines: each record's text, no newline
};

/// Reads the journal at `path`. A missing file is an empty journal. Lines that are not JSON in
/// the middle of the file are an error (the journal is corrupt, not torn); only the last line
/// may be torn.
/// With `keep_lines`, each record's line is kept as written (for copying it unchanged).
bool ReadJournal(const std::string& path, JournalContents* contents, std::string* error,
                 bool keep_lines = false);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_RUN_JOURNAL_H_
