// Shingler: normalised text -> 64-bit shingle hashes.
//
// Word shingles are k consecutive tokens; character shingles are k consecutive
// code points of the normalised text (spaces included, so word boundaries count).
// Each shingle is hashed as its exact UTF-8 bytes in the normalised text with
// XXH3-64 under the scheme seed. A document with fewer than k units yields one
// shingle (the whole text), so short documents still get a signature; a document
// with no token at all yields no shingle (see minhash.h for its signature).
//
// The output may contain repeats (MinHash is insensitive to them); use
// ShingleSet() when the exact set is needed.
//
// Thread safety: reentrant.
#pragma once

#include <cstdint>
#include <vector>

#include "index/normalizer.h"
#include "index/scheme.h"

namespace shingleton {

// Overwrites *out with the hashes of every shingle of `text`, in text order.
void ShingleHashes(const NormalizedText& text, ShingleKind kind, int size, uint64_t seed,
                   std::vector<uint64_t>* out);

// The sorted, duplicate-free set of shingle hashes (for exact Jaccard).
std::vector<uint64_t> ShingleSet(const NormalizedText& text, ShingleKind kind, int size,
                                 uint64_t seed);

// Exact Jaccard |A ∩ B| / |A ∪ B| of two sorted unique sets; 1.0 when both are empty.
double ExactJaccard(const std::vector<uint64_t>& a, const std::vector<uint64_t>& b);

}  // namespace shingleton
