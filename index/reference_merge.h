// Reference merge: the near-duplicate candidates between a job's documents and one
// frozen generation (or one shard's part of it), found by merging the two indexes'
// postings in key order — sequential reads of both, not one point lookup per
// document and band.
//
// For each band b (bands in parallel): the job's postings of band b and the
// generation's, both stored sorted by bucket, are merged; every (doc, ref) pair
// sharing a bucket in some band is a candidate. Each distinct candidate is verified
// once on the two signatures, read in sorted batches (MultiGet) from the two
// stores, and kept when its estimated Jaccard is at least the threshold. The result
// is exactly the set the point-lookup path (ReferenceSet::PointNearCandidates) finds
// for the documents that have postings: a pair is a candidate iff it shares a
// bucket in at least one band, whichever way the buckets are visited.
//
// Used by the embedded job (its own index, whole generation) and by every shard (its
// part of the job, its part of the generation).
//
// Memory: the job's postings of the bands in flight (16 bytes each, one band per
// thread), the candidate pairs (16 bytes each), and the signatures of one batch.
// Thread safety: pure function of its arguments; the stores are only read.
#pragma once

#include <cstdint>
#include <utility>
#include <vector>

#include "index/bucket_scan.h"
#include "index/index_store.h"
#include "index/key_set.h"
#include "index/status.h"

namespace shingleton {

// A verified job-document / reference-document pair.
struct ReferenceHit {
  uint64_t doc = 0;  // the job's document key
  uint64_t ref = 0;  // the reference document key
  float similarity = 0;
};

// The merge of one generation, fed band by band (so a job that scans its postings
// once for its own buckets can offer each band here while it is in memory).
class ReferenceMerger {
 public:
  // `job` holds the signatures of the job's documents; both stores must outlive
  // the merger and have the same scheme. Documents in `settled` (may be null) already have a better match than any near one (an exact copy or a
  // URL revisit in a generation): their pairs are neither collected nor verified.
  ReferenceMerger(const IndexStore& reference, const IndexStore& job, double threshold,
                  const KeySet* settled = nullptr);
  // Merges one band of the job's postings ((bucket, doc) ascending) with the
  // generation's. Distinct bands may be added concurrently; each band once.
  Status AddBand(int band, const BandPostings& job_postings);
  // Verifies every distinct candidate pair of all bands added; the hits with
  // similarity >= threshold, sorted by (doc, ref), each pair once.
  StatusOr<std::vector<ReferenceHit>> Finish(int threads);

 private:
  const IndexStore& reference_;
  const IndexStore& job_;
  double threshold_;
  const KeySet* settled_;
  std::vector<std::vector<std::pair<uint64_t, uint64_t>>> per_band_;  // (ref, doc), sorted
};

// Reads every band of the job's postings and merges it: the hits of `job`
// against `reference`; the same for any `threads`. Mismatch if the two stores
// have different schemes; Corruption if a posting's document has no signature.
StatusOr<std::vector<ReferenceHit>> MergeWithReference(const IndexStore& reference, const IndexStore& job,
                                                       double threshold, int threads);

}  // namespace shingleton
