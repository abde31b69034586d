#ifndef PLUMB_RUNNER_RUN_JOURNAL_H_
#define PLUMB_RUNNER_RUN_JOURNAL_H_

/// RunJournal is the append-only record of finished cases, DIR/cases.jsonl (SPEC §9): one JSON
/// object per line, each line handed to the OS with a single write() as its case finishes, so a
/// crash or SIGINT loses at most the line being written. A torn last line (no newline, or not
/// JSON) is detected on read and dropped with a warning; reopening for --resume truncates it
/// away before appending, so it is never misread.

#include <memory>
#include <mutex>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

namespace plumb {

class RunJournal {
 public:
  /// Opens `path` for appending. With `keep_bytes` < 0 the file is truncated (a new run);
  /// otherwise it is cut to its first `keep_bytes` bytes (the valid prefix found by ReadJournal).
  static std::unique_ptr<RunJournal> Open(const std::string& path, long long keep_bytes,
                                          std::string* error);
  ~RunJournal();
  RunJournal(const RunJournal&) = delete;
  RunJournal& operator=(const RunJournal&) = delete;

  /// Appends `record` as one line. Thread-safe. Invalid UTF-8 in strings is replaced by U+FFFD.
  bool Append(const nlohmann::json& record, std::string* error);
  /// Appends `line` (one JSON value, no newline in it) and a newline, in one write. Thread-safe.
  bool AppendLine(std::string line, std::string* error);

 private:
  explicit RunJournal(int fd) : fd_(fd) {}
  int fd_;
  std::mutex mutex_;
};

struct JournalContents {
  std::vector<nlohmann::json> records;  // every complete, parseable line, in order
  long long valid_bytes = 0;            // length of the prefix those lines occupy
  std::vector<std::string> warnings;    // e.g. the torn last line that was dropped
};

/// Reads the journal at `path`. A missing file is an empty journal. Lines that are not JSON in
/// the middle of the file are an error (the journal is corrupt, not torn); only the last line
/// may be torn.
bool ReadJournal(const std::string& path, JournalContents* contents, std::string* error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_JOURNAL_H_
