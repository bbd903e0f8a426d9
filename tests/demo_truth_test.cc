// The demo corpus against its ground truth (demo_data/truth.tsv, written by the
// generator when it planted the families) and against exact Jaccard computed by
// brute force. These are the "done when" goals of the core job.
#include <gtest/gtest.h>

#include <cstdlib>
#include <fstream>
#include <map>
#include <sstream>

#include "index/dedup_job.h"
#include "tests/test_util.h"

namespace shingleton {
namespace {

using namespace shingleton::testing;

const std::string kCorpus = std::string(SHINGLETON_SOURCE_DIR) + "/demo_data/crawl-2026-11.jsonl";
const std::string kTruth = std::string(SHINGLETON_SOURCE_DIR) + "/demo_data/truth.tsv";

using Truth = TruthRow;
std::map<std::string, Truth> ReadTruth() { return ReadDemoTruth(); }

class DemoTruthTest : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    dir_ = new TempDir();
    DedupOptions o;
    o.ingest.inputs = {kCorpus};
    o.out_dir = dir_->File("out");
    auto s = RunDedupJob(o);
    ASSERT_TRUE(s.ok()) << s.status().ToString();
    manifests_ = new Manifests(ReadManifests(o.out_dir));
  }
  static void TearDownTestSuite() {
    delete manifests_;
    delete dir_;
  }
  static TempDir* dir_;
  static Manifests* manifests_;
};
TempDir* DemoTruthTest::dir_ = nullptr;
Manifests* DemoTruthTest::manifests_ = nullptr;

// Recall of pairs with exact Jaccard >= 0.9 at least 0.995; at least 99% of drops
// with exact Jaccard >= 0.7 to their kept document (see real_text_test.cc).
TEST_F(DemoTruthTest, RecallAndPrecisionAgainstExactJaccard) {
  Corpus corpus = ReadJsonlCorpus(kCorpus);
  ASSERT_EQ(corpus.ids.size(), manifests_->kept_of.size());
  Quality q = Evaluate(corpus, *manifests_, 0.9, 0.7);
  std::string examples;
  for (const auto& e : q.examples) examples += "  " + e + "\n";
  std::printf("pairs with J>=0.9: %zu (found %zu), drops %zu (good %zu)\n", q.true_pairs,
              q.found_pairs, q.drops, q.good_drops);
  EXPECT_GT(q.true_pairs, 100u);
  EXPECT_GE(q.recall(), 0.995) << examples;
  EXPECT_GE(q.precision(), 0.99) << examples;
}

// Against the planted families: drops stay inside their family; copies that are
// identical after normalisation always join their base; light edits (1% of words,
// expected word-5-gram Jaccard about (1-5e)/(1+5e) ≈ 0.9) nearly always do; heavy
// edits (>= 10% of words, Jaccard ≈ 0.33 or less) never join directly.
TEST_F(DemoTruthTest, PlantedFamiliesAreRecovered) {
  const auto truth = ReadTruth();
  ASSERT_EQ(truth.size(), manifests_->kept_of.size());
  std::map<std::string, std::string> base_of_family;
  for (const auto& [id, t] : truth) {
    if (t.role == "base") base_of_family[t.family] = id;
  }
  size_t drops = 0, in_family = 0;
  for (const auto& [id, kept] : manifests_->kept_of) {
    if (id == kept) continue;
    ++drops;
    const Truth& a = truth.at(id);
    const Truth& b = truth.at(kept);
    if (a.family != "-" && a.family == b.family) {
      ++in_family;
    } else {
      ADD_FAILURE() << id << " dropped for " << kept << " of another family";
    }
  }
  EXPECT_GT(drops, 300u);
  EXPECT_GE(double(in_family) / drops, 0.99);

  std::map<std::string, std::pair<int, int>> joined;  // class -> (variants, with base)
  for (const auto& [id, t] : truth) {
    if (t.role != "variant") continue;
    std::string cls = t.kind;
    if (t.kind == "edit") cls += t.edit_rate <= 0.01 ? "<=0.01" : t.edit_rate >= 0.1 ? ">=0.1" : "mid";
    auto& c = joined[cls];
    ++c.first;
    const std::string& base = base_of_family.at(t.family);
    if (manifests_->kept_of.at(id) == manifests_->kept_of.at(base)) ++c.second;
  }
  for (const auto& [cls, c] : joined) std::printf("%-14s %4d variants, %4d with base\n", cls.c_str(), c.first, c.second);
  EXPECT_EQ(joined["exact"].second, joined["exact"].first);
  EXPECT_EQ(joined["case-punct"].second, joined["case-punct"].first);
  EXPECT_GE(joined["edit<=0.01"].second, 0.95 * joined["edit<=0.01"].first);
  EXPECT_EQ(joined["edit>=0.1"].second, 0);
  EXPECT_GT(joined["exact"].first, 20);
  EXPECT_GT(joined["edit>=0.1"].first, 20);
}

// The committed corpus is exactly what the generator makes from its documented
// command line (demo_data/README.md), so anyone can regenerate and extend it.
TEST(DemoCorpusTest, GeneratorReproducesTheCommittedCorpus) {
  TempDir dir;
  const std::string cmd = std::string(SHINGLETON_BINARY_DIR) +
                          "/bin/shingleton-demo-gen --docs 2500 --mean-bytes 1400 --out " +
                          dir.File("c.jsonl") + " --truth " + dir.File("t.tsv");
  ASSERT_EQ(std::system(cmd.c_str()), 0) << cmd;
  EXPECT_TRUE(ReadFile(dir.File("c.jsonl")) == ReadFile(kCorpus));
  EXPECT_TRUE(ReadFile(dir.File("t.tsv")) == ReadFile(kTruth));
}

}  // namespace
}  // namespace shingleton
