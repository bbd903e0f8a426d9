// Keep/drop manifests: the job's decisions as JSON Lines, in input order.
//
//   keep.jsonl  {"id": ..., "cluster": "<16 hex>", "cluster_size": N}
//   drop.jsonl  {"id": ..., "duplicate_of": <kept id>, "cluster": "<16 hex>",
//                "similarity": <estimated Jaccard to the kept document>,
//                "reason": "exact" | "near" | "url" | "reference-exact" | "reference-near",
//                "reference": <generation name, only for reference drops>}
// exact: identical normalised text; near: verified LSH similarity; url: the same
// normalised URL as a reference document (a re-crawl); reference-*: duplicates of
// a document of a frozen reference generation, which always wins.
// The cluster label is the kept document's 64-bit key in hex: stable across runs
// and independent of shard, thread and input order. Every document appears in
// exactly one of the two files.
//
// Thread safety: one owner.
#pragma once

#include <memory>
#include <string>
#include <vector>

#include "index/atomic_file.h"
#include "index/doc_table.h"
#include "index/reference_set.h"

namespace shingleton {

std::string ClusterLabel(uint64_t kept_key);

// One line of a manifest: a decision with the ids resolved.
struct ManifestRow {
  std::string id;
  std::string duplicate_of;  // empty when kept
  uint64_t cluster = 0;      // the kept document's key
  uint32_t cluster_size = 1;
  float similarity = 1;
  DropReason reason = DropReason::kNone;  // why it was dropped (kNone when kept)
  std::string reference;                  // the generation it duplicates, if any
  bool kept() const { return duplicate_of.empty(); }
};

// Rows in table order. REQUIRES: decisions[i] belongs to docs.doc(i).
std::vector<ManifestRow> ManifestRows(const DocTable& docs, const std::vector<Decision>& decisions);

class ManifestWriter {
 public:
  // Writes both files to temporaries in `dir` (invisible until Commit()), rows in order.
  Status Prepare(const std::string& dir, const std::vector<ManifestRow>& rows);
  // Renames both into place.
  Status Commit();

 private:
  std::unique_ptr<AtomicFile> keep_, drop_;
};

}  // namespace shingleton
