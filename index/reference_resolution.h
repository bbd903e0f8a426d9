// Reference resolution: applying frozen reference generations to a job's
// documents and decisions — the same steps for the embedded job and the
// coordinator:
//   1. the candidates of every document (ReferenceCandidates): near ones
//      (AddNearHits of a key-order merge of the job's postings with each
//      generation, reference_merge.h — in the service the shards run it on their
//      parts — or LookUpNearCandidates), exact copies and URL revisits
//      (AddExactCandidates: a key-order merge of content hashes and URLs, or
//      point lookups);
//   2. ResolveReferences: the best candidate of each document: a URL revisit over
//      an exact copy over a near one; then the higher similarity, the earlier
//      generation (on the command line), the smaller id;
//   3. DropEdgesOfMatched: matched documents leave the crawl's own clusters;
//   4. ApplyReferenceMatches: each matched document is dropped in favour of its
//      reference document (reference documents always win).
// Merge and point lookups give the same candidates, so the same decisions.
//
// Thread safety: pure functions over their arguments.
#pragma once

#include <string>
#include <vector>

#include "index/doc_table.h"
#include "index/document.h"
#include "index/manifest.h"
#include "index/reference_merge.h"
#include "index/reference_set.h"

namespace shingleton {

// How candidates in a generation are found. Both give the same candidates.
enum class ReferenceLookup {
  kMerge,  // sorted job keys merged with the generation's records (sequential reads;
           // the default)
  kPoint,  // lookups per document (fewer reads for a small job against a large
           // generation)
};
// "merge" / "point"; InvalidArgument otherwise.
StatusOr<ReferenceLookup> ParseReferenceLookup(const std::string& name);

struct ReferenceMatchOptions {
  double threshold = 0.8;   // the job's similarity threshold
  bool url_revisits = false;
  int threads = 1;
  ReferenceLookup lookup = ReferenceLookup::kMerge;
};

// Per document of a job's table (same order): its reference candidates.
using ReferenceCandidates = std::vector<std::vector<ReferenceCandidate>>;

// Near candidates of every document by point lookups of the table's signatures
// in every generation. REQUIRES: the table holds every signature.
StatusOr<ReferenceCandidates> LookUpNearCandidates(const ReferenceSet& refs, const DocTable& table, double threshold,
                                                   int threads);
// Adds near hits of generation `generation` found by a merge (ReferenceMerger, the
// embedded job; MatchReference, a shard's part) to *candidates (sized to the
// table). Corruption if a hit names a document not in the table.
Status AddNearHits(const DocTable& table, int generation, const std::vector<ReferenceHit>& hits,
                   ReferenceCandidates* candidates);
// A document without postings of its own — an exact copy within the crawl, one
// end of an `exact_edges` pair — gets the near candidates of the document it
// copies (identical text, identical signature).
void ShareWithCopies(const DocTable& table, const std::vector<Edge>& exact_edges, ReferenceCandidates* candidates);
// Adds exact-copy candidates and, with url_revisits, URL revisits. `normalized_urls`
// is empty or has one (possibly empty) entry per document.
Status AddExactCandidates(const ReferenceSet& refs, const DocTable& table,
                          const std::vector<std::string>& normalized_urls, const ReferenceMatchOptions& options,
                          ReferenceCandidates* candidates);

// The best match of every document (the order in step 2; candidates in any
// order, repeats allowed); not found for a document without candidates. The ids
// of the finalists are read in sorted batches.
StatusOr<std::vector<ReferenceMatch>> ResolveReferences(const ReferenceSet& refs,
                                                        const ReferenceCandidates& candidates, int threads);
void DropEdgesOfMatched(const DocTable& table, const std::vector<ReferenceMatch>& matches,
                        std::vector<Edge>* edges);

void ApplyReferenceMatches(const ReferenceSet& refs, const std::vector<ReferenceMatch>& matches,
                           std::vector<Decision>* decisions, std::vector<ManifestRow>* rows);

}  // namespace shingleton
