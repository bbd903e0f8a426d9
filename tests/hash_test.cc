// Hash functions behind every persisted value: XXH3-64 / XXH64 (the libxxhash we
// link), DocKey, BandBucket and SplitMix64. Each check names its outside source.
#include <gtest/gtest.h>
#include <xxhash.h>

#include <cstdint>
#include <string>
#include <vector>

#include "index/bands.h"
#include "index/document.h"
#include "index/minhash.h"

namespace shingleton {
namespace {

// The sanity buffer of xxHash's cli/xsum_sanity_check.c (xxHash repository):
// byteGen starts at PRIME32, each byte is byteGen >> 56, then byteGen *= PRIME64.
// The generator and the vectors below that use it are written from memory of that file.
constexpr uint32_t kPrime32 = 2654435761U;
constexpr uint64_t kPrime64 = 11400714785074694797ULL;

std::vector<uint8_t> SanityBuffer(size_t len) {
  std::vector<uint8_t> buf(len);
  uint64_t byte_gen = kPrime32;
  for (size_t i = 0; i < len; ++i) {
    buf[i] = static_cast<uint8_t>(byte_gen >> 56);
    byte_gen *= kPrime64;
  }
  return buf;
}

// Official sanity vectors for empty input (xxHash repository,
// cli/xsum_sanity_check.c; the two 64-bit ones are also in our build notes).
TEST(XxHashTest, EmptyInputVectors) {
  EXPECT_EQ(XXH64("", 0, 0), 0xEF46DB3751D8E999ULL);
  EXPECT_EQ(XXH3_64bits("", 0), 0x2D06800538D394C2ULL);
  // XXH32 of the empty input, seed 0 (same file; from memory).
  EXPECT_EQ(XXH32("", 0, 0), 0x02CC5D05U);
}

// Further vectors of cli/xsum_sanity_check.c over its generated buffer
// (values from memory of that file).
TEST(XxHashTest, SanityBufferVectors) {
  const std::vector<uint8_t> buf = SanityBuffer(2367);
  EXPECT_EQ(XXH64(buf.data(), 0, kPrime32), 0xAC75FDA2929B17EFULL);
  EXPECT_EQ(XXH64(buf.data(), 1, 0), 0xE934A84ADB052768ULL);
  EXPECT_EQ(XXH64(buf.data(), 1, kPrime32), 0x5014607643A9B4C3ULL);
  EXPECT_EQ(XXH64(buf.data(), 14, 0), 0x8282DCC4994E35C8ULL);
  EXPECT_EQ(XXH64(buf.data(), 222, 0), 0xB641AE8CB691C174ULL);
  EXPECT_EQ(XXH3_64bits_withSeed(buf.data(), 0, kPrime64), 0xA8A6B918B2F0364AULL);
  EXPECT_EQ(XXH3_64bits(buf.data(), 1), 0xC44BDFF4074EECDBULL);
  EXPECT_EQ(XXH3_64bits_withSeed(buf.data(), 1, kPrime64), 0x032BE332DD766EF8ULL);
  EXPECT_EQ(XXH3_64bits(buf.data(), 6), 0x27B56A84CD2D7325ULL);
  EXPECT_EQ(XXH3_64bits_withSeed(buf.data(), 6, kPrime64), 0x84589C116AB59AB9ULL);
}

// xxhash.h documents that XXH3_64bits_withSeed with seed 0 is XXH3_64bits.
TEST(XxHashTest, SeedZeroIsUnseeded) {
  const std::vector<uint8_t> buf = SanityBuffer(2367);
  for (size_t len : {0, 1, 3, 4, 8, 16, 17, 128, 129, 240, 241, 1024, 2367}) {
    EXPECT_EQ(XXH3_64bits_withSeed(buf.data(), len, 0), XXH3_64bits(buf.data(), len))
        << len;
  }
}

// document.h: a document key is XXH3-64 of the id bytes with seed 0.
TEST(DocKeyTest, IsXxh3OfIdBytesSeedZero) {
  const std::vector<std::string> ids = {"",
                                        "a",
                                        "doc-1",
                                        "https://example.org/page?id=42",
                                        std::string("nul\0inside", 10),
                                        "\xC3\xA9t\xC3\xA9 \xE6\x97\xA5\xE6\x9C\xAC",
                                        std::string(300, 'x')};
  for (const std::string& id : ids) {
    EXPECT_EQ(DocKey(id), XXH3_64bits_withSeed(id.data(), id.size(), 0)) << id;
  }
  // Tied to the official empty-input vector (xsum_sanity_check.c) directly.
  EXPECT_EQ(DocKey(""), 0x2D06800538D394C2ULL);
}

// bands.h: a bucket is XXH3-64 of the band's r 32-bit values as little-endian
// bytes, under seed + band. The bytes are built here independently. BandBuckets
// (all bands at once) must give the same value for every band.
TEST(BandBucketTest, IsXxh3OfLittleEndianRowsSeedPlusBand) {
  uint64_t state = 12345;
  std::vector<uint32_t> sig(9000);
  for (uint32_t& v : sig) v = static_cast<uint32_t>(SplitMix64(&state) >> 7);
  sig[0] = 0;
  sig[1] = 0xFFFFFFFFU;
  sig[2] = 0x01020304U;

  struct Layout {
    int bands;
    int rows;
  };
  const std::vector<Layout> layouts = {{20, 5},  {16, 8},  {256, 1},
                                       {1, 256}, {2, 100}, {32, 8}, {409, 22}};
  const std::vector<uint64_t> seeds = {0, 1, 0x5348494e47ULL, ~0ULL - 3};
  for (const Layout& l : layouts) {
    for (uint64_t seed : seeds) {
      std::vector<uint64_t> all(l.bands);
      BandBuckets(sig.data(), l.bands, l.rows, seed, all.data());
      for (int band = 0; band < l.bands; ++band) {
        std::vector<uint8_t> bytes;
        for (int i = 0; i < l.rows; ++i) {
          const uint32_t v = sig[band * l.rows + i];
          for (int shift = 0; shift < 32; shift += 8)
            bytes.push_back(static_cast<uint8_t>(v >> shift));
        }
        // seed + band wraps modulo 2^64 (unsigned arithmetic) for the last seed.
        const uint64_t expected = XXH3_64bits_withSeed(
            bytes.data(), bytes.size(), seed + static_cast<uint64_t>(band));
        ASSERT_EQ(BandBucket(sig.data(), band, l.rows, seed), expected)
            << l.bands << "x" << l.rows << " band " << band << " seed " << seed;
        ASSERT_EQ(all[band], expected) << "BandBuckets, " << l.bands << "x" << l.rows << " band " << band;
      }
    }
  }
}

// A spot check of the byte order alone: the row value 0x04030201 is the bytes
// 01 02 03 04 in little-endian order (definition of little-endian).
TEST(BandBucketTest, ByteOrderIsLittleEndian) {
  const uint32_t sig[1] = {0x04030201U};
  const uint8_t bytes[4] = {1, 2, 3, 4};
  EXPECT_EQ(BandBucket(sig, 0, 1, 7), XXH3_64bits_withSeed(bytes, 4, 7));
}

// SplitMix64 (Steele, Lea, Flood 2014; Vigna's reference splitmix64.c), written
// out here from its definition:
//   state += 0x9E3779B97F4A7C15; z = state;
//   z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9;
//   z = (z ^ (z >> 27)) * 0x94D049BB133111EB;
//   return z ^ (z >> 31);
uint64_t ReferenceSplitMix64(uint64_t* state) {
  *state += 0x9E3779B97F4A7C15ULL;
  uint64_t z = *state;
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
  return z ^ (z >> 31);
}

TEST(SplitMix64Test, FirstOutputsForSeedZero) {
  // From memory of the output of Vigna's reference splitmix64.c seeded with 0;
  // the same values follow from the definition (checked next).
  const uint64_t kRemembered[3] = {0xE220A8397B1DCDAFULL, 0x6E789E6AA1B965F4ULL,
                                   0x06C45D188009454FULL};
  uint64_t ours = 0;
  uint64_t ref = 0;
  for (uint64_t expected : kRemembered) {
    EXPECT_EQ(ReferenceSplitMix64(&ref), expected);
    EXPECT_EQ(SplitMix64(&ours), expected);
  }
  EXPECT_EQ(ours, ref);
  // The state advances by the golden-ratio increment only (definition).
  EXPECT_EQ(ours, 3 * 0x9E3779B97F4A7C15ULL);
}

TEST(SplitMix64Test, MatchesDefinitionForManySeeds) {
  for (uint64_t seed :
       {0ULL, 1ULL, 0x5348494e47ULL, 0xFFFFFFFFFFFFFFFFULL, 0x8000000000000000ULL}) {
    uint64_t ours = seed;
    uint64_t ref = seed;
    for (int i = 0; i < 10000; ++i) {
      ASSERT_EQ(SplitMix64(&ours), ReferenceSplitMix64(&ref))
          << "seed " << seed << " step " << i;
      ASSERT_EQ(ours, ref);
    }
  }
}

}  // namespace
}  // namespace shingleton
