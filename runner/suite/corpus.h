#ifndef PLUMB_RUNNER_SUITE_CORPUS_H_
#define PLUMB_RUNNER_SUITE_CORPUS_H_

/// The document collection a suite's gold spans point into (SPEC §4 `corpus`). The suite loader
/// opens it to locate quotes and check offsets; scoring opens it to locate quote citations; the
/// run records its Fingerprint() so drift can tell that the corpus changed.

#include <cstdint>
#include <map>
#include <memory>
#include <mutex>
#include <set>
#include <string>
#include <string_view>
#include <vector>

namespace plumb {

/// One corpus document, read whole. `text` is valid UTF-8 (Get refuses other files).
struct Document {
  std::string id;    // path relative to the corpus dir, "/" separators
  std::string text;  // the file's bytes, unchanged
  int64_t length_cp = 0;
  std::string sha256;  // of `text`
  /// Byte offset of every kCheckpointStride-th code point, so code-point/byte conversions cost
  /// O(stride) instead of a walk from the start. Filled by Corpus::Get for non-ASCII text;
  /// empty means "walk" (ASCII text, or a Document built by hand).
  std::vector<size_t> checkpoints;
  static constexpr int64_t kCheckpointStride = 64;
};

/// Documents larger than this are refused, like suite files (runner/suite/suite_loader.h).
constexpr int64_t kMaxDocumentBytes = int64_t{64} << 20;

/// Bounds on what Corpus::Fingerprint reads, so a corpus of `/` or a huge tree cannot make a
/// command hang or read for hours: directory entries visited (files, directories and anything
/// else) and bytes hashed. Beyond either, the fingerprint covers what was read before.
struct FingerprintLimits {
  int64_t max_entries = 100000;
  int64_t max_bytes = int64_t{1} << 30;  // 1 GiB
};

/// What Corpus::Fingerprint left out of the fingerprint, for the warning a command prints.
struct FingerprintSkips {
  int64_t not_regular = 0;                      // sockets, FIFOs, devices, symlinks
  std::vector<std::string> other_file_systems;  // directories on another mount (/proc, /sys)
  std::string stopped;  // why the walk stopped early ("" when it covered everything)
  /// One sentence for the user, or "" when nothing was skipped.
  std::string Describe(const std::string& corpus_dir) const;
};

class Corpus {
 public:
  Corpus() = default;
  Corpus(const Corpus&) = delete;
  Corpus& operator=(const Corpus&) = delete;

  /// Opens the corpus rooted at `dir`. False with a sentence in *error when `dir` is not a
  /// readable directory. Reads no document yet.
  bool Open(const std::string& dir, std::string* error);

  /// The document `doc_id`, read on first use and cached. A doc id must be a relative path with
  /// "/" separators and no ".", ".." or empty components, no backslash, and must resolve (after
  /// following symlinks) to a regular file inside the corpus dir; anything else, an unreadable
  /// file, a file over kMaxDocumentBytes or one that is not valid UTF-8 gives nullptr and a
  /// sentence naming the id in *error. Thread-safe (the cache is locked); the returned Document
  /// lives as long as the Corpus and is never modified.
  const Document* Get(const std::string& doc_id, std::string* error);

  /// SHA-256 over the sorted (id, SHA-256 of bytes) of every regular file under the corpus dir,
  /// recursively, not following symlinks and not leaving the corpus dir's file system; a file
  /// that cannot be read, or would block (opened non-blocking), contributes its id and the
  /// word "unreadable". Directories are walked in byte order of their names, so when `limits`
  /// stop the walk the files covered are the same from run to run. What was left out goes to
  /// *skips (may be null). Reads every file on each call: compute it once per run.
  std::string Fingerprint(const FingerprintLimits& limits = {},
                          FingerprintSkips* skips = nullptr) const;

  const std::string& dir() const { return dir_; }

  /// Lays a corpus update (issue 23) over the corpus as it stands: Get then takes a doc id from
  /// the newest update whose `docs_dir` holds it, refuses one the newest update to mention it
  /// removed, and otherwise falls back to what was there before. `docs_dir` may be empty (the
  /// update only removes). False with a sentence in *error when `docs_dir` cannot be opened.
  /// Not thread-safe against Get: lay every update before the first Get.
  bool AddUpdate(const std::string& docs_dir, const std::vector<std::string>& removed,
                 std::string* error);

  /// Whether `doc_id` is well-formed and names an existing file under this corpus, updates
  /// included (the file is not read).
  bool Has(const std::string& doc_id);

 private:
  /// Whether `doc_id` exists under this corpus's own directory, ignoring updates.
  bool HasOwn(const std::string& doc_id) const;
  const Document* GetOwn(const std::string& doc_id, std::string* error);

  struct UpdateLayer {
    std::unique_ptr<Corpus> docs;  // null when the update only removes
    std::set<std::string> removed;
  };
  std::vector<UpdateLayer> updates_;

  std::string dir_;           // as given to Open
  std::string resolved_dir_;  // realpath of dir_, no trailing '/'
  std::mutex mutex_;
  std::map<std::string, std::unique_ptr<Document>> documents_;
};

/// Why `doc_id` is not a well-formed doc id (a relative path with "/" separators and no ".",
/// ".." or empty components, no backslash), or "" when it is.
std::string DocIdProblem(const std::string& doc_id);

/// Locates `quote` in `doc`: the first exact occurrence, or failing that the first occurrence
/// when runs of Unicode whitespace (White_Space) in both the document and the quote count as a
/// single space and the quote's leading and trailing whitespace is ignored. On success sets the
/// code-point span [*start_cp, *end_cp) in the original text and *occurrences: how often the
/// quote occurs verbatim (overlapping occurrences included), or 1 for a whitespace-collapsed
/// match, which is metrics::LocateQuote's rule and is not counted further. Returns false, with
/// *occurrences = 0, when the quote is not found or is empty or all whitespace.
bool FindQuote(const Document& doc, std::string_view quote, int64_t* start_cp, int64_t* end_cp,
               int* occurrences);

/// The text of code points [start_cp, end_cp) of `doc`; clamped to the document.
std::string_view CodePointSlice(const Document& doc, int64_t start_cp, int64_t end_cp);

}  // namespace plumb

#endif  // PLUMB_RUNNER_SUITE_CORPUS_H_
