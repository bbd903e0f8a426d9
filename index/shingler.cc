#include "index/shingler.h"

// Inlined: one hash per shingle is this unit's inner loop (same values as the
// library function).
#define XXH_INLINE_ALL
#include <xxhash.h>

#include <algorithm>

namespace shingleton {
namespace {

uint64_t HashSpan(const std::string& text, size_t begin, size_t end, uint64_t seed) {
  return XXH3_64bits_withSeed(text.data() + begin, end - begin, seed);
}

void WordShingles(const NormalizedText& t, int size, uint64_t seed, std::vector<uint64_t>* out) {
  const size_t n = t.num_tokens();
  const size_t k = static_cast<size_t>(size);
  if (n <= k) {
    out->push_back(HashSpan(t.text, 0, t.text.size(), seed));
    return;
  }
  out->reserve(n - k + 1);
  for (size_t i = 0; i + k <= n; ++i) {
    out->push_back(HashSpan(t.text, t.starts[i], t.TokenEnd(i + k - 1), seed));
  }
}

void CharShingles(const NormalizedText& t, int size, uint64_t seed, std::vector<uint64_t>* out) {
  std::vector<uint32_t> cp_starts;
  cp_starts.reserve(t.text.size());
  for (size_t i = 0; i < t.text.size(); ++i) {
    if ((static_cast<unsigned char>(t.text[i]) & 0xC0) != 0x80) cp_starts.push_back(i);
  }
  const size_t n = cp_starts.size();
  const size_t k = static_cast<size_t>(size);
  if (n <= k) {
    out->push_back(HashSpan(t.text, 0, t.text.size(), seed));
    return;
  }
  cp_starts.push_back(static_cast<uint32_t>(t.text.size()));
  out->reserve(n - k + 1);
  for (size_t i = 0; i + k <= n; ++i) {
    out->push_back(HashSpan(t.text, cp_starts[i], cp_starts[i + k], seed));
  }
}

}  // namespace

void ShingleHashes(const NormalizedText& text, ShingleKind kind, int size, uint64_t seed,
                   std::vector<uint64_t>* out) {
  out->clear();
  if (text.num_tokens() == 0) return;
  if (kind == ShingleKind::kWord) {
    WordShingles(text, size, seed, out);
  } else {
    CharShingles(text, size, seed, out);
  }
}

std::vector<uint64_t> ShingleSet(const NormalizedText& text, ShingleKind kind, int size,
                                 uint64_t seed) {
  std::vector<uint64_t> out;
  ShingleHashes(text, kind, size, seed, &out);
  std::sort(out.begin(), out.end());
  out.erase(std::unique(out.begin(), out.end()), out.end());
  return out;
}

double ExactJaccard(const std::vector<uint64_t>& a, const std::vector<uint64_t>& b) {
  if (a.empty() && b.empty()) return 1.0;
  size_t i = 0, j = 0, common = 0;
  while (i < a.size() && j < b.size()) {
    if (a[i] < b[j]) {
      ++i;
    } else if (b[j] < a[i]) {
      ++j;
    } else {
      ++common, ++i, ++j;
    }
  }
  return static_cast<double>(common) / static_cast<double>(a.size() + b.size() - common);
}

}  // namespace shingleton
