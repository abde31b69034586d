#include "runner/suite/corpus.h"

#include <dirent.h>
#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <climits>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <utility>
#include <vector>

#include "metrics/quote_locator.h"
#include "runner/base/code_points.h"
#include "runner/base/sha256.h"

namespace plumb {
namespace {

namespace fs = std::filesystem;

std::string RealPath(const std::string& path, int* error_number) {
  char resolved[PATH_MAX];
  if (realpath(path.c_str(), resolved) == nullptr) {
    *error_number = errno;
    return "";
  }
  return resolved;
}

}  // namespace

std::string DocIdProblem(const std::string& id) {
  if (id.empty()) return "is empty";
  if (id.find('\0') != std::string::npos) return "contains a NUL byte";
  if (id[0] == '/') return "is an absolute path";
  if (id.find('\\') != std::string::npos) return "contains a backslash";
  size_t start = 0;
  while (start <= id.size()) {
    size_t slash = id.find('/', start);
    if (slash == std::string::npos) slash = id.size();
    std::string_view part(id.data() + start, slash - start);
    if (part == "..") return "contains a '..' component";
    // "." and empty components would make two spellings of one document, and citations are
    // matched to gold spans by comparing doc ids as strings.
    if (part == "." || part.empty())
      return "is not a normalized path (it has a '.' or empty component)";
    start = slash + 1;
  }
  return "";
}

namespace {

size_t ByteOfCodePoint(const Document& doc, int64_t cp) {
  std::string_view text(doc.text);
  if (cp <= 0) return 0;
  if (int64_t(text.size()) == doc.length_cp) return size_t(std::min<int64_t>(cp, doc.length_cp));
  if (doc.checkpoints.empty()) return ByteOffsetOfCodePoint(text, cp);
  if (cp >= doc.length_cp) return text.size();
  size_t base = doc.checkpoints[size_t(cp / Document::kCheckpointStride)];
  return base + ByteOffsetOfCodePoint(text.substr(base), cp % Document::kCheckpointStride);
}

int64_t CodePointOfByte(const Document& doc, size_t byte) {
  std::string_view text(doc.text);
  if (int64_t(text.size()) == doc.length_cp) return int64_t(byte);
  if (doc.checkpoints.empty()) return CountCodePoints(text.substr(0, byte));
  auto after = std::upper_bound(doc.checkpoints.begin(), doc.checkpoints.end(), byte);
  size_t k = size_t(after - doc.checkpoints.begin()) - 1;
  return int64_t(k) * Document::kCheckpointStride +
         CountCodePoints(text.substr(doc.checkpoints[k], byte - doc.checkpoints[k]));
}

}  // namespace

bool Corpus::Open(const std::string& dir, std::string* error) {
  std::error_code ec;
  if (!fs::is_directory(dir, ec)) {
    *error = "corpus directory '" + dir + "' " +
             (fs::exists(dir, ec) ? "is not a directory" : "does not exist");
    return false;
  }
  int error_number = 0;
  std::string resolved = RealPath(dir, &error_number);
  if (resolved.empty()) {
    *error = "cannot open corpus directory '" + dir + "': " + std::strerror(error_number);
    return false;
  }
  dir_ = dir;
  resolved_dir_ = resolved == "/" ? "" : resolved;
  documents_.clear();
  return true;
}

bool Corpus::AddUpdate(const std::string& docs_dir, const std::vector<std::string>& removed,
                       std::string* error) {
  UpdateLayer layer;
  if (!docs_dir.empty()) {
    layer.docs = std::make_unique<Corpus>();
    if (!layer.docs->Open(docs_dir, error)) return false;
  }
  layer.removed.insert(removed.begin(), removed.end());
  updates_.push_back(std::move(layer));
  return true;
}

bool Corpus::HasOwn(const std::string& doc_id) const {
  if (!DocIdProblem(doc_id).empty()) return false;
  struct stat info;
  return stat((resolved_dir_ + "/" + doc_id).c_str(), &info) == 0 && S_ISREG(info.st_mode);
}

bool Corpus::Has(const std::string& doc_id) {
  for (auto layer = updates_.rbegin(); layer != updates_.rend(); ++layer) {
    if (layer->docs && layer->docs->HasOwn(doc_id)) return true;
    if (layer->removed.count(doc_id)) return false;
  }
  return HasOwn(doc_id);
}

const Document* Corpus::Get(const std::string& doc_id, std::string* error) {
  for (auto layer = updates_.rbegin(); layer != updates_.rend(); ++layer) {
    if (layer->docs && layer->docs->HasOwn(doc_id)) return layer->docs->GetOwn(doc_id, error);
    if (layer->removed.count(doc_id)) {
      *error = "doc '" + doc_id + "' was removed by a corpus update";
      return nullptr;
    }
  }
  return GetOwn(doc_id, error);
}

const Document* Corpus::GetOwn(const std::string& doc_id, std::string* error) {
  std::string problem = DocIdProblem(doc_id);
  if (!problem.empty()) {
    *error = "doc '" + doc_id + "' " + problem +
             "; docs must be relative paths inside the corpus dir, with '/' separators";
    return nullptr;
  }
  std::lock_guard<std::mutex> lock(mutex_);
  auto cached = documents_.find(doc_id);
  if (cached != documents_.end()) return cached->second.get();

  std::string path = resolved_dir_ + "/" + doc_id;
  int error_number = 0;
  std::string resolved = RealPath(path, &error_number);
  if (resolved.empty()) {
    *error = error_number == ENOENT || error_number == ENOTDIR
                 ? "no document '" + doc_id + "' in corpus '" + dir_ + "'"
                 : "cannot open doc '" + doc_id + "': " + std::strerror(error_number);
    return nullptr;
  }
  if (resolved.compare(0, resolved_dir_.size() + 1, resolved_dir_ + "/") != 0) {
    *error = "doc '" + doc_id + "' resolves to '" + resolved +
             "', outside the corpus dir; docs must be relative paths inside the corpus dir";
    return nullptr;
  }
  struct stat info;
  if (stat(resolved.c_str(), &info) != 0 || !S_ISREG(info.st_mode)) {
    *error = "doc '" + doc_id + "' is not a regular file";
    return nullptr;
  }
  if (info.st_size > kMaxDocumentBytes) {
    *error = "doc '" + doc_id + "' is " + std::to_string(info.st_size) + " bytes; the limit is " +
             std::to_string(kMaxDocumentBytes) + " bytes (64 MiB)";
    return nullptr;
  }
  // Non-blocking, and at most one byte past the size stat gave: a file that looks regular but
  // blocks (/proc/kmsg) or grows is refused instead of hanging the command.
  const int fd = open(resolved.c_str(), O_RDONLY | O_NONBLOCK | O_NOCTTY | O_CLOEXEC);
  std::string text(static_cast<size_t>(info.st_size) + 1, '\0');
  size_t got = 0;
  bool read_ok = fd >= 0;
  int read_errno = fd >= 0 ? 0 : errno;
  while (read_ok && got < text.size()) {
    const ssize_t n = read(fd, text.data() + got, text.size() - got);
    if (n == 0) break;
    if (n < 0 && errno == EINTR) continue;
    if (n < 0) {
      read_ok = false;
      read_errno = errno;
    }
    if (n > 0) got += static_cast<size_t>(n);
  }
  if (fd >= 0) close(fd);
  if (!read_ok || got != static_cast<size_t>(info.st_size)) {
    *error = "cannot read doc '" + doc_id + "'" +
             (read_ok ? " (it changed while being read, or is not an ordinary file)"
                      : std::string(": ") + std::strerror(read_errno));
    return nullptr;
  }
  text.resize(got);
  size_t bad_offset = 0;
  if (!IsValidUtf8(text, &bad_offset)) {
    *error = "doc '" + doc_id + "' is not valid UTF-8: ill-formed byte sequence at byte offset " +
             std::to_string(bad_offset);
    return nullptr;
  }
  auto doc = std::make_unique<Document>();
  doc->id = doc_id;
  doc->length_cp = CountCodePoints(text);
  doc->sha256 = Sha256Hex(text);
  if (int64_t(text.size()) != doc->length_cp) {
    int64_t cp = 0;
    for (size_t i = 0; i < text.size(); ++i) {
      if ((static_cast<unsigned char>(text[i]) & 0xC0) == 0x80) continue;
      if (cp % Document::kCheckpointStride == 0) doc->checkpoints.push_back(i);
      ++cp;
    }
  }
  doc->text = std::move(text);
  const Document* out = doc.get();
  documents_.emplace(doc_id, std::move(doc));
  return out;
}

namespace {

/// The sorted, bounded walk behind Corpus::Fingerprint.
class FingerprintWalk {
 public:
  FingerprintWalk(const FingerprintLimits& limits, FingerprintSkips* skips)
      : limits_(limits), skips_(*skips) {}

