#ifndef PLUMB_RUNNER_BASE_ATOMIC_FILE_H_
#define PLUMB_RUNNER_BASE_ATOMIC_FILE_H_

/// AtomicFile writes a file through a temporary one in the same directory and rename(2), so
/// readers see the old file or the new one, never half of one, and a large file can be written
/// in pieces rather than held whole. The temporary file is removed unless Commit succeeds. Not
/// fsynced: like the run journal, the file is safe from a crash of plumb, not from a power cut,
/// which a CI run answers by running again (an fsync of a large run.json costs more wall time
/// than the scoring). Not thread-safe; pieces may come from several threads one after another.

#include <cstdio>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

namespace plumb {

class AtomicFile {
 public:
  /// Null with *error set when the temporary file cannot be created.
  static std::unique_ptr<AtomicFile> Open(const std::string& path, std::string* error);
  ~AtomicFile();
  AtomicFile(const AtomicFile&) = delete;
  AtomicFile& operator=(const AtomicFile&) = delete;

  /// False once a write has failed (Commit then reports it).
  bool Write(std::string_view data);
  /// Closes the temporary file and renames it over `path`; false with *error on any failure.
  bool Commit(std::string* error);

 private:
  AtomicFile(std::string path, std::string temp, std::FILE* file)
      : path_(std::move(path)), temp_(std::move(temp)), file_(file) {}

  std::string path_;
  std::string temp_;
  std::FILE* file_;
  bool failed_ = false;
  int error_number_ = 0;
};

/// Removes from `dir` the temporary files of plumb processes that are no longer running:
/// NAME.tmp.PID (AtomicFile) and NAME.pending.PID (`plumb score`'s journal), which a process
/// killed by SIGKILL between creating and renaming one leaves behind. A file whose PID is alive,
/// or is this process, is kept. Returns the names removed; errors are ignored (a file that
/// cannot be removed is only clutter).
std::vector<std::string> RemoveStaleTempFiles(const std::string& dir);

}  // namespace plumb

#endif  // PLUMB_RUNNER_BASE_ATOMIC_FILE_H_
