#include "index/candidates.h"

#include <algorithm>

#include "index/minhash.h"

namespace shingleton {

BucketVerifier::BucketVerifier(const VerifyOptions& options, int num_hashes, SignatureLookup lookup)
    : options_(options), num_hashes_(num_hashes), lookup_(std::move(lookup)) {}

bool BucketVerifier::Check(uint64_t x, uint64_t y, int band, std::vector<Edge>* out) const {
  const uint32_t* sx = lookup_(x);
  const uint32_t* sy = lookup_(y);
  if (!sx || !sy) return false;
  const double sim = EstimateJaccard(sx, sy, num_hashes_);
  if (sim < options_.threshold) return false;
  Edge e;
  e.a = std::min(x, y);
  e.b = std::max(x, y);
  e.similarity = static_cast<float>(sim);
  e.band = static_cast<uint16_t>(band);
  out->push_back(e);
  return true;
}

size_t BucketVerifier::Verify(int band, const std::vector<uint64_t>& members,
                              std::vector<Edge>* out) const {
  if (members.size() < 2) return 0;
  if (members.size() <= options_.all_pairs_limit) return VerifyAllPairs(band, members, out);
  return VerifyWithLeaders(band, members, out);
}

size_t BucketVerifier::VerifyAllPairs(int band, const std::vector<uint64_t>& members,
                                      std::vector<Edge>* out) const {
  size_t comparisons = 0;
  for (size_t i = 0; i < members.size(); ++i) {
    for (size_t j = i + 1; j < members.size(); ++j, ++comparisons) {
      Check(members[i], members[j], band, out);
    }
  }
  return comparisons;
}

size_t BucketVerifier::VerifyWithLeaders(int band, const std::vector<uint64_t>& members,
                                         std::vector<Edge>* out) const {
  std::vector<uint64_t> leaders;
  size_t comparisons = 0;
  for (uint64_t m : members) {
    bool joined = false;
    for (uint64_t leader : leaders) {
      ++comparisons;
      joined |= Check(m, leader, band, out);
    }
    if (!joined && leaders.size() < options_.max_leaders) leaders.push_back(m);
  }
  return comparisons;
}

void DeduplicateEdges(std::vector<Edge>* edges) {
  std::sort(edges->begin(), edges->end(), [](const Edge& x, const Edge& y) {
    if (!x.SamePair(y)) return x < y;
    return x.band < y.band;
  });
  edges->erase(std::unique(edges->begin(), edges->end(),
                           [](const Edge& x, const Edge& y) { return x.SamePair(y); }),
               edges->end());
}

}  // namespace shingleton
