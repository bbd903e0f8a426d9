// Reference resolution: applying frozen reference generations to a job's
// documents and decisions — the same three steps for the embedded job and the
// coordinator:
//   1. MatchReferences: the best reference match of every document — near
//      candidates found (FindNearHits: key-order merge or point lookups; in the
//      service the shards send them, AddShardHits), then resolved per document
//      (ResolveReferences: URL, exact content, best near candidate);
//   2. DropEdgesOfMatched: matched documents leave the crawl's own clusters;
//   3. ApplyReferenceMatches: each matched document is dropped in favour of its
//      reference document (reference documents always win).
//
// Thread safety: pure functions over their arguments.
#pragma once

#include <string>
#include <vector>

#include "index/doc_table.h"
#include "index/manifest.h"
#include "index/reference_merge.h"
#include "index/reference_set.h"

namespace shingleton {

// How near candidates in a generation are found. Both give the same candidates.
enum class ReferenceLookup {
  kMerge,  // the job's band keys sorted and merged with the generation's postings
           // (sequential reads; the default)
  kPoint,  // one bucket lookup per document and band (fewer reads for a small job
           // against a large generation)
};
// "merge" / "point"; InvalidArgument otherwise.
StatusOr<ReferenceLookup> ParseReferenceLookup(const std::string& name);

struct ReferenceMatchOptions {
  double threshold = 0.8;   // the job's similarity threshold
  bool url_revisits = false;
  int threads = 1;
  ReferenceLookup lookup = ReferenceLookup::kMerge;
};

// Per document of `table` (same index), its verified near candidates in every
// generation, each list sorted by (generation, key).
using NearHits = std::vector<std::vector<NearHit>>;
StatusOr<NearHits> FindNearHits(const ReferenceSet& refs, const DocTable& table,
                                const ReferenceMatchOptions& options);
// Adds hits of generation `generation` found elsewhere (a shard's part) to `near`
// (sized to the table). Corruption if a hit names a document not in the table.
Status AddShardHits(const DocTable& table, int generation, const std::vector<ReferenceHit>& hits,
                    NearHits* near);
// Sorts every list by (generation, key) and removes repeats (a pair reported by
// two shards).
void NormalizeNearHits(NearHits* near);

// The best match of every document. `normalized_urls` is empty or has one
// (possibly empty) entry per document.
StatusOr<std::vector<ReferenceMatch>> ResolveReferences(const ReferenceSet& refs, const DocTable& table,
                                                        const std::vector<std::string>& normalized_urls,
                                                        bool url_revisits, const NearHits& near,
                                                        int threads);
// FindNearHits then ResolveReferences.
StatusOr<std::vector<ReferenceMatch>> MatchReferences(const ReferenceSet& refs, const DocTable& table,
                                                      const std::vector<std::string>& normalized_urls,
                                                      const ReferenceMatchOptions& options);

void DropEdgesOfMatched(const DocTable& table, const std::vector<ReferenceMatch>& matches,
                        std::vector<Edge>* edges);

void ApplyReferenceMatches(const ReferenceSet& refs, const std::vector<ReferenceMatch>& matches,
                           std::vector<Decision>* decisions, std::vector<ManifestRow>* rows);

}  // namespace shingleton
