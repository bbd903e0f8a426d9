// Reference parts: a frozen generation cut into the pieces the shards of a service
// serve. Part i of N holds the generation's postings of every bucket that shard i
// owns (ShardOf(band, bucket, N) == i, the same rule the job's own postings follow)
// and the signatures of the documents in them — so each shard merges its part of
// the job with its part of the generation (reference_merge.h) and the coordinator
// only reads the generation's document, URL and content records.
//
// On disk (made by `shingleton reference-split`):
//   OUT/part-<i>-of-<N>/db/         a compact, read-only IndexStore (postings, signatures)
//   OUT/part-<i>-of-<N>/part.json   {"format": "shingleton-generation-part/1",
//                                    "generation", "generation_checksum", "scheme",
//                                    "part", "parts", "postings", "signatures", "checksum"}
// `checksum` is ChecksumDirectory of the part's db; `generation_checksum` ties the
// part to exactly one generation: a shard serves a part only for that generation.
//
// Thread safety: functions are independent; an open ReferencePart is immutable.
#pragma once

#include <memory>
#include <string>
#include <vector>

#include "index/index_store.h"
#include "index/status.h"

namespace shingleton {

struct PartRecord {
  std::string generation;           // the generation's name
  std::string generation_checksum;  // its record's checksum
  std::string scheme;
  uint32_t part = 0;
  uint32_t parts = 0;
  uint64_t postings = 0;
  uint64_t signatures = 0;
  std::string checksum;
};

// The directory name of part `part` of `parts`: "part-<i>-of-<N>".
std::string PartDirName(uint32_t part, uint32_t parts);

// Cuts the generation at `ref_dir` into `parts` parts under `out_dir` (which must
// not exist; built beside it and renamed on success). Returns the part records.
StatusOr<std::vector<PartRecord>> SplitGeneration(const std::string& ref_dir, uint32_t parts,
                                                  const std::string& out_dir);

StatusOr<PartRecord> ReadPartRecord(const std::string& part_dir);

// A part opened read-only, its checksum verified against its record.
struct ReferencePart {
  PartRecord record;
  std::unique_ptr<IndexStore> store;
};
StatusOr<ReferencePart> OpenReferencePart(const std::string& part_dir);

}  // namespace shingleton
