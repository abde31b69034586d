#include "runner/base/plain_ascii.h"

#include <cstdint>
#include <cstring>

#if defined(__SSE2__)
#include <emmintrin.h>
#endif

namespace plumb {
namespace {

// Bytes a JSON string can carry as they are: printable ASCII other than '"' and '\'.
bool IsPlainAscii(unsigned char c) { return c >= 0x20 && c < 0x80 && c != '"' && c != '\\'; }

// The high bit of each of the 8 bytes of `word` that is not plain ASCII (below 0x20, at or
// above 0x80, '"' or '\'): the usual SWAR tests (Mycroft's has-zero-byte and has-less-than, as
// in Anderson's "Bit Twiddling Hacks"). A borrow can also mark a byte above a marked one, never
// below, so the lowest mark (in memory order on a little-endian machine) is exact.
uint64_t SpecialBytes8(uint64_t word) {
  constexpr uint64_t kOnes = 0x0101010101010101ull;
  constexpr uint64_t kHigh = 0x8080808080808080ull;
  auto has_zero = [](uint64_t v) { return (v - kOnes) & ~v & kHigh; };
  const uint64_t below_space = (word - kOnes * 0x20) & ~word & kHigh;
  return (word & kHigh) | below_space | has_zero(word ^ (kOnes * '"')) |
         has_zero(word ^ (kOnes * '\\'));
}

#if defined(__SSE2__)
// A bit per byte of the 16 at `p`, set where the byte is not plain: signed, a byte below 0x20
// and one at or above 0x80 (negative) are both less than 0x20; then '"' and '\'.
int SpecialBytes16(const char* p) {
  const __m128i bytes = _mm_loadu_si128(reinterpret_cast<const __m128i*>(p));
  const __m128i special = _mm_or_si128(_mm_cmplt_epi8(bytes, _mm_set1_epi8(0x20)),
                                       _mm_or_si128(_mm_cmpeq_epi8(bytes, _mm_set1_epi8('"')),
                                                    _mm_cmpeq_epi8(bytes, _mm_set1_epi8('\\'))));
  return _mm_movemask_epi8(special);
}
#endif

}  // namespace

#if defined(__SSE2__)
size_t PlainAsciiRun(std::string_view text, size_t from) {
  const char* p = text.data() + from;
  const size_t n = text.size() - from;
  size_t at = 0;
  for (; at + 16 <= n; at += 16) {
    if (const int mask = SpecialBytes16(p + at); mask != 0) return at + __builtin_ctz(mask);
  }
  if (at == n) return n;
  if (n < 16) {
    // Fewer than 16 bytes in all (a short string written out): from 8, two words that may
    // overlap; below that, a byte at a time. Either costs less than a padded copy.
    if (n >= 8) {
      uint64_t first, last;
      std::memcpy(&first, p, 8);
      std::memcpy(&last, p + n - 8, 8);
      if (const uint64_t mask = SpecialBytes8(first); mask != 0) return __builtin_ctzll(mask) / 8;
      const uint64_t mask = SpecialBytes8(last);
      return mask != 0 ? n - 8 + __builtin_ctzll(mask) / 8 : n;
    }
    while (at < n && IsPlainAscii(static_cast<unsigned char>(p[at]))) ++at;
    return at;
  }
  // The last 16 bytes, overlapping those checked: bit k then stands for byte at + k.
  const int mask = SpecialBytes16(p + n - 16) >> (16 - (n - at));
  return mask != 0 ? at + __builtin_ctz(mask) : n;
}
#else
size_t PlainAsciiRun(std::string_view text, size_t from) {
  size_t at = from;
  const size_t n = text.size();
  while (at + 8 <= n) {
    uint64_t word;
    std::memcpy(&word, text.data() + at, sizeof word);
    if (SpecialBytes8(word) != 0) break;
    at += 8;
  }
  while (at < n && IsPlainAscii(static_cast<unsigned char>(text[at]))) ++at;
  return at - from;
}
#endif

}  // namespace plumb
