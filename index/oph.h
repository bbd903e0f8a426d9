// One-permutation hashing with densification: a k-value sketch from one hash per
// shingle, for large k (Li, Owen & Zhang 2012, "One permutation hashing").
//
// Method "oph32-p<T>" (scheme.h; the name is part of the sketch scheme, and changing
// any rule below needs a new name):
//   1. Every shingle hash x is rehashed, y = XXH3-64 of x's 8 bytes (host order,
//      little-endian on every supported machine) under a value seed, the first
//      output of SplitMix64 seeded by the scheme seed. Bin = ((y >> 32) * k) >> 32
//      (Lemire's multiply-shift range reduction); value = low 32 bits of y. A bin
//      keeps the smallest value that falls into it.
//   2. Densification of empty bins: empty bin j copies the value of the first filled
//      bin on a sequence of bins that depends on j and the seed only, never on the
//      document:
//        - up to T probe bins c_0..c_{T-1} (Shrivastava 2017, "Optimal densification
//          for fast and accurate minwise hashing", bounded);
//        - then the nearest filled bin to the right or to the left of j (cyclically),
//          the side fixed per bin (the directed rotation of Shrivastava & Li 2014,
//          "Improved densification of one permutation hashing").
//      The same SplitMix64 stream, after the value seed, gives for j = 0, 1, ...:
//      c_t = range(next) for t < T, then the side = top bit of next (1 = left).
//   Because every bin's sequence is fixed and the first filled bin on it decides its
//   value, two documents agree at a bin with probability J (the first bin on the
//   sequence that is filled in A ∪ B holds the union's minimum of that bin, which is
//   in A ∩ B with probability J): the fraction of equal values estimates Jaccard
//   without bias, as with MinHash (EstimateJaccard).
//
// Why bounded probing: unbounded probing (optimal densification) needs about k/m
// probes per empty bin for a document filling m of k bins, O(k^2/m) per document;
// Mai et al. 2019 ("On densification for minwise hashing") point out this worst
// case for sparse sets. Web pages of a few hundred words with k = 9000 are such
// sets: measured 81 us per 250-shingle document with T = 4 against 9 us with T = 0.
// So jobs use T = 4 up to k = 1024 (documents fill most bins; probing lowers the
// variance of sparse sets: 1.2 vs 1.55 sigma^2 at k = 256, 200 elements, oph_test)
// and T = 0 above (scheme.h, SignatureMethodForSketch).
//
// A document without shingles gets all 0xFFFFFFFF, as with MinHash (minhash.h).
// Accuracy: with no empty bin the variance is below MinHash's J(1-J)/k (Li, Owen &
// Zhang 2012). A document with far fewer shingles than k carries only its
// shingles' information: its densified values repeat, the variance is several times
// J(1-J)/k (5-6x for 200 elements in 2048 bins), and LSH bands over repeated values
// collide more often than s^r — candidates are verified on the full signature.
//
// Cost: one hash per shingle, one pass over the empty bins' probes, one linear pass
// over the gaps between filled bins; the probe sequences (4T bytes per bin) and
// sides are drawn once, at construction.
//
// Thread safety: immutable after construction; Sign's scratch is the caller's.
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

namespace shingleton {

class OnePermutationHasher {
 public:
  // REQUIRES: num_bins >= 1, 0 <= probes <= kMaxOphProbes (scheme.h).
  OnePermutationHasher(int num_bins, uint64_t seed, int probes);

  int num_bins() const { return num_bins_; }
  int probes() const { return probes_; }

  // Writes num_bins() values to sig. `hashes` may contain repeats. `scratch` is a
  // reusable buffer (one per thread).
  void Sign(const uint64_t* hashes, size_t n, uint32_t* sig, std::vector<uint64_t>* scratch) const;
  void Sign(const uint64_t* hashes, size_t n, uint32_t* sig) const;

 private:
  // Step 1: fills sig and the `filled` bitmap; returns the number of filled bins.
  size_t FillBins(const uint64_t* hashes, size_t n, uint32_t* sig, uint64_t* filled) const;
  // Step 2, after the rotation (RotateIntoEmptyBins, minhash_simd.h): empty bins
  // whose probes hit a filled bin take the first such bin's value.
  void Probe(uint32_t* sig, const uint64_t* filled) const;
  uint32_t Range(uint64_t h) const;

  int num_bins_;
  int probes_;
  size_t words_;                      // 64-bit words of a bin bitmap
  uint64_t value_seed_;
  std::vector<uint32_t> probe_bins_;  // probes_ bins per bin j: c_0..c_{probes-1}
  std::vector<uint32_t> left_mask_;   // per bin: all ones if the fallback rotates left; kRotationPadding zeros after
};

}  // namespace shingleton
