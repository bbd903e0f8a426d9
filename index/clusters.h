// Cluster resolution: verified edges -> clusters (union-find) -> one decision per
// document, with the kept document chosen by the keep policy.
//
// The partition is the connected components of the edge set; the decisions are a
// function of (documents, edges, policy) only. Each dropped document's similarity
// is the estimated Jaccard of its signature with the kept document's.
//
// Thread safety: pure function.
#pragma once

#include <vector>

#include "index/doc_table.h"
#include "index/keep_policy.h"

namespace shingleton {

// Returns decisions[i] for docs.doc(i). Edges whose keys are not in `docs` are
// ignored. REQUIRES: docs.size() < 2^32.
std::vector<Decision> ResolveClusters(const DocTable& docs, const std::vector<Edge>& edges,
                                      const KeepPolicy& policy);

}  // namespace shingleton
