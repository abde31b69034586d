#include "runner/base/atomic_file.h"

#include <dirent.h>
#include <signal.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <memory>

#include "runner/base/interrupt.h"

namespace plumb {

std::unique_ptr<AtomicFile> AtomicFile::Open(const std::string& path, std::string* error) {
  std::string temp = path + ".tmp." + std::to_string(getpid());
  RemoveOnInterrupt(temp);
  std::FILE* file = std::fopen(temp.c_str(), "wb");
  if (file == nullptr) {
    KeepOnInterrupt(temp);
    *error = "cannot write " + temp + ": " + std::strerror(errno);
    return nullptr;
  }
  return std::unique_ptr<AtomicFile>(new AtomicFile(path, std::move(temp), file));
}

AtomicFile::~AtomicFile() {
  if (file_ == nullptr) return;
  std::fclose(file_);
  std::remove(temp_.c_str());
  KeepOnInterrupt(temp_);
}

bool AtomicFile::Write(std::string_view data) {
  if (failed_) return false;
  if (std::fwrite(data.data(), 1, data.size(), file_) != data.size()) {
    failed_ = true;
    error_number_ = errno;
  }
  return !failed_;
}

bool AtomicFile::Commit(std::string* error) {
  if (!failed_ && std::fflush(file_) != 0) {
    failed_ = true;
    error_number_ = errno;
  }
  const bool closed = std::fclose(file_) == 0;
  if (!closed && !failed_) {
    failed_ = true;
    error_number_ = errno;
  }
  file_ = nullptr;
  if (!failed_ && std::rename(temp_.c_str(), path_.c_str()) != 0) {
    failed_ = true;
    error_number_ = errno;
  }
  KeepOnInterrupt(temp_);
  if (failed_) {
    *error = "cannot write " + path_ + ": " + std::strerror(error_number_);
    std::remove(temp_.c_str());
    return false;
  }
  return true;
}

namespace {

// The PID in NAME.tmp.PID or NAME.pending.PID, or 0 when `name` is not such a file.
pid_t TempFileOwner(const std::string& name) {
  const size_t dot = name.find_last_of('.');
  if (dot == std::string::npos || dot + 1 == name.size() || name.size() - dot > 11) return 0;
  long pid = 0;
  for (size_t i = dot + 1; i < name.size(); ++i) {
    if (name[i] < '0' || name[i] > '9') return 0;
    pid = pid * 10 + (name[i] - '0');
  }
  const std::string stem = name.substr(0, dot);
  for (const std::string marker : {".tmp", ".pending"}) {
    if (stem.size() > marker.size() &&
        stem.compare(stem.size() - marker.size(), marker.size(), marker) == 0) {
      return static_cast<pid_t>(pid);
    }
  }
  return 0;
}

}  // namespace

std::vector<std::string> RemoveStaleTempFiles(const std::string& dir) {
  std::vector<std::string> removed;
  DIR* listing = opendir(dir.c_str());
  if (listing == nullptr) return removed;
  while (const dirent* entry = readdir(listing)) {
    const std::string name = entry->d_name;
    const pid_t owner = TempFileOwner(name);
    if (owner <= 0 || owner == getpid()) continue;
    // ESRCH: no such process. EPERM means it runs under another user: still alive.
    if (kill(owner, 0) == 0 || errno != ESRCH) continue;
    if (unlink((dir + "/" + name).c_str()) == 0) removed.push_back(name);
  }
  closedir(listing);
  return removed;
}

}  // namespace plumb
