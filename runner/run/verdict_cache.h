#ifndef PLUMB_RUNNER_RUN_VERDICT_CACHE_H_
#define PLUMB_RUNNER_RUN_VERDICT_CACHE_H_

/// VerdictCache keeps every grade a grader gave, in an SQLite database, under the key of the
/// call that produced it (GradeKey: the grader's identity and the exact request, repeat index
/// included). A cached grade is never requested again: re-running an unchanged answer costs no
/// grader call. WAL mode and a busy timeout let several plumb processes on one machine (the
/// shards of a run) share one file; writes go in transactions, so a crash loses at most the
/// grades not yet stored and never leaves a torn row. A file that is not a plumb grade cache,
/// is corrupt, or stays locked is an error with a sentence saying what to do, never a silent
/// miss. Thread-safe: calls are serialized on one connection.

#include <memory>
#include <mutex>
#include <optional>
#include <string>
#include <utility>
#include <vector>

struct sqlite3;
struct sqlite3_stmt;

namespace plumb {

struct CachedGrade {
  double grade = 0;
  std::string reason;
};

class VerdictCache {
 public:
  /// Opens or creates the database at `path` (its directory is created too). Null with *error
  /// when the file cannot be opened, is not an SQLite database, holds another program's tables,
  /// fails SQLite's quick check, or stays locked beyond the busy timeout.
  static std::unique_ptr<VerdictCache> Open(const std::string& path, std::string* error);
  ~VerdictCache();
  VerdictCache(const VerdictCache&) = delete;
  VerdictCache& operator=(const VerdictCache&) = delete;

  /// Looks up each key in one read transaction; (*found)[i] is set for the keys present.
  bool LookupAll(const std::vector<std::string>& keys,
                 std::vector<std::optional<CachedGrade>>* found, std::string* error);
  /// Stores the grades in one transaction (a key already present keeps its first grade).
  bool StoreAll(const std::vector<std::pair<std::string, CachedGrade>>& grades, std::string* error);

  const std::string& path() const { return path_; }

 private:
  VerdictCache(std::string path, sqlite3* db) : path_(std::move(path)), db_(db) {}
  bool Exec(const char* sql, std::string* error);
  std::string Problem(const std::string& doing, int code) const;

  std::string path_;
  sqlite3* db_;
  sqlite3_stmt* lookup_ = nullptr;
  sqlite3_stmt* store_ = nullptr;
  std::mutex mutex_;
};

/// Milliseconds a cache call waits for another process's write lock before failing.
inline constexpr int kGradeCacheBusyMs = 30000;

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_VERDICT_CACHE_H_
