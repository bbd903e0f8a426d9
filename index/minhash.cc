#include "index/minhash.h"

#include <algorithm>

namespace shingleton {

uint64_t SplitMix64(uint64_t* state) {
  uint64_t z = (*state += 0x9E3779B97F4A7C15ULL);
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
  return z ^ (z >> 31);
}

MinHasher::MinHasher(int num_hashes, uint64_t seed) : a_(num_hashes), b_(num_hashes) {
  uint64_t state = seed;
  for (int i = 0; i < num_hashes; ++i) {
    a_[i] = SplitMix64(&state) | 1;
    b_[i] = SplitMix64(&state);
  }
}

void MinHasher::Sign(const uint64_t* hashes, size_t n, uint32_t* sig) const {
  const size_t k = a_.size();
  std::fill(sig, sig + k, UINT32_MAX);
  const uint64_t* a = a_.data();
  const uint64_t* b = b_.data();
  for (size_t j = 0; j < n; ++j) {
    const uint64_t x = hashes[j];
    for (size_t i = 0; i < k; ++i) {
      const uint32_t h = static_cast<uint32_t>((a[i] * x + b[i]) >> 32);
      sig[i] = std::min(sig[i], h);
    }
  }
}

double EstimateJaccard(const uint32_t* a, const uint32_t* b, int num_hashes) {
  int equal = 0;
  for (int i = 0; i < num_hashes; ++i) equal += (a[i] == b[i]);
  return static_cast<double>(equal) / num_hashes;
}

}  // namespace shingleton
