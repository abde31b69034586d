#ifndef PLUMB_RUNNER_SHA256_H_
#define PLUMB_RUNNER_SHA256_H_

/// SHA-256 (FIPS 180-4) for the content hashes plumb records: suite and per-case gold hashes,
/// corpus fingerprints. Used by the suite loader, the corpus and the run journal; not meant for
/// anything security-sensitive beyond detecting that content changed.

#include <array>
#include <cstdint>
#include <string>
#include <string_view>

namespace plumb {

/// Incremental hashing: Update() any number of times, then HexDigest() once. A Sha256 is a plain
/// value; copies hash independently. Not thread-safe (no shared state, so one per thread).
class Sha256 {
 public:
  Sha256();
  void Update(std::string_view data);
  /// The digest as 64 lowercase hex characters. Finishes the hash: call Update() no more after.
  std::string HexDigest();

 private:
  void Compress(const uint8_t block[64]);

  std::array<uint32_t, 8> state_;
  std::array<uint8_t, 64> buffer_;
  size_t buffered_ = 0;
  uint64_t total_bytes_ = 0;
};

/// SHA-256 of `data` as 64 lowercase hex characters.
std::string Sha256Hex(std::string_view data);

}  // namespace plumb

#endif  // PLUMB_RUNNER_SHA256_H_
