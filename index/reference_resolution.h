// Reference resolution: applying frozen reference generations to a job's
// documents and decisions — the same three steps for the embedded job and the
// coordinator:
//   1. MatchReferences: the best reference match of every document (parallel);
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
#include "index/reference_set.h"

namespace shingleton {

// `normalized_urls` is empty or has one (possibly empty) entry per document.
StatusOr<std::vector<ReferenceMatch>> MatchReferences(const ReferenceSet& refs, const DocTable& table,
                                                      const std::vector<std::string>& normalized_urls,
                                                      double threshold, bool url_revisits, int threads);

void DropEdgesOfMatched(const DocTable& table, const std::vector<ReferenceMatch>& matches,
                        std::vector<Edge>* edges);

void ApplyReferenceMatches(const ReferenceSet& refs, const std::vector<ReferenceMatch>& matches,
                           std::vector<Decision>* decisions, std::vector<ManifestRow>* rows);

}  // namespace shingleton
