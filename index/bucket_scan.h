// Bucket scans: every bucket of every band of an index -> verified edges.
//
// The one candidate-generation pass: the embedded job runs it on its whole index,
// each shard runs it on its part (a bucket is whole on one shard, partition.h), and
// the union of the shards' edges, deduplicated by pair, is the embedded job's edge set.
//
// The postings are read once (ScanBands: one sequential scan per band, bands in
// parallel). What verification needs — the buckets with >= 2 members — is kept in
// memory (8 bytes per member); each band's full postings are also offered to a
// visitor while they are in memory (the reference merge uses them), so a job
// against references reads its postings once, not once per use.
// Results do not depend on the thread count.
//
// Thread safety: blocks; uses `threads` threads.
#pragma once

#include <functional>
#include <utility>
#include <vector>

#include "index/candidates.h"
#include "index/index_store.h"

namespace shingleton {

// The postings of one band: (bucket, doc key), ascending.
using BandPostings = std::vector<std::pair<uint64_t, uint64_t>>;
StatusOr<BandPostings> ReadBandPostings(const IndexStore& store, int band);

// The buckets with >= 2 members, per band: bucket j of band b holds
// members[b][starts[b][j] .. starts[b][j + 1]) (ascending keys).
struct SharedBuckets {
  std::vector<std::vector<uint64_t>> members;
  std::vector<std::vector<uint32_t>> starts;
  size_t buckets() const;
  // Every member of every shared bucket, sorted and distinct: the documents whose
  // signatures verification reads.
  std::vector<uint64_t> Keys() const;
};

// Called with each band's full postings, from the scanning threads (distinct bands
// concurrently).
using BandVisitor = std::function<Status(int band, const BandPostings& postings)>;

// One scan of every band; `visit` (may be empty) sees every band's postings.
StatusOr<SharedBuckets> ScanBands(const IndexStore& store, int threads, const BandVisitor& visit);

// Reads the signatures of `keys` (sorted, distinct) in MultiGet batches on
// `threads` threads and calls fn(key, signature) for each, in key order, on the
// calling thread. Corruption names a key without a signature.
Status ReadSignaturesInOrder(const IndexStore& store, const std::vector<uint64_t>& keys, int threads,
                             const std::function<Status(uint64_t key, const uint32_t* sig)>& fn);

struct EdgeScan {
  std::vector<Edge> edges;  // distinct pairs, sorted by (a, b), lowest band kept
  uint64_t buckets_checked = 0;  // buckets with >= 2 documents
  uint64_t comparisons = 0;
};

// Verifies every shared bucket (bands in parallel).
StatusOr<EdgeScan> VerifySharedBuckets(const SharedBuckets& shared, const VerifyOptions& options, int num_hashes,
                                       const SignatureLookup& lookup, int threads);

}  // namespace shingleton
