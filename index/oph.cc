#include "index/oph.h"

// Inlined: one 8-byte hash per shingle is this unit's inner loop (same values as
// the library function).
#define XXH_INLINE_ALL
#include <xxhash.h>

#include <algorithm>

#include "index/minhash.h"
#include "index/minhash_simd.h"

namespace shingleton {
namespace {

bool TestBit(const uint64_t* bits, uint32_t i) { return (bits[i >> 6] >> (i & 63)) & 1; }
void SetBit(uint64_t* bits, uint32_t i) { bits[i >> 6] |= uint64_t{1} << (i & 63); }

}  // namespace

OnePermutationHasher::OnePermutationHasher(int num_bins, uint64_t seed, int probes)
    : num_bins_(num_bins), probes_(probes), words_((num_bins + 63) / 64),
      probe_bins_(static_cast<size_t>(num_bins) * probes), left_mask_(num_bins + kRotationPadding) {
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
  // sig is written on a bin's first value only (every empty bin is written later),
  // which spares a pass over k values for sparse documents.
  std::fill(filled, filled + words_, 0);
  size_t count = 0;
  for (size_t i = 0; i < n; ++i) {
    const uint64_t y = XXH3_64bits_withSeed(&hashes[i], sizeof hashes[i], value_seed_);
    const uint32_t bin = Range(y), v = static_cast<uint32_t>(y);
    if (TestBit(filled, bin)) {
      sig[bin] = std::min(sig[bin], v);
    } else {
      sig[bin] = v;
      SetBit(filled, bin);
      ++count;
    }
  }
  if (count == 0) std::fill(sig, sig + num_bins_, UINT32_MAX);
  return count;
}

void OnePermutationHasher::Probe(uint32_t* sig, const uint64_t* filled) const {
  for (uint32_t j = 0; j < static_cast<uint32_t>(num_bins_); ++j) {
    if (TestBit(filled, j)) continue;
    const uint32_t* probe = probe_bins_.data() + static_cast<size_t>(j) * probes_;
    for (int t = 0; t < probes_; ++t) {
      if (TestBit(filled, probe[t])) {
        sig[j] = sig[probe[t]];
        break;
      }
    }
  }
}

void OnePermutationHasher::Sign(const uint64_t* hashes, size_t n, uint32_t* sig,
                                std::vector<uint64_t>* scratch) const {
  scratch->resize(words_);
  uint64_t* filled = scratch->data();
  const size_t count = FillBins(hashes, n, sig, filled);
  if (count == 0 || count == static_cast<size_t>(num_bins_)) return;
  // Only filled bins are read and only empty ones written, so no value is borrowed
  // from a borrowed value, and the order below gives the definition's result:
  // every empty bin takes its rotation value, then those whose probes hit a
  // filled bin take that instead.
  RotateIntoEmptyBins(filled, left_mask_.data(), num_bins_, sig);
  if (probes_ > 0) Probe(sig, filled);
}

void OnePermutationHasher::Sign(const uint64_t* hashes, size_t n, uint32_t* sig) const {
  std::vector<uint64_t> scratch;
  Sign(hashes, n, sig, &scratch);
}

}  // namespace shingleton
