#include "runner/sha256.h"

#include <openssl/evp.h>

#include <cstdlib>

namespace plumb {
namespace {

std::string Hex(const unsigned char* digest, unsigned int length) {
  static constexpr char kDigits[] = "0123456789abcdef";
  std::string out(2 * length, '0');
  for (unsigned int i = 0; i < length; ++i) {
    out[2 * i] = kDigits[digest[i] >> 4];
    out[2 * i + 1] = kDigits[digest[i] & 15];
  }
  return out;
}

// libcrypto fails these calls only when it cannot allocate or the digest is unavailable, which
// no caller could act on; a hash that silently came out wrong would be worse than stopping.
void Require(int ok) {
  if (ok != 1) std::abort();
}

// The implementation is looked up once: fetching it afresh for each small hash (what
// EVP_sha256() with EVP_Digest does) costs more than hashing a case's gold. Kept for the life
// of the process.
const EVP_MD* Sha256Method() {
  static EVP_MD* const method = EVP_MD_fetch(nullptr, "SHA256", nullptr);
  if (method == nullptr) std::abort();
  return method;
}

/// An EVP_MD_CTX freed with its owner.
struct OwnedContext {
  EVP_MD_CTX* md = EVP_MD_CTX_new();
  OwnedContext() {
    if (md == nullptr) std::abort();
  }
  ~OwnedContext() { EVP_MD_CTX_free(md); }
  OwnedContext(const OwnedContext&) = delete;
  OwnedContext& operator=(const OwnedContext&) = delete;
};

}  // namespace

struct Sha256::Context : OwnedContext {};

Sha256::Sha256() : context_(std::make_unique<Context>()) {
  Require(EVP_DigestInit_ex(context_->md, Sha256Method(), nullptr));
}

Sha256::~Sha256() = default;
Sha256::Sha256(Sha256&&) noexcept = default;
Sha256& Sha256::operator=(Sha256&&) noexcept = default;

void Sha256::Update(std::string_view data) {
  Require(EVP_DigestUpdate(context_->md, data.data(), data.size()));
}

std::string Sha256::HexDigest() {
  unsigned char digest[EVP_MAX_MD_SIZE];
  unsigned int length = 0;
  Require(EVP_DigestFinal_ex(context_->md, digest, &length));
  return Hex(digest, length);
}

std::string Sha256Hex(std::string_view data) {
  // One context per thread, reset for each hash.
  thread_local OwnedContext context;
  unsigned char digest[EVP_MAX_MD_SIZE];
  unsigned int length = 0;
  Require(EVP_DigestInit_ex(context.md, Sha256Method(), nullptr));
  Require(EVP_DigestUpdate(context.md, data.data(), data.size()));
  Require(EVP_DigestFinal_ex(context.md, digest, &length));
  return Hex(digest, length);
}

}  // namespace plumb
