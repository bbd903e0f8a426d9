// Partitioning of the LSH index over shards: a posting (band, bucket, doc) lives
// on shard XXH3-64(band as u16 BE || bucket as u64 BE, seed 0) mod shard_count.
//
// Why by bucket and not by document: a bucket is then whole on one shard, so
// verification is local (no shard ever needs another shard's postings) and a
// candidate query touches at most `bands` shards. The cost is that a document's
// signature is stored on every shard holding one of its buckets (min(bands,
// shards) copies). The shard list must not change during a job.
#pragma once

#include <cstdint>

namespace shingleton {

// REQUIRES: shard_count >= 1.
uint32_t ShardOf(int band, uint64_t bucket, uint32_t shard_count);

}  // namespace shingleton
