#include "metrics/seeded_random.h"

namespace plumb::metrics {

uint64_t SplitMix64Next(uint64_t* state) {
  uint64_t z = (*state += 0x9e3779b97f4a7c15u);
  z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9u;
  z = (z ^ (z >> 27)) * 0x94d049bb133111ebu;
  return z ^ (z >> 31);
}

SeededRandom::SeededRandom(uint64_t seed) {
  // Four consecutive SplitMix64 outputs are never all zero (its output function is a bijection of
  // the counter), so xoshiro's one forbidden state cannot arise.
  uint64_t splitmix_state = seed;
  for (uint64_t& word : state_) word = SplitMix64Next(&splitmix_state);
}

}  // namespace plumb::metrics
