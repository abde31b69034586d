#ifndef PLUMB_RUNNER_BASE_SHA256_H_
#define PLUMB_RUNNER_BASE_SHA256_H_

/// SHA-256 (FIPS 180-4) for the content hashes plumb records: suite and per-case gold hashes,
/// corpus fingerprints. Used by the suite loader, the corpus and the run journal; not meant for
/// anything security-sensitive beyond detecting that content changed.
///
/// The compression runs in OpenSSL's libcrypto (Debian's libssl3), which picks the CPU's SHA
/// extensions when it has them: hashing a large suite costs a few milliseconds instead of tens.

#include <memory>
#include <string>
#include <string_view>

namespace plumb {

/// Incremental hashing: Update() any number of times, then HexDigest() once. Move-only; not
/// thread-safe (no shared state, so one per thread).
class Sha256 {
 public:
  Sha256();
  ~Sha256();
  Sha256(Sha256&&) noexcept;
  Sha256& operator=(Sha256&&) noexcept;
  Sha256(const Sha256&) = delete;
  Sha256& operator=(const Sha256&) = delete;

  void Update(std::string_view data);
  /// The digest as 64 lowercase hex characters. Finishes the hash: call Update() no more after.
  std::string HexDigest();

 private:
  struct Context;
  std::unique_ptr<Context> context_;
};

/// SHA-256 of `data` as 64 lowercase hex characters.
std::string Sha256Hex(std::string_view data);
/// SHA-256 of `first` followed by `second` (a prefix and a text, without joining them first).
std::string Sha256Hex(std::string_view first, std::string_view second);

}  // namespace plumb

#endif  // PLUMB_RUNNER_BASE_SHA256_H_
