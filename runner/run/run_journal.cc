#include "runner/run/run_journal.h"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <fstream>
#include <sstream>

namespace plumb {

std::unique_ptr<RunJournal> RunJournal::Open(const std::string& path, long long keep_bytes,
                                             std::string* error, size_t buffer_bytes) {
  int flags = O_WRONLY | O_CREAT | O_APPEND | O_CLOEXEC;
  if (keep_bytes < 0) flags |= O_TRUNC;
  int fd = ::open(path.c_str(), flags, 0644);
  if (fd < 0) {
    *error = "cannot open journal " + path + ": " + std::strerror(errno);
    return nullptr;
  }
  if (keep_bytes >= 0 && ::ftruncate(fd, keep_bytes) != 0) {
    *error = "cannot truncate journal " + path + ": " + std::strerror(errno);
    ::close(fd);
    return nullptr;
  }
  return std::unique_ptr<RunJournal>(new RunJournal(fd, buffer_bytes));
}

RunJournal::~RunJournal() {
  std::string ignored;
  Flush(&ignored);
  ::close(fd_);
}

bool RunJournal::AppendLine(std::string line, std::string* error) {
  line.push_back('\n');
  std::lock_guard<std::mutex> lock(mutex_);
  if (buffer_bytes_ == 0) return WriteAll(line, error);
  pending_ += line;
  if (pending_.size() < buffer_bytes_) return true;
  const bool written = WriteAll(pending_, error);
  pending_.clear();
  return written;
}

bool RunJournal::AppendLines(std::string_view lines, std::string* error) {
  std::lock_guard<std::mutex> lock(mutex_);
  if (buffer_bytes_ == 0) return WriteAll(lines, error);
  if (pending_.size() + lines.size() < buffer_bytes_) {
    pending_.append(lines);
    return true;
  }
  // Enough to write: what is pending, then these lines as they are, without copying them.
  const bool written = (pending_.empty() || WriteAll(pending_, error)) && WriteAll(lines, error);
  pending_.clear();
  return written;
}

bool RunJournal::Flush(std::string* error) {
  std::lock_guard<std::mutex> lock(mutex_);
  if (pending_.empty()) return true;
  const bool written = WriteAll(pending_, error);
  pending_.clear();
  return written;
}

bool RunJournal::WriteAll(std::string_view data, std::string* error) {
  const char* at = data.data();
  size_t left = data.size();
  while (left > 0) {
    ssize_t n = ::write(fd_, at, left);
    if (n < 0) {
      if (errno == EINTR) continue;
      *error = std::string("cannot write the run journal: ") + std::strerror(errno);
      return false;
    }
    at += n;
    left -= static_cast<size_t>(n);
  }
  return true;
}

bool ReadJournal(const std::string& path, JournalContents* contents, std::string* error,
                 bool keep_lines) {
  *contents = JournalContents();
  std::ifstream in(path, std::ios::binary);
  if (!in) return true;  // no journal yet: nothing finished
  std::stringstream buffer;
  buffer << in.rdbuf();
  const std::string data = buffer.str();
  size_t pos = 0;
  int line_number = 0;
  while (pos < data.size()) {
    ++line_number;
    size_t newline = data.find('\n', pos);
    const bool last = newline == std::string::npos || newline + 1 == data.size();
    if (newline == std::string::npos) {
      contents->warnings.push_back(path + ":" + std::to_string(line_number) +
                                   ": the last line is incomplete (the run was cut short while "
                                   "writing it); it is ignored and that case runs again");
      break;
    }
    nlohmann::json record =
        nlohmann::json::parse(data.begin() + static_cast<long>(pos),
                              data.begin() + static_cast<long>(newline), nullptr, false);
    if (record.is_discarded() || !record.is_object()) {
      if (last) {
        contents->warnings.push_back(path + ":" + std::to_string(line_number) +
                                     ": the last line is not valid JSON; it is ignored and that "
                                     "case runs again");
        break;
      }
      *error = path + ":" + std::to_string(line_number) +
               ": the journal is corrupt (a line in the middle is not JSON); start a new run "
               "without --resume, or remove the damaged line";
      return false;
    }
    contents->records.push_back(std::move(record));
    if (keep_lines) contents->lines.push_back(data.substr(pos, newline - pos));
    pos = newline + 1;
    contents->valid_bytes = static_cast<long long>(pos);
  }
  return true;
}

}  // namespace plumb
