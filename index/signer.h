// Signer: raw text -> signature and LSH band buckets, under one scheme.
// Composes Normalizer -> ShingleHashes -> MinHasher or OnePermutationHasher (by the
// scheme's signature method) -> BandBucket.
//
// Thread safety: a Signer owns scratch buffers; use one per thread.
#pragma once

#include <cstdint>
#include <optional>
#include <string_view>
#include <vector>

#include "index/minhash.h"
#include "index/normalizer.h"
#include "index/oph.h"
#include "index/scheme.h"

namespace shingleton {

class Signer {
 public:
  // REQUIRES: scheme.Validate().ok().
  explicit Signer(const SketchScheme& scheme);

  // REQUIRES: text is valid UTF-8. Writes scheme.num_hashes values to sig and
  // scheme.bands buckets to buckets; returns the number of tokens. When `content`
  // is given, it receives XXH3-128 of the normalised text {high, low}.
  size_t Sign(std::string_view text, uint32_t* sig, uint64_t* buckets,
              uint64_t* content = nullptr);

  const SketchScheme& scheme() const { return scheme_; }

 private:
  SketchScheme scheme_;
  std::optional<MinHasher> minhash_;          // kMinHashMethod
  std::optional<OnePermutationHasher> oph_;   // OphMethod(probes)
  std::vector<uint64_t> oph_scratch_;
  Normalizer normalizer_;
  NormalizedText normalized_;
  std::vector<uint64_t> shingles_;
};

}  // namespace shingleton