  /// Walks `dir` (whose id prefix is `prefix`, "" at the root) and its subdirectories.
  void Walk(const std::string& dir, const std::string& prefix) {
    DIR* handle = opendir(dir.c_str());
    if (handle == nullptr) return;
    std::vector<std::string> names;
    while (const dirent* entry = readdir(handle)) {
      const std::string name = entry->d_name;
      if (name == "." || name == "..") continue;
      names.push_back(name);
    }
    closedir(handle);
    std::sort(names.begin(), names.end());
    for (const std::string& name : names) {
      if (!skips_.stopped.empty()) return;
      if (++visited_ > limits_.max_entries) {
        skips_.stopped =
            "stopped after " + std::to_string(limits_.max_entries) + " directory entries";
        return;
      }
      const std::string path = dir == "/" ? "/" + name : dir + "/" + name;
      const std::string id = prefix.empty() ? name : prefix + "/" + name;
      struct stat info;
      if (lstat(path.c_str(), &info) != 0) continue;
      if (S_ISDIR(info.st_mode)) {
        if (info.st_dev != device_) {
          skips_.other_file_systems.push_back(path);
          continue;
        }
        Walk(path, id);
      } else if (S_ISREG(info.st_mode)) {
        Hash(path, id, info);
      } else {
        ++skips_.not_regular;
      }
    }
  }

