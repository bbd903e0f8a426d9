// Candidate verification: the documents of one LSH bucket -> verified edges.
//
// LSH is tuned for recall; precision comes from here: a pair becomes an edge only
// when the estimated Jaccard of the full signatures is >= threshold.
// Buckets up to `all_pairs_limit` members check every pair. Larger buckets (a page
// copied thousands of times) must not cost O(m^2): their members, in key order,
// are compared only with the bucket's leaders (at most `max_leaders`); a member
// similar to no leader becomes a leader while there is room. Cost O(m * max_leaders).
// Members are processed in key order, so the edge set is a function of the bucket's
// contents, never of arrival order or threads.
//
// Thread safety: a BucketVerifier is immutable; Verify() may run concurrently if
// the lookup function is thread-safe.
#pragma once

#include <cstddef>
#include <cstdint>
#include <functional>
#include <vector>

#include "index/document.h"
#include "index/status.h"

namespace shingleton {

struct VerifyOptions {
  // Minimum estimated Jaccard for an edge. Default: 0.8.
  double threshold = 0.8;
  // Buckets with at most this many members verify all pairs. Default: 64.
  size_t all_pairs_limit = 64;
  // Leaders kept per larger bucket. Default: 16.
  size_t max_leaders = 16;
};

// Returns the signature of a document key (num_hashes values), or nullptr if unknown.
using SignatureLookup = std::function<const uint32_t*(uint64_t key)>;

class BucketVerifier {
 public:
  BucketVerifier(const VerifyOptions& options, int num_hashes, SignatureLookup lookup);

  // Appends the verified edges among `members` (sorted ascending, distinct) to *out
  // and returns the number of signature comparisons made.
  size_t Verify(int band, const std::vector<uint64_t>& members, std::vector<Edge>* out) const;

 private:
  bool Check(uint64_t x, const uint32_t* sx, uint64_t y, const uint32_t* sy, int band,
             std::vector<Edge>* out) const;
  size_t VerifyAllPairs(int band, const std::vector<uint64_t>& members, const std::vector<const uint32_t*>& sigs,
                        std::vector<Edge>* out) const;
  size_t VerifyWithLeaders(int band, const std::vector<uint64_t>& members,
                           const std::vector<const uint32_t*>& sigs, std::vector<Edge>* out) const;

  VerifyOptions options_;
  int num_hashes_;
  SignatureLookup lookup_;
};

// Sorts edges by pair and keeps one per pair (the one from the lowest band).
void DeduplicateEdges(std::vector<Edge>* edges);

// Online queries: "which indexed documents are near-duplicates of these?".
struct QueryHit {
  uint64_t key = 0;
  float similarity = 0;  // estimated Jaccard
};

// For `m` query documents (sigs: m x k values, buckets: m x b, in the index's
// scheme), the indexed documents sharing a bucket with each query whose estimated
// Jaccard is >= threshold, ascending by key: (*out)[i] for query i. Batched: one
// sorted pass over all m x b buckets (IndexStore::BucketMembersOf) and one MultiGet
// of every distinct candidate's signature (IndexStore::GetSignatures), so the cost
// per query falls with the batch size. A candidate without a stored signature is
// skipped (a shard stores only the signatures of documents it has postings of).
// Thread safety: as the store's const methods.
Status QueryIndex(const class IndexStore& store, const uint32_t* sigs, const uint64_t* buckets, size_t m,
                  double threshold, std::vector<std::vector<QueryHit>>* out);

}  // namespace shingleton
