// One-permutation hashing with densification: a k-value sketch from one hash per
// shingle, for large k (Li, Owen & Zhang 2012, "One permutation hashing").
//
// Method "oph32-p4" (the name is part of the sketch scheme; changing any rule below
// needs a new name):
//   1. Every shingle hash x is rehashed, y = XXH3-64 of x's 8 little-endian bytes
//      under a seed drawn from SplitMix64(scheme seed). Bin = (high 32 bits of y * k)
//      >> 32 (Lemire's multiply-shift range reduction); value = low 32 bits of y.
//      Bin i keeps the smallest value that falls into it.
//   2. Densification of empty bins (Shrivastava 2017, "Optimal densification for fast
//      and accurate minwise hashing"): empty bin j copies the value of the first
//      non-empty bin on a sequence of bins that depends on j and the seed only,
//      never on the document:
//        - up to kProbes = 4 probe bins c_0..c_3, each range(SplitMix64 output);
//        - then, if all four were empty, the nearest non-empty bin to the right or to
//          the left of j (cyclically), the side chosen by the top bit of one more
//          SplitMix64 output (the directed rotation of Shrivastava & Li 2014,
//          "Improved densification of one permutation hashing").
//      The stream is SplitMix64 seeded by the scheme seed: first the value seed,
//      then for j = 0, 1, ...: c_0..c_3 of bin j, then its side.
//      Unbounded probing (optimal densification) needs about k/m probes per empty
//      bin for a document filling m of k bins, O(k^2/m) per document; Mai et al.
//      2019 ("On densification for minwise hashing") point out this worst case for
//      sparse sets. Web pages of a few hundred words with k = 9000 are such sets,
//      so probing is bounded and the O(k) rotation is the fallback.
//   Because every bin's sequence is fixed and the first non-empty bin on it decides
//   its value, two documents agree at a bin with probability J (the first bin on the
//   sequence that is non-empty in A ∪ B holds the union's minimum of that bin, which
//   is in A ∩ B with probability J): the fraction of equal values estimates Jaccard
//   without bias, like MinHash (EstimateJaccard).
//
// A document without shingles gets all 0xFFFFFFFF, as with MinHash (minhash.h).
// Accuracy: with m ≥ k filled bins the variance is at most MinHash's J(1-J)/k
// (Li, Owen & Zhang 2012); a document with far fewer shingles than k carries only
// its shingles' information, and densified values repeat across bins.
//
// Cost: one hash per shingle plus two linear passes over the bins; the probe
// sequences (4 bins of 4 bytes per bin) are drawn once, at construction.
//
// Thread safety: immutable after construction; Sign's scratch is the caller's.
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

namespace shingleton {

class OnePermutationHasher {
 public:
  // The method's probe bound (kOphMethod); other values only for measurements.
  static constexpr int kProbes = 4;

  OnePermutationHasher(int num_bins, uint64_t seed, int probes = kProbes);

  int num_bins() const { return num_bins_; }

  // Writes num_bins() values to sig. `hashes` may contain repeats. `scratch` is a
  // reusable buffer (one per thread).
  void Sign(const uint64_t* hashes, size_t n, uint32_t* sig, std::vector<uint8_t>* scratch) const;
  void Sign(const uint64_t* hashes, size_t n, uint32_t* sig) const;

 private:
  // Step 1: fills sig and the bin states; returns the number of filled bins.
  size_t FillBins(const uint64_t* hashes, size_t n, uint32_t* sig, std::vector<uint8_t>* state) const;
  // Step 2 in two linear passes. REQUIRES: at least one bin filled.
  void ProbeOrRotateRight(uint32_t* sig, uint8_t* state) const;
  void RotateLeft(uint32_t* sig, const uint8_t* state) const;
  uint32_t Range(uint64_t h) const;

  int num_bins_;
  int probes_;
  uint64_t value_seed_;
  std::vector<uint32_t> probe_bins_;  // probes_ bins per bin j, c_0..c_{probes-1}
  std::vector<uint8_t> rotate_left_;  // per bin: rotation side of the fallback
};

}  // namespace shingleton
