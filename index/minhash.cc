#include "index/minhash.h"

#include <algorithm>

#include "index/minhash_simd.h"

namespace shingleton {

uint64_t SplitMix64(uint64_t* state) {
  uint64_t z = (*state += 0x9E3779B97F4A7C15ULL);
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
  return z ^ (z >> 31);
}

MinHasher::MinHasher(int num_hashes, uint64_t seed)
    : a_(num_hashes), b_(num_hashes), a_lo_(num_hashes), a_hi_(num_hashes), b_lo_(num_hashes),
      b_hi_(num_hashes) {
  uint64_t state = seed;
  for (int i = 0; i < num_hashes; ++i) {
    a_[i] = SplitMix64(&state) | 1;
    b_[i] = SplitMix64(&state);
    a_lo_[i] = static_cast<uint32_t>(a_[i]);
    a_hi_[i] = static_cast<uint32_t>(a_[i] >> 32);
    b_lo_[i] = static_cast<uint32_t>(b_[i]);
    b_hi_[i] = static_cast<uint32_t>(b_[i] >> 32);
  }
}

void MinHasher::MinUpdateScalar(size_t begin, const uint64_t* hashes, size_t n,
                                uint32_t* sig) const {
  const size_t k = a_.size();
  const uint64_t* a = a_.data();
  const uint64_t* b = b_.data();
  for (size_t j = 0; j < n; ++j) {
    const uint64_t x = hashes[j];
    for (size_t i = begin; i < k; ++i) {
      const uint32_t h = static_cast<uint32_t>((a[i] * x + b[i]) >> 32);
      sig[i] = std::min(sig[i], h);
    }
  }
}

void MinHasher::SignScalar(const uint64_t* hashes, size_t n, uint32_t* sig) const {
  std::fill(sig, sig + a_.size(), UINT32_MAX);
  MinUpdateScalar(0, hashes, n, sig);
}

void MinHasher::Sign(const uint64_t* hashes, size_t n, uint32_t* sig) const {
  std::fill(sig, sig + a_.size(), UINT32_MAX);
  const Ms32Params p{a_lo_.data(), a_hi_.data(), b_lo_.data(), b_hi_.data(), a_.size()};
  // Shingle hashes split into halves, a chunk at a time (the kernel broadcasts them).
  constexpr size_t kChunk = 512;
  uint32_t x_lo[kChunk], x_hi[kChunk];
  size_t vector_k = 0;
  for (size_t begin = 0; begin < n; begin += kChunk) {
    const size_t len = std::min(kChunk, n - begin);
    for (size_t j = 0; j < len; ++j) {
      x_lo[j] = static_cast<uint32_t>(hashes[begin + j]);
      x_hi[j] = static_cast<uint32_t>(hashes[begin + j] >> 32);
    }
    vector_k = Ms32MinUpdate(p, x_lo, x_hi, len, sig);
  }
  MinUpdateScalar(vector_k, hashes, n, sig);
}

double EstimateJaccard(const uint32_t* a, const uint32_t* b, int num_hashes) {
  int equal = 0;
  for (int i = 0; i < num_hashes; ++i) equal += (a[i] == b[i]);
  return static_cast<double>(equal) / num_hashes;
}

}  // namespace shingleton
