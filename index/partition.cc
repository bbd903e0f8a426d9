#include "index/partition.h"

#include <xxhash.h>

#include <string>

#include "index/coding.h"

namespace shingleton {

uint32_t ShardOf(int band, uint64_t bucket, uint32_t shard_count) {
  std::string key;
  PutBigEndian16(&key, static_cast<uint16_t>(band));
  PutBigEndian64(&key, bucket);
  return static_cast<uint32_t>(XXH3_64bits_withSeed(key.data(), key.size(), 0) % shard_count);
}

}  // namespace shingleton
