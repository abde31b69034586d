#include "runner/base/atomic_file.h"

#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <memory>

namespace plumb {

std::unique_ptr<AtomicFile> AtomicFile::Open(const std::string& path, std::string* error) {
  std::string temp = path + ".tmp." + std::to_string(getpid());
  std::FILE* file = std::fopen(temp.c_str(), "wb");
  if (file == nullptr) {
    *error = "cannot write " + temp + ": " + std::strerror(errno);
    return nullptr;
  }
  return std::unique_ptr<AtomicFile>(new AtomicFile(path, std::move(temp), file));
}

AtomicFile::~AtomicFile() {
  if (file_ == nullptr) return;
  std::fclose(file_);
  std::remove(temp_.c_str());
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
  if (failed_) {
    *error = "cannot write " + path_ + ": " + std::strerror(error_number_);
    std::remove(temp_.c_str());
    return false;
  }
  return true;
}

}  // namespace plumb
