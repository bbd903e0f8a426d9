// Chain guard: union-find joins A≈B≈C although A and C are far apart. The checks
// use signatures built so that estimated Jaccard (the fraction of equal MinHash
// positions, by definition) is exact by construction, and a text corpus whose
// word 5-gram Jaccard values are worked out by hand.
#include "index/chain_guard.h"

#include <gtest/gtest.h>

#include <random>

#include "index/clusters.h"
#include "index/doc_table.h"
#include "index/inspect.h"
#include "tests/process_util.h"
#include "tests/test_util.h"

namespace shingleton {
namespace {

using namespace shingleton::testing;

constexpr int kK = 128;

DocumentMeta Meta(const std::string& id, uint64_t bytes) {
  DocumentMeta d;
  d.id = id;
  d.key = DocKey(id);
  d.text_bytes = bytes;
  d.source = "t.jsonl:1";
  return d;
}

Edge EdgeOf(const std::string& x, const std::string& y, float s) {
  Edge e;
  e.a = std::min(DocKey(x), DocKey(y));
  e.b = std::max(DocKey(x), DocKey(y));
  e.similarity = s;
  return e;
}

// sig with positions [from, to) replaced by fresh values: agreement with the
// original is exactly 1 - (to - from) / k.
std::vector<uint32_t> Changed(std::vector<uint32_t> sig, int from, int to,
                              uint32_t salt) {
  for (int i = from; i < to; ++i) sig[i] = 0x80000000u + salt * 1000 + i;
  return sig;
}

struct Chain {
  DocTable table{kK};
  std::vector<Edge> edges;
};

// A (longest, kept) ≈ B ≈ C, and D ≈ C only: est. J(A,B) = 108/128 = 0.84375,
// J(B,C) = 108/128, J(A,C) = 88/128 = 0.6875, J(C,D) = 118/128, J(A,D) = 78/128,
// J(B,D) = 98/128 = 0.765625.
Chain MakeChain() {
  std::mt19937 rng(7);
  std::vector<uint32_t> a(kK);
  for (auto& v : a) v = rng() & 0x7fffffffu;
  const auto b = Changed(a, 0, 20, 1);
  const auto c = Changed(b, 20, 40, 2);
  const auto d = Changed(c, 40, 50, 3);
  Chain ch;
  EXPECT_TRUE(ch.table.Add(Meta("A", 400), a.data()).ok());
  EXPECT_TRUE(ch.table.Add(Meta("B", 300), b.data()).ok());
  EXPECT_TRUE(ch.table.Add(Meta("C", 200), c.data()).ok());
  EXPECT_TRUE(ch.table.Add(Meta("D", 100), d.data()).ok());
  ch.edges = {EdgeOf("A", "B", 0.84375f), EdgeOf("B", "C", 0.84375f),
              EdgeOf("C", "D", 118.0f / 128)};
  return ch;
}

TEST(ChainGuardTest, UnionFindChainsAndTheGuardSplitsByOwnSimilarity) {
  Chain ch = MakeChain();
  KeepPolicy longest;
  std::vector<Decision> d = ResolveClusters(ch.table, ch.edges, longest);
  // Without the guard: one cluster kept by A; C and D are far from A.
  for (const Decision& x : d) EXPECT_EQ(x.kept_key, DocKey("A"));
  EXPECT_DOUBLE_EQ(d[2].similarity, 88.0 / 128);
  EXPECT_DOUBLE_EQ(d[3].similarity, 78.0 / 128);

  ChainGuardResult r = GuardChains(ch.table, longest, 0.8, &d);
  EXPECT_EQ(r.clusters_guarded, 1u);
  EXPECT_EQ(r.members_kept, 1u);   // C: similar to no kept document (B is not kept)
  EXPECT_EQ(r.members_moved, 1u);  // D: now a duplicate of C
  EXPECT_TRUE(d[0].kept());
  EXPECT_EQ(d[1].kept_key, DocKey("A"));
  EXPECT_DOUBLE_EQ(d[1].similarity, 108.0 / 128);
  EXPECT_TRUE(d[2].kept());
  EXPECT_EQ(d[3].kept_key, DocKey("C"));
  EXPECT_DOUBLE_EQ(d[3].similarity, 118.0 / 128);
  EXPECT_EQ(d[0].cluster_size, 2u);
  EXPECT_EQ(d[2].cluster_size, 2u);
  for (const Decision& x : d) {
    if (!x.kept()) {
      EXPECT_GE(x.similarity, 0.8);  // every drop is similar to its own kept document
    }
  }
}

TEST(ChainGuardTest, ClustersWithoutAChainAreUnchanged) {
  Chain ch = MakeChain();
  KeepPolicy longest;
  std::vector<Decision> d = ResolveClusters(ch.table, ch.edges, longest);
  const std::vector<Decision> before = d;
  ChainGuardResult r = GuardChains(ch.table, longest, 0.6, &d);  // spread 0.609 >= 0.6
  EXPECT_EQ(r.clusters_guarded, 0u);
  for (size_t i = 0; i < d.size(); ++i) {
    EXPECT_EQ(d[i].kept_key, before[i].kept_key);
    EXPECT_EQ(d[i].cluster_size, before[i].cluster_size);
  }
}

// Word shingles, k = 5, of three texts cut from one sequence of 500 distinct words
// w0..w499: A = w0..w499 (496 shingles), B = w50..w499 (446), C = w100..w499 (396).
// Exact Jaccard: J(A,B) = 446/496 = 0.899, J(B,C) = 396/446 = 0.888,
// J(A,C) = 396/496 = 0.798. At threshold 0.85 with k = 512 hashes (σ ≈ 0.014)
// A–B and B–C are edges, A–C is not, and A (longest) is kept.
TEST(ChainGuardTest, DedupChainGuardOnAConstructedChain) {
  TempDir dir;
  std::vector<std::string> words;
  for (int i = 0; i < 500; ++i) words.push_back("w" + std::to_string(i * 7919 % 100003));
  auto text = [&](int from) {
    std::string t;
    for (int i = from; i < 500; ++i) t += (t.empty() ? "" : " ") + words[i];
    return t;
  };
  std::string corpus =
      JsonLine("A", text(0)) + JsonLine("B", text(50)) + JsonLine("C", text(100));
  for (int u = 0; u < 5; ++u) {
    std::string t;
    for (int i = 0; i < 200; ++i)
      t += "u" + std::to_string(u) + "x" + std::to_string(i) + " ";
    corpus += JsonLine("U" + std::to_string(u), t);
  }
  WriteFile(dir.File("in.jsonl"), corpus);
  const std::vector<std::string> job = {"dedup",       "--input", dir.File("in.jsonl"),
                                        "--threshold", "0.85",    "--hashes",
                                        "512",         "--quiet", "--out"};
  auto with = [&](std::vector<std::string> args, std::vector<std::string> more) {
    args.insert(args.end(), more.begin(), more.end());
    return args;
  };
  ASSERT_EQ(RunShingleton(with(job, {dir.File("plain")})).exit_code, 0);
  RunResult guarded = RunShingleton(with(job, {dir.File("guarded"), "--chain-guard"}));
  ASSERT_EQ(guarded.exit_code, 0) << guarded.output;

  Manifests plain = ReadManifests(dir.File("plain"));
  EXPECT_EQ(plain.kept_of.at("B"), "A");
  EXPECT_EQ(plain.kept_of.at("C"), "A");  // chained: C is not itself similar to A
  EXPECT_LT(plain.similarity.at("C"), 0.85);
  auto inspector = Inspector::Open(dir.File("plain") + "/index");
  ASSERT_TRUE(inspector.ok());
  ClusterQuery chains;
  chains.chains_only = true;
  auto listed = inspector.value()->Clusters(chains);
  ASSERT_TRUE(listed.ok());
  ASSERT_EQ(listed->size(), 1u);
  EXPECT_EQ((*listed)[0].kept_id, "A");
  EXPECT_EQ((*listed)[0].size, 3u);
  auto why = inspector.value()->Explain("C");
  ASSERT_TRUE(why.ok());
  ASSERT_EQ(why->chain.size(), 2u);  // C -> B -> A
  EXPECT_EQ(why->chain[0].to, "B");

  Manifests fixed = ReadManifests(dir.File("guarded"));
  EXPECT_EQ(fixed.kept_of.at("B"), "A");
  EXPECT_EQ(fixed.kept_of.at("C"), "C");  // similar to no kept document: kept
  for (const auto& [id, s] : fixed.similarity) EXPECT_GE(s, 0.85) << id;
  const std::string summary = ReadFile(dir.File("guarded") + "/summary.json");
  EXPECT_NE(
      summary.find(
          "\"chain_guard\":{\"bound\":0.8500,\"clusters_guarded\":1,\"members_kept\":1"),
      std::string::npos)
      << summary;
}

// Decisions depend on inputs and parameters only: the demo corpus with the chain
// guard, read forwards with 1 thread and backwards with 2, decides the same.
TEST(ChainGuardTest, DeterministicForInputOrderAndThreads) {
  TempDir dir;
  std::vector<std::string> lines;
  {
    std::string all = ReadFile(DemoCorpusPath());
    size_t i = 0;
    while (i < all.size()) {
      size_t j = all.find('\n', i);
      if (j == std::string::npos) j = all.size();
      lines.push_back(all.substr(i, j - i));
      i = j + 1;
    }
  }
  std::string reversed;
  for (auto it = lines.rbegin(); it != lines.rend(); ++it) reversed += *it + "\n";
  WriteFile(dir.File("reversed.jsonl"), reversed);
  ASSERT_EQ(RunShingleton({"dedup", "--input", DemoCorpusPath(), "--out", dir.File("a"),
                           "--chain-guard", "-j", "1", "--quiet"})
                .exit_code,
            0);
  ASSERT_EQ(RunShingleton({"dedup", "--input", dir.File("reversed.jsonl"), "--out",
                           dir.File("b"), "--chain-guard", "-j", "2", "--quiet"})
                .exit_code,
            0);
  const Manifests a = ReadManifests(dir.File("a")), b = ReadManifests(dir.File("b"));
  EXPECT_EQ(a.kept_of, b.kept_of);
  EXPECT_EQ(a.similarity, b.similarity);
  size_t moved = 0;
  const Manifests plain = [&] {
    EXPECT_EQ(RunShingleton({"dedup", "--input", DemoCorpusPath(), "--out", dir.File("p"),
                             "--quiet"})
                  .exit_code,
              0);
    return ReadManifests(dir.File("p"));
  }();
  for (const auto& [id, kept] : a.kept_of) moved += plain.kept_of.at(id) != kept;
  EXPECT_GT(moved, 0u);  // the demo has chained clusters (see inspect_test)
  for (const auto& [id, s] : a.similarity) EXPECT_GE(s, 0.8) << id;
}

}  // namespace
}  // namespace shingleton
