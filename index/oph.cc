#include "index/oph.h"

#include <xxhash.h>

#include <algorithm>

#include "index/minhash.h"

namespace shingleton {
namespace {

// Scratch states of a bin during densification.
enum : uint8_t { kEmpty = 0, kFilled = 1, kRotated = 2 };

}  // namespace

OnePermutationHasher::OnePermutationHasher(int num_bins, uint64_t seed, int probes)
    : num_bins_(num_bins), probes_(probes), probe_bins_(static_cast<size_t>(num_bins) * probes),
      rotate_left_(num_bins) {
  uint64_t state = seed;
  value_seed_ = SplitMix64(&state);
  // The probe sequences and rotation sides depend on the seed only, so they are
  // drawn once here, in bin order, from the same stream.
  for (int j = 0; j < num_bins; ++j) {
    for (int t = 0; t < probes; ++t) probe_bins_[static_cast<size_t>(j) * probes + t] = Range(SplitMix64(&state));
    rotate_left_[j] = SplitMix64(&state) >> 63;
  }
}

uint32_t OnePermutationHasher::Range(uint64_t h) const {
  return static_cast<uint32_t>(((h >> 32) * static_cast<uint64_t>(num_bins_)) >> 32);
}

size_t OnePermutationHasher::FillBins(const uint64_t* hashes, size_t n, uint32_t* sig,
                                      std::vector<uint8_t>* state) const {
  std::fill(sig, sig + num_bins_, UINT32_MAX);
  state->assign(num_bins_, kEmpty);
  uint8_t* st = state->data();
  for (size_t i = 0; i < n; ++i) {
    const uint64_t y = XXH3_64bits_withSeed(&hashes[i], sizeof hashes[i], value_seed_);
    const uint32_t bin = Range(y);
    sig[bin] = std::min(sig[bin], static_cast<uint32_t>(y));
    st[bin] = kFilled;
  }
  return static_cast<size_t>(std::count(st, st + num_bins_, kFilled));
}

// Pass 1, bins in descending order: probes, else the nearest filled bin to the right
// (every fallback bin takes it; pass 2 replaces it for the left-rotating ones).
void OnePermutationHasher::ProbeOrRotateRight(uint32_t* sig, uint8_t* st) const {
  const uint32_t k = static_cast<uint32_t>(num_bins_);
  uint32_t next = 0;
  while (st[next] != kFilled) ++next;  // cyclic: right of the last bin is the first filled
  for (uint32_t j = k; j-- > 0;) {
    if (st[j] == kFilled) {
      next = j;
      continue;
    }
    const uint32_t* probe = probe_bins_.data() + static_cast<size_t>(j) * probes_;
    int t = 0;
    while (t < probes_ && st[probe[t]] != kFilled) ++t;
    if (t < probes_) {
      sig[j] = sig[probe[t]];
    } else {
      sig[j] = sig[next];
      st[j] = kRotated;
    }
  }
}

// Pass 2, ascending: the left-rotating fallback bins take the nearest filled bin to
// their left (cyclically).
void OnePermutationHasher::RotateLeft(uint32_t* sig, const uint8_t* st) const {
  const uint32_t k = static_cast<uint32_t>(num_bins_);
  uint32_t prev = k - 1;
  while (st[prev] != kFilled) --prev;
  for (uint32_t j = 0; j < k; ++j) {
    const bool take = (st[j] == kRotated) & rotate_left_[j];
    sig[j] = take ? sig[prev] : sig[j];
    prev = st[j] == kFilled ? j : prev;
  }
}

void OnePermutationHasher::Sign(const uint64_t* hashes, size_t n, uint32_t* sig,
                                std::vector<uint8_t>* scratch) const {
  const size_t filled = FillBins(hashes, n, sig, scratch);
  if (filled == 0 || filled == static_cast<size_t>(num_bins_)) return;
  // Only filled bins are read and only empty ones written: no value is borrowed
  // from a borrowed value.
  ProbeOrRotateRight(sig, scratch->data());
  RotateLeft(sig, scratch->data());
}

void OnePermutationHasher::Sign(const uint64_t* hashes, size_t n, uint32_t* sig) const {
  std::vector<uint8_t> scratch;
  Sign(hashes, n, sig, &scratch);
}

}  // namespace shingleton
