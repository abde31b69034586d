#include "runner/suite/corpus.h"

#include <sys/stat.h>

#include <algorithm>
#include <cerrno>
#include <climits>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <utility>
#include <vector>

#include "metrics/quote_locator.h"
#include "runner/base/code_points.h"
#include "runner/base/sha256.h"

namespace plumb {
namespace {

namespace fs = std::filesystem;

// The reason a doc id is refused before touching the file system, or "" when it is well-formed.
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

std::string RealPath(const std::string& path, int* error_number) {
  char resolved[PATH_MAX];
  if (realpath(path.c_str(), resolved) == nullptr) {
    *error_number = errno;
    return "";
  }
  return resolved;
}

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

const Document* Corpus::Get(const std::string& doc_id, std::string* error) {
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
  std::ifstream in(resolved, std::ios::binary);
  std::string text(static_cast<size_t>(info.st_size), '\0');
  if (!in.read(text.data(), info.st_size) || in.peek() != std::char_traits<char>::eof()) {
    *error = "cannot read doc '" + doc_id + "' (it changed while being read?)";
    return nullptr;
  }
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

std::string Corpus::Fingerprint() const {
  std::vector<std::pair<std::string, std::string>> entries;  // (id, sha256 or "unreadable")
  std::error_code ec;
  fs::path root(resolved_dir_.empty() ? "/" : resolved_dir_);
  for (fs::recursive_directory_iterator it(root, ec), end; !ec && it != end; it.increment(ec)) {
    std::error_code status_ec;
    if (it->symlink_status(status_ec).type() != fs::file_type::regular) continue;
    std::string id = it->path().lexically_relative(root).generic_string();
    std::ifstream in(it->path(), std::ios::binary);
    Sha256 hash;
    char buffer[1 << 16];
    while (in.read(buffer, sizeof buffer) || in.gcount() > 0) {
      hash.Update(std::string_view(buffer, static_cast<size_t>(in.gcount())));
    }
    entries.emplace_back(id, in.bad() || !in.eof() ? "unreadable" : hash.HexDigest());
  }
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
