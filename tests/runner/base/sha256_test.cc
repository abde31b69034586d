// SHA-256 against the FIPS 180-2 worked examples and Debian's coreutils sha256sum.

#include "runner/base/sha256.h"

#include <unistd.h>

#include <catch2/catch.hpp>
#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <string>

namespace plumb {
namespace {

// Hashes `data` with /usr/bin/sha256sum (GNU coreutils, Debian 12) via a temporary file.
std::string CoreutilsSha256(const std::string& data) {
  char path[] = "/tmp/plumb-sha256-XXXXXX";
  int fd = mkstemp(path);
  REQUIRE(fd >= 0);
  close(fd);
  {
    std::ofstream out(path, std::ios::binary);
    out << data;
  }
  std::string command = std::string("/usr/bin/sha256sum ") + path;
  FILE* pipe = popen(command.c_str(), "r");
  REQUIRE(pipe != nullptr);
  char digest[65] = {0};
  REQUIRE(std::fread(digest, 1, 64, pipe) == 64);
  pclose(pipe);
  std::remove(path);
  return digest;
}

// FIPS 180-2 (2002), Appendix B: the three SHA-256 examples. Digests from memory, and each is
// checked against sha256sum below as well.
const char kAbcDigest[] = "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad";
const char k448BitMessage[] = "abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq";
const char k448BitDigest[] = "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1";
const char kMillionADigest[] = "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0";

TEST_CASE("FIPS 180-2 B.1: one-block message 'abc'") {
  CHECK(Sha256Hex("abc") == kAbcDigest);
  CHECK(CoreutilsSha256("abc") == kAbcDigest);
}

TEST_CASE("FIPS 180-2 B.2: the 448-bit two-block message") {
  CHECK(std::string(k448BitMessage).size() * 8 == 448);
  CHECK(Sha256Hex(k448BitMessage) == k448BitDigest);
  CHECK(CoreutilsSha256(k448BitMessage) == k448BitDigest);
}

TEST_CASE("FIPS 180-2 B.3: one million 'a'") {
  std::string million(1000000, 'a');
  CHECK(Sha256Hex(million) == kMillionADigest);
  CHECK(CoreutilsSha256(million) == kMillionADigest);

  // The same message fed in uneven pieces, straddling block boundaries.
  Sha256 hash;
  size_t fed = 0;
  for (size_t piece = 1; fed < million.size(); piece = piece * 3 % 1021 + 1) {
    size_t n = std::min(piece, million.size() - fed);
    hash.Update(std::string_view(million).substr(fed, n));
    fed += n;
  }
  CHECK(hash.HexDigest() == kMillionADigest);
}

TEST_CASE("padding edges agree with sha256sum") {
  // 55, 56 and 64 bytes are where the length field stops fitting in the last block
  // (FIPS 180-2 §5.1.1): the cases a padding bug shows up in.
  for (size_t length : {0, 1, 55, 56, 57, 63, 64, 65, 119, 120, 128}) {
    std::string data;
    for (size_t i = 0; i < length; ++i) data += char('a' + i % 26);
    INFO("length " << length);
    CHECK(Sha256Hex(data) == CoreutilsSha256(data));
  }
  std::string binary;
  for (int i = 0; i < 300; ++i) binary += char(i * 7 & 0xff);
  CHECK(Sha256Hex(binary) == CoreutilsSha256(binary));
}

TEST_CASE("a prefix and a text hash as their concatenation, as sha256sum sees it") {
  const std::string text = "{\"answers\":[\"ten minutes\"],\"question\":\"When?\"}";
  for (size_t cut : {size_t{0}, size_t{1}, size_t{14}, text.size()}) {
    INFO("cut " << cut);
    CHECK(Sha256Hex(text.substr(0, cut), text.substr(cut)) == CoreutilsSha256(text));
  }
}

}  // namespace
}  // namespace plumb
