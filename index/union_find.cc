#include "index/union_find.h"

#include <numeric>
#include <utility>

namespace shingleton {

UnionFind::UnionFind(size_t n) : parent_(n), size_(n, 1) {
  std::iota(parent_.begin(), parent_.end(), 0u);
}

size_t UnionFind::Find(size_t x) {
  while (parent_[x] != x) {
    parent_[x] = parent_[parent_[x]];
    x = parent_[x];
  }
  return x;
}

bool UnionFind::Union(size_t x, size_t y) {
  size_t rx = Find(x), ry = Find(y);
  if (rx == ry) return false;
  if (size_[rx] < size_[ry]) std::swap(rx, ry);
  parent_[ry] = static_cast<uint32_t>(rx);
  size_[rx] += size_[ry];
  return true;
}

}  // namespace shingleton
