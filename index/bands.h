// LSH banding (Leskovec, Rajaraman, Ullman, Mining of Massive Datasets, ch. 3.4).
//
// A signature of k values is cut into b bands of r rows; two documents become a
// candidate pair when all r rows of at least one band agree, which happens with
// probability P(s) = 1 - (1 - s^r)^b for Jaccard similarity s (the S-curve).
// ChooseBanding picks (b, r) for a threshold t by minimising
//   fp_weight * ∫_0^t P(s) ds  +  fn_weight * ∫_t^1 (1 - P(s)) ds,
// the weighted false-positive and false-negative areas under the S-curve.
// Candidates are then verified on the full signature, so the defaults favour
// recall (fn_weight 0.95, fp_weight 0.05): a false positive only costs one
// signature comparison, a false negative is a duplicate kept. For t = 0.8 and
// k = 128 this gives 16 x 8: P(0.8) = 0.947, P(0.9) = 0.9999, P(0.5) = 0.061.
//
// Thread safety: pure functions.
#pragma once

#include <cstdint>

namespace shingleton {

// 1 - (1 - s^r)^b.
double CandidateProbability(double s, int bands, int rows);

struct Banding {
  int bands = 0;
  int rows = 0;
  double false_positive_area = 0;  // ∫_0^t P(s) ds
  double false_negative_area = 0;  // ∫_t^1 (1 - P(s)) ds
};

// Default weights; see the file comment.
inline constexpr double kDefaultFnWeight = 0.95;

// REQUIRES: 0 < threshold < 1, num_hashes >= 1, 0 <= fn_weight <= 1 (fp = 1 - fn).
// Ties (costs within 1e-12) go to the layout with fewer bands, then fewer rows.
Banding ChooseBanding(double threshold, int num_hashes, double fn_weight = kDefaultFnWeight);

// Both areas of a given layout, by Simpson's rule with 1000 intervals per side.
Banding EvaluateBanding(double threshold, int bands, int rows);

// The bucket of band `band` of a signature: XXH3-64 of its r 32-bit values
// (little-endian bytes) under seed + band. `sig` points at the whole signature.
uint64_t BandBucket(const uint32_t* sig, int band, int rows, uint64_t seed);

// Every band's bucket: buckets[b] = BandBucket(sig, b, rows, seed) for b < bands.
void BandBuckets(const uint32_t* sig, int bands, int rows, uint64_t seed, uint64_t* buckets);

}  // namespace shingleton
