#include "index/clusters.h"

#include "index/minhash.h"
#include "index/union_find.h"

namespace shingleton {

std::vector<Decision> ResolveClusters(const DocTable& docs, const std::vector<Edge>& edges,
                                      const KeepPolicy& policy) {
  const size_t n = docs.size();
  UnionFind uf(n);
  for (const Edge& e : edges) {
    int64_t a = docs.IndexOf(e.a), b = docs.IndexOf(e.b);
    if (a >= 0 && b >= 0) uf.Union(static_cast<size_t>(a), static_cast<size_t>(b));
  }
  // The preferred member of each set, indexed by root.
  std::vector<uint32_t> best(n, UINT32_MAX);
  for (size_t i = 0; i < n; ++i) {
    size_t root = uf.Find(i);
    if (best[root] == UINT32_MAX || policy.Prefer(docs.doc(i), docs.doc(best[root]))) {
      best[root] = static_cast<uint32_t>(i);
    }
  }
  std::vector<Decision> out(n);
  for (size_t i = 0; i < n; ++i) {
    const size_t root = uf.Find(i);
    const size_t kept = best[root];
    Decision& d = out[i];
    d.key = docs.key(i);  // key(), not doc(): doc() builds the strings too
    d.kept_key = docs.key(kept);
    d.cluster = d.kept_key;
    d.cluster_size = static_cast<uint32_t>(uf.SetSize(i));
    d.similarity = i == kept ? 1.0f
                             : static_cast<float>(EstimateJaccard(docs.signature(i),
                                                                  docs.signature(kept),
                                                                  docs.num_hashes()));
  }
  return out;
}

}  // namespace shingleton
