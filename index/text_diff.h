// Shared-shingle marking: which parts of two texts lie in a shingle both have.
//
// Both texts go through the scheme's normaliser and shingler (normalizer.h,
// shingler.h). ShingleHashes returns one hash per shingle position in text order:
// word shingle i covers tokens i..i+k-1, character shingle i covers code points
// i..i+k-1, and a text with at most k units has one shingle covering all of it.
// A byte of a normalised text is "shared" when some shingle covering it has a hash
// the other text also has. The runs partition each normalised text.
//
// Thread safety: pure functions.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "index/scheme.h"

namespace shingleton {

// A run of a document's normalised text, shared (in a shingle both texts have) or not.
struct TextRun {
  std::string text;
  bool shared = false;
};

struct SharedShingles {
  uint64_t shingles_a = 0, shingles_b = 0, shared = 0;  // distinct shingle hashes
  double jaccard = 0;  // |A ∩ B| / |A ∪ B| of the shingle sets (1 when both are empty)
  std::vector<TextRun> runs_a, runs_b;
};

// REQUIRES: both texts are valid UTF-8.
SharedShingles MarkSharedShingles(const SketchScheme& scheme, std::string_view a,
                                  std::string_view b);

// The distinct shingle hashes of a raw text under the scheme (sorted).
std::vector<uint64_t> ShingleSetOfText(const SketchScheme& scheme, std::string_view text);

}  // namespace shingleton
