// Normaliser: raw document text -> canonical token stream.
//
// Rules (kNormalizationVersion = 1, see scheme.h):
//  1. The input must be valid UTF-8 (ValidateUtf8 reports the first bad byte).
//  2. NFKC with Unicode case folding (utf8proc: COMPAT | COMPOSE | CASEFOLD | STABLE),
//     so "ﬁ", "Ｆｉ" and "FI" all become "fi". Default-ignorable code points
//     (soft hyphen, ZWJ/ZWNJ, variation selectors; utf8proc IGNORE) are removed,
//     so "co\u00ADoperate" is "cooperate" and "I ❤️ NY" has no stray token.
//  3. Tokens are maximal runs of code points whose general category is a letter
//     (L*), mark (M*) or number (N*); every other code point (punctuation, symbols,
//     spaces, controls) separates tokens. Punctuation and whitespace are thereby folded.
//  4. The result is the tokens joined by one ASCII space. Character shingles use
//     this same text, so both shingle kinds see identical folding.
// ASCII text takes a fast path; only non-ASCII runs go through utf8proc, with a
// result identical to normalising the whole text at once (tested).
//
// Thread safety: functions are reentrant; a Normalizer object is not shared
// between threads (it owns scratch buffers).
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "index/status.h"

namespace shingleton {

// OK if `text` is well-formed UTF-8 (no overlongs, surrogates or values above
// U+10FFFF); otherwise BadInput naming the byte offset of the first bad sequence.
Status ValidateUtf8(std::string_view text);

// NFKC of valid UTF-8 text (no case folding, no tokenising). Exposed so the NFKC
// step can be checked against Unicode's NormalizationTest.txt.
StatusOr<std::string> Nfkc(std::string_view text);

// The normalised form of one document.
struct NormalizedText {
  std::string text;              // tokens separated by single spaces
  std::vector<uint32_t> starts;  // byte offset of each token in `text`
  size_t num_tokens() const { return starts.size(); }
  // Byte offset one past the end of token i.
  uint32_t TokenEnd(size_t i) const {
    return i + 1 < starts.size() ? starts[i + 1] - 1 : static_cast<uint32_t>(text.size());
  }
};

class Normalizer {
 public:
  Normalizer() = default;
  Normalizer(const Normalizer&) = delete;
  Normalizer& operator=(const Normalizer&) = delete;

  // REQUIRES: ValidateUtf8(input).ok(). Overwrites *out.
  void Normalize(std::string_view input, NormalizedText* out);

  // The whole text through utf8proc at once: the reference for the fast path.
  void NormalizeUnicode(std::string_view input, NormalizedText* out);
};

}  // namespace shingleton
