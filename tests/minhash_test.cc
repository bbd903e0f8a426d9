// MinHash signatures (Broder 1997, "On the resemblance and containment of
// documents") against exact Jaccard similarity computed by brute force, and the
// shingler against shingles built by definition in the test.
#include "index/minhash.h"

#include <gtest/gtest.h>

#include "tests/test_util.h"
#include <xxhash.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <random>
#include <set>
#include <string>
#include <vector>

#include <hwy/targets.h>

#include "index/minhash_simd.h"
#include "index/normalizer.h"
#include "index/scheme.h"
#include "index/shingler.h"

namespace shingleton {
namespace {

// A pair of sets with an exactly known Jaccard similarity
// J = |A ∩ B| / |A ∪ B| (Broder 1997, "resemblance").

std::vector<uint32_t> Signature(const MinHasher& h, const std::vector<uint64_t>& set) {
  std::vector<uint32_t> sig(static_cast<size_t>(h.num_hashes()));
  h.Sign(set.data(), set.size(), sig.data());
  return sig;
}

// Statistical accuracy of the estimate. With k independent min-wise hash
// functions the number of agreeing positions is Binomial(k, J) (Broder 1997), so
// the estimate has mean J and standard deviation sigma = sqrt(J(1-J)/k).
// A two-sided 4-sigma band is exceeded with probability about 6.3e-5 per estimate
// under the normal approximation; the exact binomial tails are somewhat heavier
// for small k (about 1e-4 for k = 64, J = 0.7). With 7 * 200 = 1400 estimates per
// k that is at most ~0.15 expected exceedances, so an ideal MinHash would make
// "every estimate within 4 sigma" fail roughly once in seven runs of fresh data.
// We therefore allow at most 2 exceedances per k (Poisson(0.15): P(>= 3) ~ 5e-4).
void CheckAccuracy(int k) {
  const double kJs[] = {0.1, 0.3, 0.5, 0.7, 0.8, 0.9, 0.95};
  constexpr int kTrials = 200;
  constexpr int kUnion = 200;  // every J above times 200 is an integer
  std::mt19937_64 rng(1000 + k);
  int exceed = 0;
  for (double j : kJs) {
    const double sigma = std::sqrt(j * (1 - j) / k);
    double sum = 0, sum_sq = 0;
    for (int t = 0; t < kTrials; ++t) {
      const testing::SetPair p = testing::MakeSetPair(j, kUnion, &rng);
      ASSERT_DOUBLE_EQ(testing::BruteForceJaccard(p.a, p.b), j);
      const MinHasher h(k, rng());  // a fresh hash family per trial
      const std::vector<uint32_t> sa = Signature(h, p.a), sb = Signature(h, p.b);
      const double est = EstimateJaccard(sa.data(), sb.data(), k);
      if (std::fabs(est - j) > 4 * sigma) {
        ++exceed;
        std::printf("k=%d J=%.2f trial %d: estimate %.4f outside 4 sigma (%.4f)\n", k, j,
                    t, est, 4 * sigma);
      }
      sum += est;
      sum_sq += est * est;
    }
    const double mean = sum / kTrials;
    const double var = (sum_sq - kTrials * mean * mean) / (kTrials - 1);
    // (b) Unbiased: the mean of 200 estimates has sd sigma / sqrt(200).
    EXPECT_LT(std::fabs(mean - j), 4 * sigma / std::sqrt(kTrials))
        << "k=" << k << " J=" << j;
    // (d) Independent hash functions: the sample variance of 200 estimates is
    // sigma^2 * chi2(199)/199, relative sd ~0.1, so [0.55, 1.5] is beyond 4 sd.
    // Correlated hash functions would inflate it.
    EXPECT_GT(var, 0.55 * sigma * sigma) << "k=" << k << " J=" << j;
    EXPECT_LT(var, 1.5 * sigma * sigma) << "k=" << k << " J=" << j;
  }
  EXPECT_LE(exceed, 2) << "k=" << k;
}

TEST(MinHashTest, EstimateMatchesExactJaccardK128) { CheckAccuracy(128); }
TEST(MinHashTest, EstimateMatchesExactJaccardK256) { CheckAccuracy(256); }
TEST(MinHashTest, EstimateMatchesExactJaccardK64) { CheckAccuracy(64); }

// Identical sets have identical minima, hence estimate exactly 1 (definition).
TEST(MinHashTest, IdenticalSetsEstimateOne) {
  std::mt19937_64 rng(1);
  for (int t = 0; t < 20; ++t) {
    const testing::SetPair p = testing::MakeSetPair(1.0, 50 + t, &rng);
    const MinHasher h(128, rng());
    const auto sa = Signature(h, p.a), sb = Signature(h, p.b);  // same set, other order
    EXPECT_EQ(EstimateJaccard(sa.data(), sb.data(), 128), 1.0);
  }
}

// Disjoint sets: a position agrees only if two distinct elements have equal
// 32-bit minima, probability ~ |A||B|/(|A|+|B|) / 2^32 ~ 1e-8 per position here,
// so all 50 * 128 positions disagree except with probability < 1e-4.
TEST(MinHashTest, DisjointSetsEstimateZero) {
  std::mt19937_64 rng(2);
  for (int t = 0; t < 50; ++t) {
    const testing::SetPair p = testing::MakeSetPair(0.0, 200, &rng);
    ASSERT_EQ(testing::BruteForceJaccard(p.a, p.b), 0.0);
    const MinHasher h(128, rng());
    const auto sa = Signature(h, p.a), sb = Signature(h, p.b);
    EXPECT_EQ(EstimateJaccard(sa.data(), sb.data(), 128), 0.0);
  }
}

// A signature is a minimum over a multiset: repeats and order do not matter.
TEST(MinHashTest, DuplicatesAndOrderDoNotChangeSignature) {
  std::mt19937_64 rng(3);
  const testing::SetPair p = testing::MakeSetPair(0.5, 100, &rng);
  std::vector<uint64_t> repeated = p.a;
  for (int i = 0; i < 300; ++i) repeated.push_back(p.a[rng() % p.a.size()]);
  std::shuffle(repeated.begin(), repeated.end(), rng);
  const MinHasher h(128, 99);
  EXPECT_EQ(Signature(h, p.a), Signature(h, repeated));
}

// minhash.h: a document without shingles gets the all-0xFFFFFFFF signature.
TEST(MinHashTest, EmptySetIsAllOnes) {
  const MinHasher h(128, 5);
  std::vector<uint32_t> sig(128, 0);
  h.Sign(nullptr, 0, sig.data());
  EXPECT_EQ(sig, std::vector<uint32_t>(128, 0xFFFFFFFFU));
}

TEST(MinHashTest, DeterministicPerSeed) {
  std::mt19937_64 rng(4);
  const testing::SetPair p = testing::MakeSetPair(0.5, 100, &rng);
  const MinHasher h1(128, 42), h2(128, 42), h3(128, 43);
  EXPECT_EQ(Signature(h1, p.a), Signature(h2, p.a));
  const auto s1 = Signature(h1, p.a), s3 = Signature(h3, p.a);
  // Two independent families agree on a position only when two minima of
  // independent 32-bit values coincide, probability ~ |A| / 2^32.
  EXPECT_LT(EstimateJaccard(s1.data(), s3.data(), 128), 0.2);
  EXPECT_EQ(h1.num_hashes(), 128);
}

// minhash.h defines method "minhash-ms32": h_i(x) = high 32 bits of
// (a_i * x + b_i) mod 2^64, a_i odd, a_i and b_i drawn from SplitMix64 seeded by
// the scheme seed; signature value i = min over the shingles. Computed here from
// that definition. The header does not state the draw order; this assumes
// a_0, b_0, a_1, b_1, ... (a_i = next | 1), which is then part of the persisted
// method and must not change without a new method name.
TEST(MinHashTest, SignatureMatchesMultiplyShiftDefinition) {
  std::mt19937_64 rng(5);
  const testing::SetPair p = testing::MakeSetPair(0.5, 64, &rng);
  for (uint64_t seed : {0ULL, 1ULL, 0x5348494e47ULL}) {
    const int k = 128;
    uint64_t state = seed;
    std::vector<uint64_t> a(k), b(k);
    for (int i = 0; i < k; ++i) {
      a[i] = SplitMix64(&state) | 1;
      b[i] = SplitMix64(&state);
    }
    std::vector<uint32_t> expected(k);
    for (int i = 0; i < k; ++i) {
      uint32_t m = 0xFFFFFFFFU;
      for (uint64_t x : p.a)
        m = std::min(m, static_cast<uint32_t>((a[i] * x + b[i]) >> 32));
      expected[i] = m;
    }
    EXPECT_EQ(Signature(MinHasher(k, seed), p.a), expected) << "seed " << seed;
  }
}

// The Highway kernel (minhash_simd.h) against the scalar definition, bit for bit,
// on every instruction set compiled in and supported by this CPU; k values that are
// and are not multiples of the vector length, and chunk boundaries of Sign (512).
TEST(MinHashTest, VectorKernelEqualsScalarDefinitionOnEveryTarget) {
  std::mt19937_64 rng(6);
  std::vector<uint64_t> hashes(1500);
  for (uint64_t& x : hashes) x = rng();
  hashes[7] = 0;                       // edge values of the 64-bit key
  hashes[8] = ~0ULL;
  hashes[9] = 0xFFFFFFFFULL;
  hashes[10] = 0xFFFFFFFF00000000ULL;
  int targets = 0;
  for (int64_t target : hwy::SupportedAndGeneratedTargets()) {
    hwy::SetSupportedTargetsForTest(target);
    ++targets;
    for (int k : {1, 3, 8, 9, 16, 31, 64, 128, 200, 1000}) {
      const MinHasher h(k, 0x5348494e47ULL + k);
      for (size_t n : {size_t{0}, size_t{1}, size_t{5}, size_t{511}, size_t{512}, size_t{1500}}) {
        std::vector<uint32_t> fast(k), slow(k);
        h.Sign(hashes.data(), n, fast.data());
        h.SignScalar(hashes.data(), n, slow.data());
        ASSERT_EQ(fast, slow) << hwy::TargetName(target) << " k=" << k << " n=" << n;
      }
    }
  }
  hwy::SetSupportedTargetsForTest(0);
  std::printf("kernel checked on %d targets; dispatch picks %s\n", targets, Ms32KernelTarget());
  EXPECT_GE(targets, 1);
}

// Fraction of equal positions (definition of the estimator).
TEST(MinHashTest, EstimateJaccardIsFractionOfEqualPositions) {
  const uint32_t a[8] = {1, 2, 3, 4, 5, 6, 7, 8};
  const uint32_t b[8] = {1, 0, 3, 0, 5, 0, 7, 9};
  EXPECT_DOUBLE_EQ(EstimateJaccard(a, b, 8), 4.0 / 8.0);  // positions 0, 2, 4, 6
  EXPECT_DOUBLE_EQ(EstimateJaccard(a, a, 8), 1.0);
  EXPECT_DOUBLE_EQ(EstimateJaccard(a, b, 1), 1.0);
  EXPECT_DOUBLE_EQ(EstimateJaccard(a, b, 2), 0.5);
}

// ---------------------------------------------------------------------------
// Shingler.

NormalizedText Normalized(const std::string& s) {
  Normalizer n;
  NormalizedText out;
  n.Normalize(s, &out);
  return out;
}

uint64_t Xxh3(const std::string& s, uint64_t seed) {
  return XXH3_64bits_withSeed(s.data(), s.size(), seed);
}

constexpr uint64_t kSeed = 0x5348494e47ULL;

// Word 5-grams (common practice for web text): each window of 5 consecutive
// tokens, joined by single spaces, hashed with XXH3-64 under the seed (shingler.h).
TEST(ShinglerTest, WordFiveGramsOfKnownSentence) {
  const NormalizedText t = Normalized("The quick, brown fox -- jumps over the LAZY dog!");
  ASSERT_EQ(t.text, "the quick brown fox jumps over the lazy dog");
  const std::vector<std::string> words = {"the",  "quick", "brown", "fox", "jumps",
                                          "over", "the",   "lazy",  "dog"};
  std::vector<uint64_t> expected;
  for (size_t i = 0; i + 5 <= words.size(); ++i) {
    std::string w = words[i];
    for (size_t j = i + 1; j < i + 5; ++j) w += " " + words[j];
    expected.push_back(Xxh3(w, kSeed));
  }
  ASSERT_EQ(expected.size(), 9u - 5u + 1u);
  std::vector<uint64_t> got;
  ShingleHashes(t, ShingleKind::kWord, 5, kSeed, &got);
  EXPECT_EQ(got, expected);  // in text order
  std::vector<uint64_t> sorted = expected;
  std::sort(sorted.begin(), sorted.end());
  EXPECT_EQ(ShingleSet(t, ShingleKind::kWord, 5, kSeed), sorted);
  // The first shingle spelled out.
  EXPECT_EQ(got.front(), Xxh3("the quick brown fox jumps", kSeed));
  // Another seed, other hashes.
  ShingleHashes(t, ShingleKind::kWord, 5, kSeed + 1, &got);
  EXPECT_EQ(got.front(), Xxh3("the quick brown fox jumps", kSeed + 1));
}

TEST(ShinglerTest, RepeatsAreKeptButSetIsUnique) {
  const NormalizedText t = Normalized("a b a b a b a b");
  std::vector<uint64_t> got;
  ShingleHashes(t, ShingleKind::kWord, 2, kSeed, &got);
  ASSERT_EQ(got.size(), 7u);  // 8 tokens - 2 + 1
  EXPECT_EQ(got[0], Xxh3("a b", kSeed));
  EXPECT_EQ(got[1], Xxh3("b a", kSeed));
  std::vector<uint64_t> set = {Xxh3("a b", kSeed), Xxh3("b a", kSeed)};
  std::sort(set.begin(), set.end());
  EXPECT_EQ(ShingleSet(t, ShingleKind::kWord, 2, kSeed), set);
}

TEST(ShinglerTest, ShortAndEmptyDocuments) {
  std::vector<uint64_t> got;
  // Fewer than k tokens: exactly one shingle, the whole normalised text.
  ShingleHashes(Normalized("Hello, big World"), ShingleKind::kWord, 5, kSeed, &got);
  EXPECT_EQ(got, std::vector<uint64_t>{Xxh3("hello big world", kSeed)});
  // Exactly k tokens: the single window, which is the whole text.
  ShingleHashes(Normalized("one two three four five"), ShingleKind::kWord, 5, kSeed,
                &got);
  EXPECT_EQ(got, std::vector<uint64_t>{Xxh3("one two three four five", kSeed)});
  // No tokens: no shingles.
  ShingleHashes(Normalized(""), ShingleKind::kWord, 5, kSeed, &got);
  EXPECT_TRUE(got.empty());
  ShingleHashes(Normalized(" ... !!! "), ShingleKind::kWord, 5, kSeed, &got);
  EXPECT_TRUE(got.empty());
  ShingleHashes(Normalized(" ... !!! "), ShingleKind::kChar, 3, kSeed, &got);
  EXPECT_TRUE(got.empty());
  // Fewer than k code points: one character shingle, the whole text.
  ShingleHashes(Normalized("ab"), ShingleKind::kChar, 5, kSeed, &got);
  EXPECT_EQ(got, std::vector<uint64_t>{Xxh3("ab", kSeed)});
}

// Splits UTF-8 into code points (ch. 3 Table 3-6: a code point starts at every
// byte that is not 10xxxxxx).
std::vector<std::string> CodePoints(const std::string& s) {
  std::vector<std::string> out;
  for (unsigned char c : s) {
    if ((c & 0xC0) != 0x80) out.emplace_back();
    out.back().push_back(static_cast<char>(c));
  }
  return out;
}

// Character k-shingles: k consecutive code points of the normalised text,
// spaces included (shingler.h).
TEST(ShinglerTest, CharShinglesCountCodePoints) {
  // "Ça va, señor 日本" -> "ça va señor 日本": 14 code points, 20 bytes.
  const NormalizedText t = Normalized(
      "\xC3\x87"
      "a va, se\xC3\xB1or \xE6\x97\xA5\xE6\x9C\xAC");
  ASSERT_EQ(t.text,
            "\xC3\xA7"
            "a va se\xC3\xB1or \xE6\x97\xA5\xE6\x9C\xAC");
  const std::vector<std::string> cps = CodePoints(t.text);
  ASSERT_EQ(cps.size(), 14u);
  for (int k : {1, 3, 5, 14}) {
    std::vector<uint64_t> expected;
    for (size_t i = 0; i + k <= cps.size(); ++i) {
      std::string w;
      for (size_t j = i; j < i + k; ++j) w += cps[j];
      expected.push_back(Xxh3(w, kSeed));
    }
    ASSERT_EQ(expected.size(), cps.size() - k + 1);
    std::vector<uint64_t> got;
    ShingleHashes(t, ShingleKind::kChar, k, kSeed, &got);
    EXPECT_EQ(got, expected) << "k=" << k;
  }
  std::vector<uint64_t> got;
  ShingleHashes(t, ShingleKind::kChar, 3, kSeed, &got);
  EXPECT_EQ(got[0], Xxh3("\xC3\xA7"
                         "a ",
                         kSeed));
}

// ExactJaccard = |A ∩ B| / |A ∪ B| (definition), 1.0 for two empty sets (shingler.h).
TEST(ShinglerTest, ExactJaccardByDefinition) {
  EXPECT_DOUBLE_EQ(ExactJaccard({1, 2, 3, 4}, {3, 4, 5}), 2.0 / 5.0);
  EXPECT_DOUBLE_EQ(ExactJaccard({1, 2, 3}, {1, 2, 3}), 1.0);
  EXPECT_DOUBLE_EQ(ExactJaccard({1, 2}, {3, 4}), 0.0);
  EXPECT_DOUBLE_EQ(ExactJaccard({}, {}), 1.0);
  EXPECT_DOUBLE_EQ(ExactJaccard({}, {7}), 0.0);
  EXPECT_DOUBLE_EQ(ExactJaccard({5}, {1, 2, 3, 4, 5, 6, 7, 8, 9}), 1.0 / 9.0);
  // Two sentences sharing 3 of their 5-grams: 6 and 5 shingles, union 8.
  const auto a = ShingleSet(Normalized("w1 w2 w3 w4 w5 w6 w7 w8 w9 w10"),
                            ShingleKind::kWord, 5, kSeed);
  const auto b =
      ShingleSet(Normalized("w3 w4 w5 w6 w7 w8 w9 x y"), ShingleKind::kWord, 5, kSeed);
  ASSERT_EQ(a.size(), 6u);
  ASSERT_EQ(b.size(), 5u);
  EXPECT_DOUBLE_EQ(ExactJaccard(a, b), 3.0 / 8.0);
  EXPECT_DOUBLE_EQ(ExactJaccard(a, b), testing::BruteForceJaccard(a, b));
}

}  // namespace
}  // namespace shingleton
