// KeySet: a fixed set of 64-bit keys that are uniform hashes (document keys),
// answering membership in about one cache miss, where a binary search of a sorted
// vector costs ~20 dependent loads. Built once, then read by any number of threads.
//
// Thread safety: const methods are safe to call concurrently.
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

#include "index/flat_map.h"

namespace shingleton {

class KeySet {
 public:
  KeySet() = default;
  // Repeats in `keys` are held once.
  explicit KeySet(const std::vector<uint64_t>& keys) {
    map_.reserve(keys.size());
    for (uint64_t key : keys) map_.emplace(key, true);
  }

  bool contains(uint64_t key) const { return map_.find(key) != nullptr; }
  size_t size() const { return map_.size(); }

 private:
  FlatMap<uint64_t, bool, IdentityHash64> map_;
};

}  // namespace shingleton
