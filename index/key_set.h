// KeySet: a fixed set of 64-bit keys answering membership in about one cache miss
// (open addressing with linear probing, at most half full), where a binary search of a
// sorted vector costs ~20 dependent loads. Built once, then read by any number of
// threads.
//
// Thread safety: const methods are safe to call concurrently.
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

namespace shingleton {

class KeySet {
 public:
  KeySet() = default;
  // Repeats in `keys` are held once.
  explicit KeySet(const std::vector<uint64_t>& keys) {
    size_t slots = 16;
    while (slots < 2 * keys.size()) slots *= 2;
    slots_.assign(slots, kEmpty);
    shift_ = 64;
    for (size_t s = slots; s > 1; s /= 2) --shift_;
    for (uint64_t key : keys) Insert(key);
  }

  bool contains(uint64_t key) const {
    if (key == kEmpty) return has_empty_key_;
    if (slots_.empty()) return false;
    for (size_t i = Slot(key);; i = (i + 1) & (slots_.size() - 1)) {
      if (slots_[i] == key) return true;
      if (slots_[i] == kEmpty) return false;
    }
  }
  size_t size() const { return size_; }

 private:
  static constexpr uint64_t kEmpty = 0;  // marks a free slot; key 0 is held by has_empty_key_

  // Fibonacci hashing: the top bits of key * 2^64/phi, good for keys of any spread.
  size_t Slot(uint64_t key) const { return static_cast<size_t>((key * 0x9E3779B97F4A7C15ULL) >> shift_); }

  void Insert(uint64_t key) {
    if (key == kEmpty) {
      size_ += !has_empty_key_;
      has_empty_key_ = true;
      return;
    }
    for (size_t i = Slot(key);; i = (i + 1) & (slots_.size() - 1)) {
      if (slots_[i] == key) return;
      if (slots_[i] == kEmpty) {
        slots_[i] = key;
        ++size_;
        return;
      }
    }
  }

  std::vector<uint64_t> slots_;
  int shift_ = 64;
  bool has_empty_key_ = false;
  size_t size_ = 0;
};

}  // namespace shingleton
