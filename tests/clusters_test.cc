// Union-find clusters and keep policies: the partition is the connected
// components of the edge set (by definition), whatever order the edges come in;
// the kept document follows the policy, ties by id; identity collisions are refused.
#include <gtest/gtest.h>

#include <algorithm>
#include <random>

#include "index/clusters.h"
#include "index/doc_table.h"
#include "index/union_find.h"

namespace shingleton {
namespace {

DocumentMeta Meta(const std::string& id, uint64_t ordinal, uint64_t bytes, double rank = NAN) {
  DocumentMeta d;
  d.id = id;
  d.key = DocKey(id);
  d.ordinal = ordinal;
  d.text_bytes = bytes;
  d.rank = rank;
  d.source = "t.jsonl:" + std::to_string(ordinal + 1);
  return d;
}

Edge EdgeOf(const std::string& x, const std::string& y) {
  Edge e;
  e.a = std::min(DocKey(x), DocKey(y));
  e.b = std::max(DocKey(x), DocKey(y));
  e.similarity = 0.9f;
  return e;
}

// Connected components by breadth-first search over an adjacency matrix: the
// textbook definition, independent of union-find.
std::vector<int> ComponentsByBfs(int n, const std::vector<std::pair<int, int>>& edges) {
  std::vector<std::vector<int>> adj(n);
  for (auto [a, b] : edges) {
    adj[a].push_back(b);
    adj[b].push_back(a);
  }
  std::vector<int> comp(n, -1);
  for (int s = 0; s < n; ++s) {
    if (comp[s] >= 0) continue;
    std::vector<int> queue = {s};
    comp[s] = s;
    for (size_t q = 0; q < queue.size(); ++q) {
      for (int v : adj[queue[q]]) {
        if (comp[v] < 0) {
          comp[v] = s;
          queue.push_back(v);
        }
      }
    }
  }
  return comp;
}

TEST(UnionFindTest, MatchesBreadthFirstComponentsForAnyEdgeOrder) {
  std::mt19937 rng(5);
  for (int trial = 0; trial < 50; ++trial) {
    const int n = 200;
    std::vector<std::pair<int, int>> edges;
    for (int e = 0; e < 150; ++e) edges.emplace_back(rng() % n, rng() % n);
    const std::vector<int> expected = ComponentsByBfs(n, edges);
    std::shuffle(edges.begin(), edges.end(), rng);
    UnionFind uf(n);
    for (auto [a, b] : edges) uf.Union(a, b);
    for (int x = 0; x < n; ++x) {
      for (int y = x + 1; y < n; ++y) {
        ASSERT_EQ(uf.Find(x) == uf.Find(y), expected[x] == expected[y]);
      }
    }
  }
}

TEST(ClustersTest, KeepPolicyChoosesAndBreaksTiesById) {
  DocTable table(4);
  const uint32_t s1[4] = {1, 2, 3, 4}, s2[4] = {1, 2, 3, 9};
  ASSERT_TRUE(table.Add(Meta("m", 0, 100, 2.0), s1).ok());
  ASSERT_TRUE(table.Add(Meta("b", 1, 300, 1.0), s2).ok());
  ASSERT_TRUE(table.Add(Meta("a", 2, 300), s1).ok());
  ASSERT_TRUE(table.Add(Meta("solo", 3, 50), s1).ok());
  std::vector<Edge> edges = {EdgeOf("m", "b"), EdgeOf("b", "a")};

  auto longest = ResolveClusters(table, edges, KeepPolicy());
  // b and a both have 300 bytes: the smaller id, "a", is kept.
  EXPECT_EQ(longest[0].kept_key, DocKey("a"));
  EXPECT_EQ(longest[1].kept_key, DocKey("a"));
  EXPECT_TRUE(longest[2].kept());
  EXPECT_EQ(longest[2].cluster_size, 3u);
  EXPECT_TRUE(longest[3].kept());
  EXPECT_EQ(longest[3].cluster_size, 1u);
  // b's signature agrees with a's in 3 of 4 positions.
  EXPECT_FLOAT_EQ(longest[1].similarity, 0.75f);

  auto first = ResolveClusters(table, edges, KeepPolicy::Parse("first").value());
  EXPECT_EQ(first[2].kept_key, DocKey("m"));
  auto field = ResolveClusters(table, edges, KeepPolicy::Parse("field:rank").value());
  EXPECT_EQ(field[2].kept_key, DocKey("m"));  // rank 2 beats 1 and "absent"

  // Edge order does not matter.
  std::reverse(edges.begin(), edges.end());
  auto again = ResolveClusters(table, edges, KeepPolicy());
  for (size_t i = 0; i < table.size(); ++i) EXPECT_EQ(again[i].kept_key, longest[i].kept_key);
}

TEST(DocTableTest, RefusesDuplicateIdsAndKeyCollisions) {
  DocTable table(1);
  const uint32_t sig[1] = {7};
  ASSERT_TRUE(table.Add(Meta("x", 0, 1), sig).ok());
  Status dup = table.Add(Meta("x", 1, 1), sig);
  EXPECT_EQ(dup.code(), Status::Code::kAlreadyExists);
  EXPECT_NE(dup.message().find("duplicate id \"x\" at t.jsonl:2 (first seen at t.jsonl:1)"),
            std::string::npos)
      << dup.message();
  // Two different ids that map to one key (forced here; XXH3-64 collisions are
  // too rare to find) are refused, never merged.
  DocumentMeta clash = Meta("y", 2, 1);
  clash.key = DocKey("x");
  Status col = table.Add(clash, sig);
  EXPECT_EQ(col.code(), Status::Code::kAlreadyExists);
  EXPECT_NE(col.message().find("same 64-bit key"), std::string::npos) << col.message();
  EXPECT_EQ(table.size(), 1u);
}

TEST(KeepPolicyTest, ParsesKnownNamesOnly) {
  EXPECT_EQ(KeepPolicy::Parse("longest").value().Name(), "longest");
  EXPECT_EQ(KeepPolicy::Parse("first").value().Name(), "first");
  EXPECT_EQ(KeepPolicy::Parse("field:crawl_rank").value().field(), "crawl_rank");
  EXPECT_FALSE(KeepPolicy::Parse("field:").ok());
  EXPECT_EQ(KeepPolicy::Parse("newest").value().Name(), "newest");
  EXPECT_EQ(KeepPolicy::Parse("oldest").value().Name(), "oldest");
  EXPECT_FALSE(KeepPolicy::Parse("biggest").ok());
}

}  // namespace
}  // namespace shingleton
