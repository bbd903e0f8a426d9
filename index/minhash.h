// MinHash signatures (Broder 1997, "On the resemblance and containment of documents").
//
// Method "minhash-ms32": k hash functions h_i(x) = high 32 bits of (a_i * x + b_i)
// mod 2^64 (multiply-add-shift, Dietzfelbinger 1996), applied to the XXH3-64 hash x
// of each shingle. The parameters are drawn from one SplitMix64 stream seeded by the
// scheme seed in the order a_0, b_0, a_1, b_1, ... with a_i = next | 1 (odd), so
// signatures are reproducible everywhere; this order is part of the method. Signature value i is the minimum of
// h_i over the document's shingles. Pr[sig_A[i] == sig_B[i]] ≈ J(A, B).
//
// A document without shingles gets the all-0xFFFFFFFF signature (the minimum of an
// empty set is "infinity"): all empty documents agree with each other everywhere
// and therefore cluster together, with estimated similarity 1.
//
// Speed: Sign() runs the Highway kernel of minhash_simd.h (8 functions per AVX2
// instruction, chosen at run time); SignScalar() is the plain definition, kept as
// the reference the kernel is tested against bit for bit. This family already suits
// 32-bit lanes (two widening and two low 32-bit multiplies per 8 values), so it was
// kept rather than replaced: existing signatures and indexes stay valid.
//
// Thread safety: a MinHasher is immutable after construction; share it freely.
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

namespace shingleton {

class MinHasher {
 public:
  MinHasher(int num_hashes, uint64_t seed);

  int num_hashes() const { return static_cast<int>(a_.size()); }

  // Writes num_hashes() values to sig. `hashes` may contain repeats.
  void Sign(const uint64_t* hashes, size_t n, uint32_t* sig) const;
  // The same values by the scalar definition (the reference; slower).
  void SignScalar(const uint64_t* hashes, size_t n, uint32_t* sig) const;

 private:
  // Updates functions [begin, num_hashes()) with the scalar definition.
  void MinUpdateScalar(size_t begin, const uint64_t* hashes, size_t n, uint32_t* sig) const;

  std::vector<uint64_t> a_;
  std::vector<uint64_t> b_;
  // a_ and b_ split into 32-bit halves, for the vector kernel.
  std::vector<uint32_t> a_lo_, a_hi_, b_lo_, b_hi_;
};

// Fraction of equal positions: the MinHash estimate of Jaccard similarity.
double EstimateJaccard(const uint32_t* a, const uint32_t* b, int num_hashes);

// SplitMix64 step (Steele, Lea, Flood 2014): the project's one seeded generator
// for hash parameters.
uint64_t SplitMix64(uint64_t* state);

}  // namespace shingleton
