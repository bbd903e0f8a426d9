#include "index/text_diff.h"

#include <algorithm>
#include <unordered_set>

#include "index/normalizer.h"
#include "index/shingler.h"

namespace shingleton {
namespace {

struct Shingled {
  NormalizedText text;
  std::vector<uint64_t> hashes;                      // in text order
  std::vector<std::pair<uint32_t, uint32_t>> spans;  // byte range of each hash
};

// The byte ranges of the shingle positions, by the shingler's contract (shingler.h).
std::vector<std::pair<uint32_t, uint32_t>> Spans(const NormalizedText& t,
                                                 ShingleKind kind, size_t k,
                                                 size_t count) {
  std::vector<uint32_t> unit_starts;
  if (kind == ShingleKind::kWord) {
    unit_starts = t.starts;
  } else {
    for (size_t i = 0; i < t.text.size(); ++i) {
      if ((static_cast<unsigned char>(t.text[i]) & 0xC0) != 0x80)
        unit_starts.push_back(i);
    }
  }
  const size_t n = unit_starts.size();
  std::vector<std::pair<uint32_t, uint32_t>> spans;
  const uint32_t size = static_cast<uint32_t>(t.text.size());
  if (count == 1 && n <= k) return {{0, size}};
  for (size_t i = 0; i < count && i + k <= n; ++i) {
    uint32_t end;
    if (kind == ShingleKind::kWord) {
      end = t.TokenEnd(i + k - 1);
    } else {
      end = i + k < n ? unit_starts[i + k] : size;
    }
    spans.emplace_back(unit_starts[i], end);
  }
  return spans;
}

Shingled Shingle(const SketchScheme& s, std::string_view raw) {
  Shingled out;
  Normalizer normalizer;
  normalizer.Normalize(raw, &out.text);
  ShingleHashes(out.text, s.shingle_kind, s.shingle_size, s.seed, &out.hashes);
  out.spans = Spans(out.text, s.shingle_kind, static_cast<size_t>(s.shingle_size),
                    out.hashes.size());
  return out;
}

std::vector<TextRun> Runs(const Shingled& x, const std::unordered_set<uint64_t>& other) {
  std::vector<bool> covered(x.text.text.size(), false);
  for (size_t i = 0; i < x.hashes.size() && i < x.spans.size(); ++i) {
    if (!other.count(x.hashes[i])) continue;
    for (uint32_t b = x.spans[i].first; b < x.spans[i].second; ++b) covered[b] = true;
  }
  std::vector<TextRun> runs;
  const std::string& t = x.text.text;
  for (size_t i = 0; i < t.size();) {
    size_t j = i;
    while (j < t.size() && covered[j] == covered[i]) ++j;
    runs.push_back({t.substr(i, j - i), static_cast<bool>(covered[i])});
    i = j;
  }
  return runs;
}

}  // namespace

std::vector<uint64_t> ShingleSetOfText(const SketchScheme& scheme,
                                       std::string_view text) {
  Normalizer normalizer;
  NormalizedText normalized;
  normalizer.Normalize(text, &normalized);
  return ShingleSet(normalized, scheme.shingle_kind, scheme.shingle_size, scheme.seed);
}

SharedShingles MarkSharedShingles(const SketchScheme& scheme, std::string_view a,
                                  std::string_view b) {
  const Shingled sa = Shingle(scheme, a), sb = Shingle(scheme, b);
  const std::unordered_set<uint64_t> set_a(sa.hashes.begin(), sa.hashes.end());
  const std::unordered_set<uint64_t> set_b(sb.hashes.begin(), sb.hashes.end());
  SharedShingles r;
  r.shingles_a = set_a.size();
  r.shingles_b = set_b.size();
  for (uint64_t h : set_a) r.shared += set_b.count(h);
  const uint64_t uni = r.shingles_a + r.shingles_b - r.shared;
  r.jaccard = uni == 0 ? 1.0 : static_cast<double>(r.shared) / static_cast<double>(uni);
  r.runs_a = Runs(sa, set_b);
  r.runs_b = Runs(sb, set_a);
  return r;
}

}  // namespace shingleton
