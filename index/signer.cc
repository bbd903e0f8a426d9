#include "index/signer.h"

#include <xxhash.h>

#include "index/bands.h"
#include "index/shingler.h"

namespace shingleton {

Signer::Signer(const SketchScheme& scheme) : scheme_(scheme) {
  if (const int probes = OphProbes(scheme.signature_method); probes >= 0) {
    oph_.emplace(scheme.num_hashes, scheme.seed, probes);
  } else {
    minhash_.emplace(scheme.num_hashes, scheme.seed);
  }
}

size_t Signer::Sign(std::string_view text, uint32_t* sig, uint64_t* buckets, uint64_t* content) {
  normalizer_.Normalize(text, &normalized_);
  if (content) {
    const XXH128_hash_t h = XXH3_128bits(normalized_.text.data(), normalized_.text.size());
    content[0] = h.high64;
    content[1] = h.low64;
  }
  ShingleHashes(normalized_, scheme_.shingle_kind, scheme_.shingle_size, scheme_.seed, &shingles_);
  if (oph_) {
    oph_->Sign(shingles_.data(), shingles_.size(), sig, &oph_scratch_);
  } else {
    minhash_->Sign(shingles_.data(), shingles_.size(), sig);
  }
  BandBuckets(sig, scheme_.bands, scheme_.rows, scheme_.seed, buckets);
  return normalized_.num_tokens();
}

}  // namespace shingleton
