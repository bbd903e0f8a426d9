// Reference merge: the near-duplicate candidates between a job's documents and one
// frozen generation (or one shard's part of it), found by merging sorted band keys
// with the generation's postings in key order — sequential reads of the reference,
// not one point lookup per document and band.
//
// For each band b: the job's (bucket, doc) pairs of band b, sorted, are merged with
// the generation's postings of band b (stored sorted by bucket). Every (doc, ref)
// pair sharing a bucket in some band is a candidate; each distinct candidate is
// verified once on the signatures, and kept when its estimated Jaccard is at least
// the threshold. The result is exactly the set the point-lookup path
// (ReferenceSet::PointNearHits) finds: a pair is a candidate iff it shares a bucket
// in at least one band, whichever way the buckets are visited.
//
// Used by the embedded job (job keys from its DocTable, whole generation) and by
// every shard (job keys from its own postings, its part of the generation).
//
// Memory: one band of the job's keys at a time, plus the candidate pairs.
// Thread safety: pure function of its arguments; the stores are only read.
#pragma once

#include <cstdint>
#include <functional>
#include <utility>
#include <vector>

#include "index/doc_table.h"
#include "index/index_store.h"
#include "index/scheme.h"
#include "index/status.h"

namespace shingleton {

// A verified job-document / reference-document pair.
struct ReferenceHit {
  uint64_t doc = 0;  // the job's document key
  uint64_t ref = 0;  // the reference document key
  float similarity = 0;
};

// (bucket, doc key) pairs of one band, sorted ascending.
using BandKeys = std::vector<std::pair<uint64_t, uint64_t>>;
using BandKeysFn = std::function<StatusOr<BandKeys>(int band)>;
// The signature of a job document (num_hashes values), or nullptr if unknown.
using JobSignatureFn = std::function<const uint32_t*(uint64_t key)>;

// The job side from documents in memory: every document in every band.
BandKeysFn TableBandKeys(const DocTable& table, const SketchScheme& scheme);
// The job side from an index's postings (a shard holds only the buckets it owns).
BandKeysFn StoreBandKeys(const IndexStore& store);

// Hits of the job against `reference` with similarity >= threshold, sorted by
// (doc, ref), each pair once. `reference` must have the job's scheme.
StatusOr<std::vector<ReferenceHit>> MergeWithReference(const IndexStore& reference,
                                                       const BandKeysFn& job_keys,
                                                       const JobSignatureFn& job_signature,
                                                       double threshold);

}  // namespace shingleton
