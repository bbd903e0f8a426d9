// The normaliser's fast path (ASCII inline, only non-ASCII runs through utf8proc)
// must equal normalising the whole text with utf8proc at once — the reference is
// the library's own NFKC + case folding applied by definition to the whole string.
#include <gtest/gtest.h>

#include <random>

#include "index/normalizer.h"

namespace shingleton {
namespace {

// Pieces chosen to stress chunk boundaries: combining marks that compose with a
// preceding ASCII letter (e + U+0301 -> é, Unicode canonical composition), U+0338
// composing with '<' (-> U+226E), Hangul jamo that compose into syllables (Unicode
// ch. 3.12), compatibility characters (ﬁ, fullwidth Ａ, ², ㎏), case folding (ß, İ, Σ),
// punctuation and spaces (curly quotes, em dash, NBSP), CJK.
const char* kPieces[] = {"a", "E", "e", "z", "0", "7", " ", ".", ",", "-", "<", "'", "\n",
                         "\xCC\x81", "\xCC\x88", "\xCC\xB8", "\xE1\x84\x80", "\xE1\x85\xA1",
                         "\xE1\x86\xA8", "\xEF\xAC\x81", "\xEF\xBC\xA1", "\xC2\xB2", "\xE3\x8E\x8F",
                         "\xC3\x9F", "\xC4\xB0", "\xCE\xA3", "\xE2\x80\x9C", "\xE2\x80\x94",
                         "\xC2\xA0", "\xE6\xB8\xAF", "\xC3\xA9", "\xD9\x85"};

TEST(NormalizerFastPathTest, EqualsWholeTextNormalisation) {
  std::mt19937 rng(2026);
  Normalizer n;
  NormalizedText fast, whole;
  const size_t kinds = sizeof(kPieces) / sizeof(kPieces[0]);
  for (int trial = 0; trial < 20000; ++trial) {
    std::string text;
    const int len = 1 + static_cast<int>(rng() % 24);
    for (int i = 0; i < len; ++i) text += kPieces[rng() % kinds];
    ASSERT_TRUE(ValidateUtf8(text).ok());
    n.Normalize(text, &fast);
    n.NormalizeUnicode(text, &whole);
    ASSERT_EQ(fast.text, whole.text) << "input: " << text;
    ASSERT_EQ(fast.starts, whole.starts) << "input: " << text;
  }
}

TEST(NormalizerFastPathTest, ComposesAcrossTheAsciiBoundary) {
  Normalizer n;
  NormalizedText out;
  n.Normalize("Cafe\xCC\x81 au lait", &out);  // e + COMBINING ACUTE ACCENT
  EXPECT_EQ(out.text, "caf\xC3\xA9 au lait");    // NFC/NFKC composes to U+00E9
  n.Normalize("a<\xCC\xB8" "b", &out);           // < + U+0338 -> U+226E, a symbol (Sm)
  EXPECT_EQ(out.text, "a b");
}

}  // namespace
}  // namespace shingleton
