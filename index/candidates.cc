#include "index/candidates.h"

#include <algorithm>

#include "index/index_store.h"
#include "index/minhash.h"

namespace shingleton {

BucketVerifier::BucketVerifier(const VerifyOptions& options, int num_hashes, SignatureLookup lookup)
    : options_(options), num_hashes_(num_hashes), lookup_(std::move(lookup)) {}

bool BucketVerifier::Check(uint64_t x, const uint32_t* sx, uint64_t y, const uint32_t* sy, int band,
                           std::vector<Edge>* out) const {
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
  // Each member's signature is looked up once per bucket, not once per pair.
  std::vector<const uint32_t*> sigs(members.size());
  for (size_t i = 0; i < members.size(); ++i) sigs[i] = lookup_(members[i]);
  if (members.size() <= options_.all_pairs_limit) return VerifyAllPairs(band, members, sigs, out);
  return VerifyWithLeaders(band, members, sigs, out);
}

size_t BucketVerifier::VerifyAllPairs(int band, const std::vector<uint64_t>& members,
                                      const std::vector<const uint32_t*>& sigs, std::vector<Edge>* out) const {
  size_t comparisons = 0;
  for (size_t i = 0; i < members.size(); ++i) {
    for (size_t j = i + 1; j < members.size(); ++j, ++comparisons) {
      Check(members[i], sigs[i], members[j], sigs[j], band, out);
    }
  }
  return comparisons;
}

size_t BucketVerifier::VerifyWithLeaders(int band, const std::vector<uint64_t>& members,
                                         const std::vector<const uint32_t*>& sigs, std::vector<Edge>* out) const {
  std::vector<size_t> leaders;  // indices into members
  size_t comparisons = 0;
  for (size_t m = 0; m < members.size(); ++m) {
    bool joined = false;
    for (size_t leader : leaders) {
      ++comparisons;
      joined |= Check(members[m], sigs[m], members[leader], sigs[leader], band, out);
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

Status QueryIndex(const IndexStore& store, const uint32_t* sigs, const uint64_t* buckets, size_t m,
                  double threshold, std::vector<std::vector<QueryHit>>* out) {
  const int k = store.scheme().num_hashes, b = store.scheme().bands;
  std::vector<BucketRef> probes(m * b);
  for (size_t i = 0; i < m * b; ++i) probes[i] = {static_cast<int>(i % b), buckets[i]};
  std::vector<std::vector<uint64_t>> members;
  SHINGLETON_RETURN_IF_ERROR(store.BucketMembersOf(probes, &members));
  // Candidates of each query (distinct), then the distinct candidates of the batch.
  std::vector<std::vector<uint64_t>> per_query(m);
  std::vector<uint64_t> all;
  for (size_t i = 0; i < m; ++i) {
    std::vector<uint64_t>& c = per_query[i];
    for (int band = 0; band < b; ++band) {
      const auto& mem = members[i * b + band];
      c.insert(c.end(), mem.begin(), mem.end());
    }
    std::sort(c.begin(), c.end());
    c.erase(std::unique(c.begin(), c.end()), c.end());
    all.insert(all.end(), c.begin(), c.end());
  }
  std::sort(all.begin(), all.end());
  all.erase(std::unique(all.begin(), all.end()), all.end());
  std::vector<uint32_t> cand_sigs;
  std::vector<char> found;
  SHINGLETON_RETURN_IF_ERROR(store.GetSignatures(all, &cand_sigs, &found));
  out->assign(m, {});
  for (size_t i = 0; i < m; ++i) {
    for (uint64_t key : per_query[i]) {
      const size_t at = static_cast<size_t>(std::lower_bound(all.begin(), all.end(), key) - all.begin());
      if (!found[at]) continue;
      const double sim = EstimateJaccard(sigs + i * k, &cand_sigs[at * k], k);
      if (sim >= threshold) (*out)[i].push_back({key, static_cast<float>(sim)});
    }
  }
  return Status::Ok();
}

}  // namespace shingleton
