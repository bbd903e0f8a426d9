// One-permutation hashing with densification (index/oph.h) against exact Jaccard
// similarity computed by brute force, with the statistical checks of minhash_test:
// unbiased, and every estimate within 4 sigma, sigma = sqrt(J(1-J)/k) (Broder 1997).
// Sources: Li, Owen & Zhang 2012, "One permutation hashing" (NIPS): without empty
// bins the estimator is unbiased with variance below MinHash's; Shrivastava 2017,
// "Optimal densification for fast and accurate minwise hashing" (ICML): densified
// bins collide with probability exactly J (Theorem 1 there, from memory);
// Shrivastava & Li 2014, "Improved densification of one permutation hashing" (UAI):
// the directed rotation used as the fallback, also unbiased.
#include "index/oph.h"

#include <gtest/gtest.h>
#include <hwy/targets.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <random>
#include <set>
#include <vector>

#include <xxhash.h>

#include "index/dedup_job.h"
#include "index/minhash.h"
#include "index/normalizer.h"
#include "index/scheme.h"
#include "index/shingler.h"
#include "index/signer.h"
#include "tests/test_util.h"

namespace shingleton {
namespace {

std::vector<uint32_t> Signature(const OnePermutationHasher& h, const std::vector<uint64_t>& set) {
  std::vector<uint32_t> sig(static_cast<size_t>(h.num_bins()));
  h.Sign(set.data(), set.size(), sig.data());
  return sig;
}

struct Accuracy {
  int exceed = 0;            // estimates outside 4 sigma
  double worst_bias = 0;     // max over J of |mean - J| / (sample sd / sqrt(trials))
  double max_var_ratio = 0;  // max over J of sample variance / sigma^2
  double min_var_ratio = 1e9;
};

// 200 trials per J, a fresh hash (seed) per trial; sigma = sqrt(J(1-J)/k).
Accuracy Measure(int k, int probes, int union_size) {
  const double kJs[] = {0.1, 0.3, 0.5, 0.7, 0.8, 0.9, 0.95};
  constexpr int kTrials = 200;
  std::mt19937_64 rng(2000 + k + 7 * probes + union_size);
  Accuracy acc;
  for (double j : kJs) {
    const double sigma = std::sqrt(j * (1 - j) / k);
    double sum = 0, sum_sq = 0;
    for (int t = 0; t < kTrials; ++t) {
      const testing::SetPair p = testing::MakeSetPair(j, union_size, &rng);
      if (t == 0) {
        EXPECT_NEAR(testing::BruteForceJaccard(p.a, p.b), j, 1e-12);  // J by construction
      }
      const OnePermutationHasher h(k, rng(), probes);
      const std::vector<uint32_t> sa = Signature(h, p.a), sb = Signature(h, p.b);
      const double est = EstimateJaccard(sa.data(), sb.data(), k);
      acc.exceed += std::fabs(est - j) > 4 * sigma;
      sum += est;
      sum_sq += est * est;
    }
    const double mean = sum / kTrials;
    const double var = (sum_sq - kTrials * mean * mean) / (kTrials - 1);
    acc.worst_bias = std::max(acc.worst_bias, std::fabs(mean - j) / std::sqrt(var / kTrials));
    acc.max_var_ratio = std::max(acc.max_var_ratio, var / (sigma * sigma));
    acc.min_var_ratio = std::min(acc.min_var_ratio, var / (sigma * sigma));
  }
  std::printf("k=%d probes=%d union=%d: %d outside 4 sigma, worst bias %.2f sd, "
              "var/sigma^2 in [%.2f, %.2f]\n",
              k, probes, union_size, acc.exceed, acc.worst_bias, acc.min_var_ratio,
              acc.max_var_ratio);
  return acc;
}

// The checks of minhash_test's CheckAccuracy (see there for the tail bounds):
// at most 2 of 1400 estimates outside 4 sigma; each mean within 4 sd of J
// (unbiased); sample variance within [0.55, 1.5] sigma^2 (chi-square(199)/199 has
// relative sd 0.1). Li, Owen & Zhang 2012 show OPH's variance is below MinHash's
// when no bin is empty, so the upper bound is the one that matters.
void CheckLikeMinHash(int k, int probes, int union_size) {
  const Accuracy a = Measure(k, probes, union_size);
  EXPECT_LE(a.exceed, 2);
  EXPECT_LT(a.worst_bias, 4.0);
  EXPECT_GT(a.min_var_ratio, 0.55);
  EXPECT_LT(a.max_var_ratio, 1.5);
}

// The sketch the jobs use up to k = 1024 (4 probes), on the sets of minhash_test
// (|A ∪ B| = 200, so at k = 256 most bins are densified).
TEST(OphTest, FourProbesMatchExactJaccardK64) { CheckLikeMinHash(64, 4, 200); }
TEST(OphTest, FourProbesMatchExactJaccardK128) { CheckLikeMinHash(128, 4, 200); }
TEST(OphTest, FourProbesMatchExactJaccardK256) { CheckLikeMinHash(256, 4, 200); }

// The sketch above k = 1024 (rotation only), on sets about twice the size of k
// (4000 x J is an integer for every J, so J is exact).
TEST(OphTest, RotationMatchesExactJaccardK2048) { CheckLikeMinHash(2048, 0, 4000); }

// Sets far smaller than k: 200 elements in 2048 bins. Still unbiased (Shrivastava &
// Li 2014's collision probability argument holds for any fill), but a sketch of 200
// elements cannot have the variance of 2048 independent minima, so only the mean is
// checked here, against the sample sd.
TEST(OphTest, RotationUnbiasedOnSparseSets) {
  const Accuracy a = Measure(2048, 0, 200);
  EXPECT_LT(a.worst_bias, 4.0);
}

// Identical sets: identical bins and identical densification (definition).
TEST(OphTest, IdenticalSetsEstimateOne) {
  std::mt19937_64 rng(1);
  for (int probes : {0, 4}) {
    for (int t = 0; t < 20; ++t) {
      const testing::SetPair p = testing::MakeSetPair(1.0, 30 + 20 * t, &rng);
      const OnePermutationHasher h(256, rng(), probes);
      const auto sa = Signature(h, p.a), sb = Signature(h, p.b);  // same set, other order
      EXPECT_EQ(EstimateJaccard(sa.data(), sb.data(), 256), 1.0);
    }
  }
}

// Disjoint sets: every value comes from an element of its own set, so positions
// agree only when two distinct elements share a 32-bit value (~k * |A| / 2^32 here).
TEST(OphTest, DisjointSetsEstimateZero) {
  std::mt19937_64 rng(2);
  for (int probes : {0, 4}) {
    for (int t = 0; t < 50; ++t) {
      const testing::SetPair p = testing::MakeSetPair(0.0, 200, &rng);
      const OnePermutationHasher h(128, rng(), probes);
      const auto sa = Signature(h, p.a), sb = Signature(h, p.b);
      EXPECT_EQ(EstimateJaccard(sa.data(), sb.data(), 128), 0.0);
    }
  }
}

TEST(OphTest, DuplicatesAndOrderDoNotChangeSignature) {
  std::mt19937_64 rng(3);
  const testing::SetPair p = testing::MakeSetPair(0.5, 100, &rng);
  std::vector<uint64_t> repeated = p.a;
  for (int i = 0; i < 300; ++i) repeated.push_back(p.a[rng() % p.a.size()]);
  std::shuffle(repeated.begin(), repeated.end(), rng);
  for (int probes : {0, 4}) {
    const OnePermutationHasher h(512, 99, probes);
    EXPECT_EQ(Signature(h, p.a), Signature(h, repeated));
  }
}

// oph.h: a document without shingles gets all 0xFFFFFFFF, like MinHash.
TEST(OphTest, EmptySetIsAllOnes) {
  const OnePermutationHasher h(300, 5, 4);
  std::vector<uint32_t> sig(300, 0);
  h.Sign(nullptr, 0, sig.data());
  EXPECT_EQ(sig, std::vector<uint32_t>(300, 0xFFFFFFFFU));
}

// The method as oph.h defines it, computed the slow and obvious way: bins by
// Lemire's range reduction of XXH3-64, minima of the low 32 bits, then for each
// empty bin its probes and, failing those, a walk to the nearest filled bin on its
// side. Bit for bit equal to the library's.
std::vector<uint32_t> OphByDefinition(const std::vector<uint64_t>& set, int k, uint64_t seed,
                                      int probes) {
  uint64_t state = seed;
  const uint64_t value_seed = SplitMix64(&state);
  auto range = [k](uint64_t h) { return static_cast<int>(((h >> 32) * uint64_t(k)) >> 32); };
  std::vector<std::vector<int>> probe(k);
  std::vector<bool> left(k);
  for (int j = 0; j < k; ++j) {
    for (int t = 0; t < probes; ++t) probe[j].push_back(range(SplitMix64(&state)));
    left[j] = SplitMix64(&state) >> 63;
  }
  std::vector<uint32_t> bins(k, 0xFFFFFFFFU);
  std::vector<bool> filled(k, false);
  for (uint64_t x : set) {
    const uint64_t y = XXH3_64bits_withSeed(&x, 8, value_seed);
    bins[range(y)] = std::min(bins[range(y)], static_cast<uint32_t>(y));
    filled[range(y)] = true;
  }
  if (std::count(filled.begin(), filled.end(), true) == 0) return bins;
  std::vector<uint32_t> out = bins;
  for (int j = 0; j < k; ++j) {
    if (filled[j]) continue;
    int src = -1;
    for (int c : probe[j]) {
      if (filled[c]) { src = c; break; }
    }
    for (int c = j; src < 0; c = (c + (left[j] ? k - 1 : 1)) % k) {
      if (filled[c]) src = c;
    }
    out[j] = bins[src];
  }
  return out;
}

void CheckAgainstDefinition() {
  std::mt19937_64 rng(5);
  for (int probes : {0, 1, 4}) {
    for (int k : {1, 7, 64, 200, 3000, 9000}) {
      for (int n : {0, 1, 3, 50, 220, 400, 5000}) {
        std::vector<uint64_t> set(n);
        for (uint64_t& x : set) x = rng();
        const uint64_t seed = rng();
        EXPECT_EQ(Signature(OnePermutationHasher(k, seed, probes), set),
                  OphByDefinition(set, k, seed, probes))
            << "k=" << k << " n=" << n << " probes=" << probes;
      }
    }
  }
}

// On every instruction set compiled in and supported here (the rotation step is a
// Highway kernel, minhash_simd.h).
TEST(OphTest, SignatureMatchesDefinitionOnEveryTarget) {
  for (int64_t target : hwy::SupportedAndGeneratedTargets()) {
    hwy::SetSupportedTargetsForTest(target);
    SCOPED_TRACE(hwy::TargetName(target));
    CheckAgainstDefinition();
  }
  hwy::SetSupportedTargetsForTest(0);
}

// The job's sketch choice and its place in the persisted scheme (scheme.h).
TEST(OphTest, SketchChoiceIsRecordedInTheScheme) {
  EXPECT_EQ(SignatureMethodForSketch("minhash", 128).value(), "minhash-ms32");
  EXPECT_EQ(SignatureMethodForSketch("oph", 128).value(), "oph32-p4");
  EXPECT_EQ(SignatureMethodForSketch("oph", 1024).value(), "oph32-p4");
  EXPECT_EQ(SignatureMethodForSketch("oph", 9000).value(), "oph32-p0");
  EXPECT_FALSE(SignatureMethodForSketch("bbit", 128).ok());
  SketchScheme s = SketchScheme::Default();
  s.signature_method = "oph32-p4";
  ASSERT_TRUE(s.Validate().ok());
  const auto back = SketchScheme::Parse(s.Serialize());
  ASSERT_TRUE(back.ok());
  EXPECT_EQ(back->signature_method, "oph32-p4");
  EXPECT_NE(s.Serialize().find("sig=oph32-p4:128"), std::string::npos) << s.Serialize();
  const SketchScheme m = SketchScheme::Default();
  EXPECT_EQ(s.DescribeDifference(m), "signature oph32-p4:128 vs minhash-ms32:128");
  for (const char* bad : {"oph32-p9", "oph32-px", "oph32-p", "oph32-p44", "oph"}) {
    s.signature_method = bad;
    EXPECT_FALSE(s.Validate().ok()) << bad;
  }
}

// The Signer follows the scheme's method: an OPH scheme signs like the hasher.
TEST(OphTest, SignerUsesTheSchemesMethod) {
  SketchScheme s = SketchScheme::Default();
  s.signature_method = "oph32-p4";
  Signer signer(s);
  std::vector<uint32_t> sig(s.num_hashes);
  std::vector<uint64_t> buckets(s.bands);
  const std::string text = "one two three four five six seven eight nine ten eleven";
  signer.Sign(text, sig.data(), buckets.data());
  Normalizer norm;
  NormalizedText t;
  norm.Normalize(text, &t);
  std::vector<uint64_t> shingles;
  ShingleHashes(t, s.shingle_kind, s.shingle_size, s.seed, &shingles);
  EXPECT_EQ(sig, Signature(OnePermutationHasher(s.num_hashes, s.seed, 4), shingles));
}

// An index built with one sketch refuses a job with the other (scheme check on open).
TEST(OphTest, IndexOfOneSketchRefusesTheOther) {
  testing::TempDir dir;
  std::string lines;
  for (int i = 0; i < 20; ++i) {
    lines += testing::JsonLine("d" + std::to_string(i),
                               "the harbour bell of culdary rang " + std::to_string(i % 5) +
                                   " times over the quiet pier at dawn");
  }
  testing::WriteFile(dir.File("in.jsonl"), lines);
  for (const char* first : {"minhash", "oph"}) {
    const std::string out = dir.File(std::string("out-") + first);
    DedupOptions o;
    o.ingest.inputs = {dir.File("in.jsonl")};
    o.out_dir = out;
    o.ingest.threads = 2;
    o.sketch = first;
    const auto built = RunDedupJob(o);
    ASSERT_TRUE(built.ok()) << built.status().ToString();
    EXPECT_EQ(built->scheme.signature_method, SignatureMethodForSketch(first, 128).value());
    o.sketch = std::string(first) == "oph" ? "minhash" : "oph";
    const auto other = RunDedupJob(o);
    ASSERT_FALSE(other.ok());
    EXPECT_EQ(other.status().code(), Status::Code::kMismatch);
    EXPECT_NE(other.status().message().find("signature"), std::string::npos)
        << other.status().message();
  }
}

}  // namespace
}  // namespace shingleton
