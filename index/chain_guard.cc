#include "index/chain_guard.h"

#include <algorithm>
#include <map>

#include "index/minhash.h"

namespace shingleton {
namespace {

// Re-decides one cluster (dense indices); returns what changed.
void GuardCluster(const DocTable& docs, const KeepPolicy& policy, double bound,
                  std::vector<uint32_t> members, std::vector<Decision>* decisions,
                  ChainGuardResult* result) {
  std::sort(members.begin(), members.end(), [&](uint32_t a, uint32_t b) {
    return policy.Prefer(docs.doc(a), docs.doc(b));
  });
  std::vector<uint32_t> kept;
  std::vector<uint32_t> owner(members.size());
  for (size_t m = 0; m < members.size(); ++m) {
    const uint32_t i = members[m];
    double best = -1;
    size_t best_k = 0;
    for (size_t k = 0; k < kept.size(); ++k) {
      const double s =
          EstimateJaccard(docs.signature(i), docs.signature(kept[k]), docs.num_hashes());
      if (s > best) best = s, best_k = k;
    }
    Decision& d = (*decisions)[i];
    if (best >= bound) {
      owner[m] = kept[best_k];
      const uint64_t new_kept = docs.doc(kept[best_k]).key;
      if (new_kept != d.kept_key) ++result->members_moved;
      d.kept_key = d.cluster = new_kept;
      d.similarity = static_cast<float>(best);
    } else {
      owner[m] = i;
      if (!kept.empty()) ++result->members_kept;
      kept.push_back(i);
      d.kept_key = d.cluster = docs.doc(i).key;
      d.similarity = 1.0f;
    }
  }
  std::map<uint32_t, uint32_t> sizes;
  for (uint32_t o : owner) ++sizes[o];
  for (size_t m = 0; m < members.size(); ++m)
    (*decisions)[members[m]].cluster_size = sizes[owner[m]];
}

}  // namespace

ChainGuardResult GuardChains(const DocTable& docs, const KeepPolicy& policy, double bound,
                             std::vector<Decision>* decisions) {
  ChainGuardResult result;
  std::map<uint64_t, std::vector<uint32_t>> clusters;  // label -> members, in table order
  std::map<uint64_t, double> spread;
  for (size_t i = 0; i < decisions->size(); ++i) {
    const Decision& d = (*decisions)[i];
    if (d.cluster_size < 2 || d.for_reference) continue;
    clusters[d.cluster].push_back(static_cast<uint32_t>(i));
    auto [it, fresh] = spread.emplace(d.cluster, d.similarity);
    if (!fresh) it->second = std::min<double>(it->second, d.similarity);
  }
  for (auto& [label, members] : clusters) {
    if (!(spread[label] < bound)) continue;
    ++result.clusters_guarded;
    GuardCluster(docs, policy, bound, std::move(members), decisions, &result);
  }
  return result;
}

}  // namespace shingleton
