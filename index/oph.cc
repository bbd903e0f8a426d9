#include "index/oph.h"

#include <xxhash.h>

#include <algorithm>

#include "index/minhash.h"

namespace shingleton {
namespace {

bool TestBit(const uint64_t* bits, uint32_t i) { return (bits[i >> 6] >> (i & 63)) & 1; }
void SetBit(uint64_t* bits, uint32_t i) { bits[i >> 6] |= uint64_t{1} << (i & 63); }

}  // namespace

OnePermutationHasher::OnePermutationHasher(int num_bins, uint64_t seed, int probes)
    : num_bins_(num_bins), probes_(probes), words_((num_bins + 63) / 64),
      probe_bins_(static_cast<size_t>(num_bins) * probes), left_mask_(num_bins) {
  uint64_t state = seed;
  value_seed_ = SplitMix64(&state);
  // The probe sequences and rotation sides depend on the seed only: drawn once,
  // in bin order, from the same stream (oph.h).
  for (int j = 0; j < num_bins; ++j) {
    for (int t = 0; t < probes; ++t) {
      probe_bins_[static_cast<size_t>(j) * probes + t] = Range(SplitMix64(&state));
    }
    left_mask_[j] = (SplitMix64(&state) >> 63) ? UINT32_MAX : 0;
  }
}

uint32_t OnePermutationHasher::Range(uint64_t h) const {
  return static_cast<uint32_t>(((h >> 32) * static_cast<uint64_t>(num_bins_)) >> 32);
}

size_t OnePermutationHasher::FillBins(const uint64_t* hashes, size_t n, uint32_t* sig,
                                      uint64_t* filled) const {
  std::fill(sig, sig + num_bins_, UINT32_MAX);
  std::fill(filled, filled + words_, 0);
  for (size_t i = 0; i < n; ++i) {
    const uint64_t y = XXH3_64bits_withSeed(&hashes[i], sizeof hashes[i], value_seed_);
    const uint32_t bin = Range(y);
    sig[bin] = std::min(sig[bin], static_cast<uint32_t>(y));
    SetBit(filled, bin);
  }
  size_t count = 0;
  for (size_t w = 0; w < words_; ++w) count += __builtin_popcountll(filled[w]);
  return count;
}

void OnePermutationHasher::Probe(uint32_t* sig, const uint64_t* filled, uint64_t* probed) const {
  std::fill(probed, probed + words_, 0);
  for (uint32_t j = 0; j < static_cast<uint32_t>(num_bins_); ++j) {
    if (TestBit(filled, j)) continue;
    const uint32_t* probe = probe_bins_.data() + static_cast<size_t>(j) * probes_;
    for (int t = 0; t < probes_; ++t) {
      if (TestBit(filled, probe[t])) {
        sig[j] = sig[probe[t]];
        SetBit(probed, j);
        break;
      }
    }
  }
}

void OnePermutationHasher::RotateGap(uint32_t begin, uint32_t end, uint32_t left, uint32_t right,
                                     uint32_t* sig, const uint64_t* probed) const {
  const uint32_t* mask = left_mask_.data();
  if (probed == nullptr) {  // branch-free, so the compiler vectorises it
    for (uint32_t j = begin; j < end; ++j) sig[j] = (left & mask[j]) | (right & ~mask[j]);
    return;
  }
  for (uint32_t j = begin; j < end; ++j) {
    if (!TestBit(probed, j)) sig[j] = (left & mask[j]) | (right & ~mask[j]);
  }
}

void OnePermutationHasher::Rotate(uint32_t* sig, const uint64_t* filled,
                                  const uint64_t* probed) const {
  // Filled bins in ascending order; each gap between two of them (and the gap that
  // wraps from the last to the first) takes its left or right neighbour.
  uint32_t first = UINT32_MAX, prev = 0;
  for (size_t w = 0; w < words_; ++w) {
    for (uint64_t bits = filled[w]; bits != 0; bits &= bits - 1) {
      const uint32_t f = static_cast<uint32_t>(w * 64 + __builtin_ctzll(bits));
      if (first == UINT32_MAX) {
        first = f;
      } else {
        RotateGap(prev + 1, f, sig[prev], sig[f], sig, probed);
      }
      prev = f;
    }
  }
  const uint32_t left = sig[prev], right = sig[first];
  RotateGap(prev + 1, static_cast<uint32_t>(num_bins_), left, right, sig, probed);
  RotateGap(0, first, left, right, sig, probed);
}

void OnePermutationHasher::Sign(const uint64_t* hashes, size_t n, uint32_t* sig,
                                std::vector<uint64_t>* scratch) const {
  scratch->resize(2 * words_);
  uint64_t* filled = scratch->data();
  uint64_t* probed = filled + words_;
  const size_t count = FillBins(hashes, n, sig, filled);
  if (count == 0 || count == static_cast<size_t>(num_bins_)) return;
  // Only filled bins are read and only empty ones written: no value is borrowed
  // from a borrowed value.
  if (probes_ > 0) Probe(sig, filled, probed);
  Rotate(sig, filled, probes_ > 0 ? probed : nullptr);
}

void OnePermutationHasher::Sign(const uint64_t* hashes, size_t n, uint32_t* sig) const {
  std::vector<uint64_t> scratch;
  Sign(hashes, n, sig, &scratch);
}

}  // namespace shingleton