  void Start(const std::string& root) {
    struct stat info;
    if (stat(root.c_str(), &info) != 0) return;
    device_ = info.st_dev;
    Walk(root, "");
  }

  std::vector<std::pair<std::string, std::string>> entries;  // (id, sha256 or "unreadable")

 private:
  void Hash(const std::string& path, const std::string& id, const struct stat& listed) {
    if (bytes_ + listed.st_size > limits_.max_bytes) {
      skips_.stopped =
          "stopped at " + id + ", past " + std::to_string(limits_.max_bytes) + " bytes read";
      return;
    }
    // Non-blocking and checked again once open: a file that looks regular but blocks on read
    // (/proc/kmsg) or was swapped for a FIFO between lstat and open is unreadable, not a hang.
    const int fd = open(path.c_str(), O_RDONLY | O_NOFOLLOW | O_NONBLOCK | O_NOCTTY | O_CLOEXEC);
    struct stat opened;
    if (fd < 0 || fstat(fd, &opened) != 0 || !S_ISREG(opened.st_mode)) {
      if (fd >= 0) close(fd);
      entries.emplace_back(id, "unreadable");
      return;
    }
    Sha256 hash;
    char buffer[1 << 16];
    bool ok = true;
    int64_t read_bytes = 0;
    while (true) {
      const ssize_t n = read(fd, buffer, sizeof buffer);
      if (n == 0) break;
      if (n < 0) {
        if (errno == EINTR) continue;
        ok = false;
        break;
      }
      read_bytes += n;
      // A file that grows while it is read (a log) is cut at the budget, not read forever.
      if (bytes_ + read_bytes > limits_.max_bytes) {
        ok = false;
        break;
      }
      hash.Update(std::string_view(buffer, static_cast<size_t>(n)));
    }
    close(fd);
    bytes_ += read_bytes;
    entries.emplace_back(id, ok ? hash.HexDigest() : "unreadable");
  }

