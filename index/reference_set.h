// Frozen reference generations: the documents kept by earlier jobs, which a new
// crawl is deduplicated against and which never change underneath it.
//
// On disk a generation is a directory:
//   REF/db/               a compact, read-only IndexStore (kept documents only:
//                         metadata, signatures, postings, content and URL lookups)
//   REF/generation.json   {"format": "shingleton-generation/1", "name", "scheme",
//                          "documents", "created", "source", "checksum"}
// `checksum` is XXH3-128 over REF/db's files (names, sizes and bytes, in name order),
// so anyone can check that a generation is unchanged. Generations are opened
// read-only, without an info log, so no job alters a byte of them.
//
// Matching a new document (ResolveReferences, reference_resolution.h), in order: its normalised URL in a
// generation (a re-crawl; only when asked), identical normalised text (content
// hash), then LSH candidates verified on the signature (>= threshold). The best
// match wins: highest similarity, then the earlier generation on the command line,
// then the smaller id. The candidates come from point lookups (PointNearCandidates,
// PointExactCandidates), from key-order merges (reference_merge.h,
// reference_resolution.h) or, in the service, from the shards that hold the
// generation's postings; all give the same candidates.
//
// Thread safety: a ReferenceSet is immutable once open; Match() may run concurrently.
#pragma once

#include <memory>
#include <string>
#include <vector>

#include "index/document.h"
#include "index/index_store.h"
#include "index/scheme.h"

namespace shingleton {

enum class DropReason { kNone, kExact, kNear, kUrl, kReferenceExact, kReferenceNear };
const char* DropReasonName(DropReason r);
// The inverse of DropReasonName; kNone for unknown names.
DropReason ParseDropReason(const std::string& name);

struct GenerationRecord {
  std::string name;
  std::string scheme;
  uint64_t documents = 0;
  std::string created;   // UTC, ISO 8601
  std::string source;    // the job's index it was frozen from
  std::string checksum;  // 32 hex digits
};

StatusOr<GenerationRecord> ReadGenerationRecord(const std::string& ref_dir);
// XXH3-128 (hex) over the regular files of `dir`: names, sizes and bytes in name order.
StatusOr<std::string> ChecksumDirectory(const std::string& dir);
// After a frozen store is built and closed: removes its info logs and returns its
// checksum (ChecksumDirectory).
StatusOr<std::string> SealFrozenStore(const std::string& db_dir);

struct FreezeOptions {
  std::string index_path;  // the finished job's index
  std::string out_dir;     // the new generation (must not exist)
  std::string name;        // default: the out_dir's last component
  bool all_documents = false;  // include dropped documents too (default: kept only)
};
// Writes a new generation; returns its record.
StatusOr<GenerationRecord> FreezeGeneration(const FreezeOptions& options);

struct ReferenceMatch {
  int generation = -1;  // -1: no match
  uint64_t key = 0;
  std::string id;
  float similarity = 0;
  DropReason reason = DropReason::kNone;
  bool found() const { return generation >= 0; }
};

// A reference document a job document may be dropped for: a URL revisit
// (kUrl, similarity 1), an identical normalised text (kReferenceExact, 1) or a
// near candidate verified on the signatures (kReferenceNear, its estimate).
struct ReferenceCandidate {
  int generation = 0;
  uint64_t key = 0;
  float similarity = 0;
  DropReason reason = DropReason::kReferenceNear;
};

class ReferenceSet {
 public:
  // Opens every generation; each must have the job's scheme (Mismatch otherwise).
  static StatusOr<std::unique_ptr<ReferenceSet>> Open(const std::vector<std::string>& dirs,
                                                      const SketchScheme& scheme);

  // Near candidates of one signature by point lookups of its bucket in every band
  // of every generation, verified (>= threshold); sorted by (generation, key).
  StatusOr<std::vector<ReferenceCandidate>> PointNearCandidates(const uint32_t* sig, double threshold) const;
  // Exact-copy candidates of one document (and URL revisits of `normalized_url`
  // when url_revisits and it is not empty) by point lookups; appended to *out.
  Status PointExactCandidates(const DocumentMeta& doc, const std::string& normalized_url, bool url_revisits,
                              std::vector<ReferenceCandidate>* out) const;

  size_t size() const { return generations_.size(); }
  const GenerationRecord& record(int g) const { return generations_[g].record; }
  const IndexStore& store(int g) const { return *generations_[g].store; }
  const SketchScheme& scheme() const { return scheme_; }

 private:
  struct Generation {
    GenerationRecord record;
    std::unique_ptr<IndexStore> store;
  };
  SketchScheme scheme_;
  std::vector<Generation> generations_;
};

}  // namespace shingleton
