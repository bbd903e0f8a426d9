// VerifyAllBuckets: every bucket of every band of an index -> verified edges.
//
// The one candidate-generation pass: the embedded job runs it on its whole index,
// each shard runs it on its part (a bucket is whole on one shard, partition.h), and
// the union of the shards' edges, deduplicated by pair, is the embedded job's edge set.
// Bands are scanned in parallel; the result does not depend on the thread count.
//
// Thread safety: blocks; uses `threads` threads.
#pragma once

#include <vector>

#include "index/candidates.h"
#include "index/index_store.h"

namespace shingleton {

struct EdgeScan {
  std::vector<Edge> edges;  // distinct pairs, sorted by (a, b), lowest band kept
  uint64_t buckets_checked = 0;  // buckets with >= 2 documents
  uint64_t comparisons = 0;
};

StatusOr<EdgeScan> VerifyAllBuckets(const IndexStore& store, const VerifyOptions& options,
                                    const SignatureLookup& lookup, int threads);

// Calls mark(key) for every member of every bucket with >= 2 members — the documents
// VerifyAllBuckets will look up — from `threads` threads at once (bands in parallel);
// a key is reported once per shared bucket it is in. Used to load only those
// signatures into memory before verifying.
Status ForEachKeyInSharedBuckets(const IndexStore& store, int threads,
                                 const std::function<void(uint64_t key)>& mark);

}  // namespace shingleton
