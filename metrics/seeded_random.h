#ifndef PLUMB_METRICS_SEEDED_RANDOM_H_
#define PLUMB_METRICS_SEEDED_RANDOM_H_

/// The random stream behind every bootstrap interval (SPEC §6.6, §7). A seed gives the same
/// stream on every platform and compiler, so a run's intervals can be recomputed anywhere and
/// checked against an independent transcription (tests/reference/statistics_reference.py).
///
/// Generator: xoshiro256** 1.0 (Blackman and Vigna, "Scrambled Linear Pseudorandom Number
/// Generators", ACM TOMS 47(4), 2021; reference code xoshiro256starstar.c at prng.di.unimi.it),
/// its 256-bit state filled from the seed by four outputs of SplitMix64 (splitmix64.c, same site),
/// as the authors recommend. Indices in [0, n) come from Lemire's nearly divisionless unbiased
/// method (Lemire, "Fast Random Integer Generation in an Interval", ACM TOMACS 29(1), 2019).
/// std::mt19937 with std::uniform_int_distribution is not used: the distribution's algorithm is
/// implementation-defined, so its stream differs between standard libraries.
///
/// Not thread-safe; copyable (a copy continues the same stream independently). Not for secrets.

#include <cstdint>

namespace plumb::metrics {

class SeededRandom {
 public:
  explicit SeededRandom(uint64_t seed);

  /// The next 64-bit output of xoshiro256**.
  uint64_t Next() {
    const uint64_t result = RotateLeft(state_[1] * 5, 7) * 9;
    const uint64_t t = state_[1] << 17;
    state_[2] ^= state_[0];
    state_[3] ^= state_[1];
    state_[1] ^= state_[2];
    state_[0] ^= state_[3];
    state_[2] ^= t;
    state_[3] = RotateLeft(state_[3], 45);
    return result;
  }

  /// A uniformly distributed integer in [0, n), without modulo bias (n == 0 gives 0).
  /// Consumes one output of Next(), more only on the rare rejection (probability below n / 2^64).
  uint64_t UniformIndex(uint64_t n) {
    uint64_t high;
    uint64_t low = MultiplyFull(Next(), n, &high);
    if (low < n) {
      const uint64_t threshold = (0 - n) % n;  // 2^64 mod n
      while (low < threshold) low = MultiplyFull(Next(), n, &high);
    }
    return high;
  }

 private:
  static uint64_t RotateLeft(uint64_t x, int k) { return (x << k) | (x >> (64 - k)); }

  /// The 128-bit product a * b: returns the low 64 bits, stores the high 64 bits in *high.
  static uint64_t MultiplyFull(uint64_t a, uint64_t b, uint64_t* high) {
#ifdef __SIZEOF_INT128__
    const unsigned __int128 product = static_cast<unsigned __int128>(a) * b;
    *high = static_cast<uint64_t>(product >> 64);
    return static_cast<uint64_t>(product);
#else
    const uint64_t a_lo = a & 0xffffffffu, a_hi = a >> 32;
    const uint64_t b_lo = b & 0xffffffffu, b_hi = b >> 32;
    const uint64_t lo_lo = a_lo * b_lo, hi_lo = a_hi * b_lo;
    const uint64_t lo_hi = a_lo * b_hi, hi_hi = a_hi * b_hi;
    const uint64_t cross = (lo_lo >> 32) + (hi_lo & 0xffffffffu) + lo_hi;
    *high = hi_hi + (hi_lo >> 32) + (cross >> 32);
    return (cross << 32) | (lo_lo & 0xffffffffu);
#endif
  }

  uint64_t state_[4];
};

/// SplitMix64 (Steele, Lea and Flood, OOPSLA 2014; Vigna's splitmix64.c): advances *state and
/// returns the next output. Exposed so the seeding can be checked on its own.
uint64_t SplitMix64Next(uint64_t* state);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_SEEDED_RANDOM_H_
