// Chain guard: union-find joins A≈B≈C into one cluster although A and C may be far
// apart, so a drop can be unlike its own duplicate_of. GuardChains repairs that
// after ResolveClusters (clusters.h).
//
// For every cluster whose spread (lowest similarity of a member to its kept
// document) is below `bound`: its members are taken in keep-policy order (the
// policy's own tie-break by id included); the first is kept; each next member is
// dropped as a duplicate of the kept document it is most similar to (estimated
// Jaccard of the signatures; ties to the earlier kept one) when that similarity is
// >= bound, and is kept otherwise (later members may then join it). Afterwards
// every dropped document of a guarded cluster has similarity >= bound to its own
// kept document. Clusters with spread >= bound are left as they are, so with no
// chain the decisions equal ResolveClusters'. A new cluster's label is its kept key.
// Deterministic: a function of the documents, the decisions and the policy.
//
// Thread safety: pure function.
#pragma once

#include <cstdint>
#include <vector>

#include "index/doc_table.h"
#include "index/keep_policy.h"

namespace shingleton {

struct ChainGuardResult {
  uint64_t clusters_guarded = 0;  // clusters whose spread was below the bound
  uint64_t members_kept = 0;      // members kept because no kept document was similar
  uint64_t members_moved = 0;     // drops re-assigned to another kept document
};

// REQUIRES: (*decisions)[i] belongs to docs.doc(i) (as ResolveClusters returns them).
ChainGuardResult GuardChains(const DocTable& docs, const KeepPolicy& policy, double bound,
                             std::vector<Decision>* decisions);

}  // namespace shingleton
