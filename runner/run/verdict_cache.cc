#include "runner/run/verdict_cache.h"

#include <sqlite3.h>
#include <sys/stat.h>

#include <cerrno>
#include <chrono>
#include <cstring>
#include <filesystem>
#include <thread>

namespace plumb {
namespace {

// Marks the file as a plumb grade cache (PRAGMA application_id) so a database of another
// program is refused instead of written into; "PlGr".
constexpr int kApplicationId = 0x506c4772;
constexpr int kSchemaVersion = 1;

constexpr char kSchema[] =
    "CREATE TABLE IF NOT EXISTS grades ("
    " key TEXT PRIMARY KEY NOT NULL,"
    " grade REAL NOT NULL,"
    " reason TEXT NOT NULL,"
    " stored_at INTEGER NOT NULL) WITHOUT ROWID";

}  // namespace

std::string VerdictCache::Problem(const std::string& doing, int code) const {
  const char* message = db_ != nullptr ? sqlite3_errmsg(db_) : sqlite3_errstr(code);
  std::string text = "grade cache " + path_ + ": " + doing + " failed (" + message + ")";
  const int primary = code & 0xff;
  if (primary == SQLITE_BUSY || primary == SQLITE_LOCKED) {
    return text + "; another process held it locked for more than " +
           std::to_string(kGradeCacheBusyMs / 1000) +
           " s. Wait for it, or pass --grade-cache with another file";
  }
  if (primary == SQLITE_NOTADB || primary == SQLITE_CORRUPT) {
    return text +
           "; the file is not a usable SQLite database. Move it away (its grades are "
           "lost; plumb asks the graders again) or pass --grade-cache with another file";
  }
  return text +
         "; pass --grade-cache with another file, or --no-grade-cache to grade without "
         "a cache";
}

bool VerdictCache::Exec(const char* sql, std::string* error) {
  char* message = nullptr;
  const int code = sqlite3_exec(db_, sql, nullptr, nullptr, &message);
  sqlite3_free(message);
  if (code == SQLITE_OK) return true;
  *error = Problem(std::string("running '") + sql + "'", sqlite3_extended_errcode(db_));
  return false;
}

std::unique_ptr<VerdictCache> VerdictCache::Open(const std::string& path, std::string* error) {
  const std::filesystem::path parent = std::filesystem::path(path).parent_path();
  if (!parent.empty()) {
    std::error_code ec;
    std::filesystem::create_directories(parent, ec);
    if (ec) {
      *error = "grade cache " + path + ": cannot create directory " + parent.string() + ": " +
               ec.message() + "; pass --grade-cache with a writable path";
      return nullptr;
    }
  }
  sqlite3* db = nullptr;
  const int opened = sqlite3_open_v2(
      path.c_str(), &db, SQLITE_OPEN_READWRITE | SQLITE_OPEN_CREATE | SQLITE_OPEN_NOMUTEX, nullptr);
  std::unique_ptr<VerdictCache> cache(new VerdictCache(path, db));
  if (opened != SQLITE_OK) {
    *error = cache->Problem("opening", opened);
    return nullptr;
  }
  sqlite3_busy_timeout(db, kGradeCacheBusyMs);
  // The header and the schema are read in one read transaction: read apart, another process
  // creating the cache could commit between them, and its tables would be seen without its
  // application id (a plumb cache taken for another program's database).
  if (!cache->Exec("BEGIN", error)) return nullptr;
  // The first statement reads the header: a file that is not a database fails here.
  sqlite3_stmt* probe = nullptr;
  int code = sqlite3_prepare_v2(db, "PRAGMA application_id", -1, &probe, nullptr);
  int application_id = 0;
  if (code == SQLITE_OK) {
    code = sqlite3_step(probe);
    if (code == SQLITE_ROW) application_id = sqlite3_column_int(probe, 0), code = SQLITE_OK;
  }
  sqlite3_finalize(probe);
  if (code != SQLITE_OK) {
    *error = cache->Problem("reading", sqlite3_extended_errcode(db));
    return nullptr;
  }
  sqlite3_stmt* tables = nullptr;
  int table_count = 0;
  if (sqlite3_prepare_v2(db, "SELECT count(*) FROM sqlite_schema", -1, &tables, nullptr) ==
          SQLITE_OK &&
      sqlite3_step(tables) == SQLITE_ROW) {
    table_count = sqlite3_column_int(tables, 0);
  }
  sqlite3_finalize(tables);
  if (!cache->Exec("COMMIT", error)) return nullptr;
  if (application_id != kApplicationId && table_count > 0) {
    *error = "grade cache " + path +
             ": the file is an SQLite database of another program, not a plumb grade cache; "
             "pass --grade-cache with another file";
    return nullptr;
  }
  // Switching a new file to WAL takes a lock SQLite's busy handler does not wait for, so two
  // processes opening one new cache at once retry here, within the same busy timeout.
  for (int waited_ms = 0;; waited_ms += 10) {
    const int code = sqlite3_exec(db, "PRAGMA journal_mode=WAL", nullptr, nullptr, nullptr);
    if (code == SQLITE_OK) break;
    if ((code & 0xff) != SQLITE_BUSY || waited_ms >= kGradeCacheBusyMs) {
      *error = cache->Problem("switching to WAL mode", sqlite3_extended_errcode(db));
      return nullptr;
    }
    std::this_thread::sleep_for(std::chrono::milliseconds(10));
  }
  if (!cache->Exec("PRAGMA synchronous=NORMAL", error) || !cache->Exec("BEGIN IMMEDIATE", error)) {
    return nullptr;
  }
  const std::string setup = std::string(kSchema) +
                            "; PRAGMA application_id=" + std::to_string(kApplicationId) +
                            "; PRAGMA user_version=" + std::to_string(kSchemaVersion);
  if (!cache->Exec(setup.c_str(), error) || !cache->Exec("COMMIT", error)) return nullptr;
  // A damaged page shows up here rather than as a wrong grade later.
  sqlite3_stmt* check = nullptr;
  std::string verdict;
  if (sqlite3_prepare_v2(db, "PRAGMA quick_check", -1, &check, nullptr) == SQLITE_OK &&
      sqlite3_step(check) == SQLITE_ROW) {
    const unsigned char* text = sqlite3_column_text(check, 0);
    verdict = text != nullptr ? reinterpret_cast<const char*>(text) : "";
  } else {
    verdict = sqlite3_errmsg(db);
  }
  sqlite3_finalize(check);
  if (verdict != "ok") {
    *error = cache->Problem("checking (" + verdict + ")", SQLITE_CORRUPT);
    return nullptr;
  }
  if (sqlite3_prepare_v2(db, "SELECT grade, reason FROM grades WHERE key = ?1", -1, &cache->lookup_,
                         nullptr) != SQLITE_OK ||
      sqlite3_prepare_v2(db,
                         "INSERT OR IGNORE INTO grades (key, grade, reason, stored_at) "
                         "VALUES (?1, ?2, ?3, strftime('%s','now'))",
                         -1, &cache->store_, nullptr) != SQLITE_OK) {
    *error = cache->Problem("preparing statements", sqlite3_extended_errcode(db));
    return nullptr;
  }
  return cache;
}

VerdictCache::~VerdictCache() {
  sqlite3_finalize(lookup_);
  sqlite3_finalize(store_);
  sqlite3_close(db_);
}

bool VerdictCache::LookupAll(const std::vector<std::string>& keys,
                             std::vector<std::optional<CachedGrade>>* found, std::string* error) {
  std::lock_guard<std::mutex> lock(mutex_);
  found->assign(keys.size(), std::nullopt);
  if (keys.empty()) return true;
  if (!Exec("BEGIN", error)) return false;
  for (size_t i = 0; i < keys.size(); ++i) {
    sqlite3_reset(lookup_);
    sqlite3_bind_text(lookup_, 1, keys[i].data(), static_cast<int>(keys[i].size()), SQLITE_STATIC);
    const int code = sqlite3_step(lookup_);
    if (code == SQLITE_ROW) {
      CachedGrade grade;
      grade.grade = sqlite3_column_double(lookup_, 0);
      const unsigned char* reason = sqlite3_column_text(lookup_, 1);
      if (reason != nullptr) {
        grade.reason.assign(reinterpret_cast<const char*>(reason),
                            static_cast<size_t>(sqlite3_column_bytes(lookup_, 1)));
      }
      (*found)[i] = std::move(grade);
    } else if (code != SQLITE_DONE) {
      *error = Problem("looking up a grade", sqlite3_extended_errcode(db_));
      sqlite3_reset(lookup_);
      sqlite3_exec(db_, "ROLLBACK", nullptr, nullptr, nullptr);
      return false;
    }
  }
  sqlite3_reset(lookup_);
  return Exec("COMMIT", error);
}

bool VerdictCache::StoreAll(const std::vector<std::pair<std::string, CachedGrade>>& grades,
                            std::string* error) {
  std::lock_guard<std::mutex> lock(mutex_);
  if (grades.empty()) return true;
  if (!Exec("BEGIN IMMEDIATE", error)) return false;
  for (const auto& [key, grade] : grades) {
    sqlite3_reset(store_);
    sqlite3_bind_text(store_, 1, key.data(), static_cast<int>(key.size()), SQLITE_STATIC);
    sqlite3_bind_double(store_, 2, grade.grade);
    sqlite3_bind_text(store_, 3, grade.reason.data(), static_cast<int>(grade.reason.size()),
                      SQLITE_STATIC);
    if (sqlite3_step(store_) != SQLITE_DONE) {
      *error = Problem("storing a grade", sqlite3_extended_errcode(db_));
      sqlite3_reset(store_);
      sqlite3_exec(db_, "ROLLBACK", nullptr, nullptr, nullptr);
      return false;
    }
  }
  sqlite3_reset(store_);
  return Exec("COMMIT", error);
}

}  // namespace plumb
