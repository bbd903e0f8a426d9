// FlatMap (the job's key -> document index and content -> first document maps)
// against std::map, the definition of a map: every key inserted once keeps its
// first value, lookups of absent keys find nothing, through many regrowths.
#include "index/flat_map.h"

#include <gtest/gtest.h>

#include <cstdint>
#include <map>
#include <utility>

#include "index/minhash.h"  // SplitMix64

namespace shingleton {
namespace {

TEST(FlatMapTest, HoldsTheFirstValueOfEachKeyAsStdMapDoes) {
  FlatMap<uint64_t, uint32_t, IdentityHash64> map;
  std::map<uint64_t, uint32_t> want;
  uint64_t state = 11;
  for (uint32_t i = 0; i < 100000; ++i) {
    // Hash-like keys, clustered small keys, 0 and the largest value, with repeats.
    const uint64_t key = i % 3 == 0 ? SplitMix64(&state) : i % 3 == 1 ? (i % 5000) << 20 : (i % 2 ? 0 : UINT64_MAX);
    auto [held, inserted] = map.emplace(key, i);
    auto [it, want_inserted] = want.emplace(key, i);
    ASSERT_EQ(inserted, want_inserted) << key;
    ASSERT_EQ(*held, it->second) << key;
  }
  EXPECT_EQ(map.size(), want.size());
  for (const auto& [key, value] : want) {
    const uint32_t* v = map.find(key);
    ASSERT_NE(v, nullptr) << key;
    EXPECT_EQ(*v, value) << key;
  }
  for (int i = 0; i < 20000; ++i) {
    const uint64_t probe = SplitMix64(&state);
    EXPECT_EQ(map.find(probe) != nullptr, want.count(probe) == 1) << probe;
  }
}

// Keys whose hashes collide (the same 64 hashed bits, as two content hashes with
// the same high half would) stay distinct keys.
struct Wide {
  uint64_t hi, lo;
  bool operator==(const Wide& o) const { return hi == o.hi && lo == o.lo; }
  bool operator<(const Wide& o) const { return std::make_pair(hi, lo) < std::make_pair(o.hi, o.lo); }
};
struct WideHash {
  uint64_t operator()(const Wide& w) const { return w.hi; }
};

TEST(FlatMapTest, KeysWithTheSameHashStayDistinct) {
  FlatMap<Wide, uint64_t, WideHash> map;
  std::map<Wide, uint64_t> want;
  for (uint64_t i = 0; i < 3000; ++i) {
    const Wide key{i % 7, i};  // seven hashes for 3000 keys: long probe runs
    map.emplace(key, i * 10);
    want.emplace(key, i * 10);
  }
  map.reserve(10000);  // regrowing keeps every entry
  EXPECT_EQ(map.size(), want.size());
  for (const auto& [key, value] : want) {
    const uint64_t* v = map.find(key);
    ASSERT_NE(v, nullptr);
    EXPECT_EQ(*v, value);
  }
  EXPECT_EQ(map.find(Wide{3, 1}), nullptr);  // hash 3 is held, this key is not
  EXPECT_EQ((FlatMap<Wide, uint64_t, WideHash>().find(Wide{0, 0})), nullptr);
}

}  // namespace
}  // namespace shingleton
