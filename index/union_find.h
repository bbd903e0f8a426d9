// UnionFind (disjoint sets) over dense indices 0..n-1, with path halving and
// union by size. The resulting partition depends only on the set of unions made,
// not on their order.
//
// Thread safety: not thread-safe; one owner.
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

namespace shingleton {

class UnionFind {
 public:
  explicit UnionFind(size_t n);
  size_t Find(size_t x);
  // Returns true if x and y were in different sets.
  bool Union(size_t x, size_t y);
  size_t SetSize(size_t x) { return size_[Find(x)]; }
  size_t size() const { return parent_.size(); }

 private:
  std::vector<uint32_t> parent_;
  std::vector<uint32_t> size_;
};

}  // namespace shingleton