  const FingerprintLimits& limits_;
  FingerprintSkips& skips_;
  dev_t device_ = 0;
  int64_t visited_ = 0;
  int64_t bytes_ = 0;
};

}  // namespace

std::string FingerprintSkips::Describe(const std::string& corpus_dir) const {
  std::vector<std::string> parts;
  if (not_regular > 0) {
    parts.push_back(std::to_string(not_regular) + " entr" + (not_regular == 1 ? "y" : "ies") +
                    " that " + (not_regular == 1 ? "is" : "are") +
                    " not a regular file or directory (symlinks, devices, FIFOs, sockets)");
  }
  if (!other_file_systems.empty()) {
    std::string dirs;
    for (size_t i = 0; i < other_file_systems.size() && i < 5; ++i) {
      dirs += (i == 0 ? "" : ", ") + other_file_systems[i];
    }
    if (other_file_systems.size() > 5) {
      dirs += " and " + std::to_string(other_file_systems.size() - 5) + " more";
    }
    parts.push_back(std::to_string(other_file_systems.size()) + " director" +
                    (other_file_systems.size() == 1 ? "y" : "ies") + " on other file systems (" +
                    dirs + ")");
  }
  if (parts.empty() && stopped.empty()) return "";
  std::string text = "the fingerprint of corpus '" + corpus_dir + "' ";
  if (!parts.empty()) {
    text += "skipped " + parts[0] + (parts.size() > 1 ? " and " + parts[1] : "");
  }
  if (!stopped.empty()) {
    text += std::string(parts.empty() ? "" : ", and ") + stopped +
            "; it covers the files read before. Point 'corpus' at the documents' own "
            "directory";
  }
  return text;
}

std::string Corpus::Fingerprint(const FingerprintLimits& limits, FingerprintSkips* skips) const {
  FingerprintSkips ignored;
  FingerprintWalk walk(limits, skips != nullptr ? skips : &ignored);
  walk.Start(resolved_dir_.empty() ? "/" : resolved_dir_);
  std::vector<std::pair<std::string, std::string>>& entries = walk.entries;
  std::sort(entries.begin(), entries.end());
  Sha256 fingerprint;
  for (const auto& [id, digest] : entries) {
    // NUL cannot occur in a file name, so the fields cannot run into each other.
    fingerprint.Update(id);
    fingerprint.Update(std::string_view("\0", 1));
    fingerprint.Update(digest);
    fingerprint.Update("\n");
  }
  return fingerprint.HexDigest();
}

bool FindQuote(const Document& doc, std::string_view quote, int64_t* start_cp, int64_t* end_cp,
               int* occurrences) {
  *occurrences = 0;
  if (quote.empty()) return false;
  size_t first = doc.text.find(quote);
  if (first != std::string::npos) {
    for (size_t at = first; at != std::string::npos; at = doc.text.find(quote, at + 1)) {
      ++*occurrences;
    }
    *start_cp = CodePointOfByte(doc, first);
    *end_cp = *start_cp + CountCodePoints(quote);
    return true;
  }

  // The whitespace-collapsed rule is the one quote citations are scored with
  // (metrics::LocateQuote), so gold quotes and cited quotes are located alike.
  if (!metrics::LocateQuote(doc.text, quote, start_cp, end_cp)) return false;
  *occurrences = 1;
  return true;
}

std::string_view CodePointSlice(const Document& doc, int64_t start_cp, int64_t end_cp) {
  size_t begin = ByteOfCodePoint(doc, start_cp);
  size_t end = std::max(begin, ByteOfCodePoint(doc, end_cp));
  return std::string_view(doc.text).substr(begin, end - begin);
}

}  // namespace plumb
