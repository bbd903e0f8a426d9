#include "index/bands.h"

// Inlined: a job hashes b band keys per document (409 at k = 9000).
#define XXH_INLINE_ALL
#include <xxhash.h>

#include <cmath>
#include <vector>

namespace shingleton {
namespace {

template <typename F>
double Simpson(F f, double lo, double hi, int intervals) {
  const double h = (hi - lo) / intervals;
  double sum = f(lo) + f(hi);
  for (int i = 1; i < intervals; ++i) sum += f(lo + i * h) * (i % 2 ? 4 : 2);
  return sum * h / 3;
}

}  // namespace

double CandidateProbability(double s, int bands, int rows) {
  return 1.0 - std::pow(1.0 - std::pow(s, rows), bands);
}

Banding EvaluateBanding(double threshold, int bands, int rows) {
  Banding out;
  out.bands = bands;
  out.rows = rows;
  out.false_positive_area =
      Simpson([&](double s) { return CandidateProbability(s, bands, rows); }, 0.0, threshold, 1000);
  out.false_negative_area = Simpson(
      [&](double s) { return 1.0 - CandidateProbability(s, bands, rows); }, threshold, 1.0, 1000);
  return out;
}

Banding ChooseBanding(double threshold, int num_hashes, double fn_weight) {
  const double fp_weight = 1.0 - fn_weight;
  Banding best;
  double best_cost = INFINITY;
  for (int b = 1; b <= num_hashes; ++b) {
    for (int r = 1; b * r <= num_hashes; ++r) {
      Banding cand = EvaluateBanding(threshold, b, r);
      double cost = fp_weight * cand.false_positive_area + fn_weight * cand.false_negative_area;
      if (cost < best_cost - 1e-12) {
        best_cost = cost;
        best = cand;
      }
    }
  }
  return best;
}

uint64_t BandBucket(const uint32_t* sig, int band, int rows, uint64_t seed) {
  // Values are hashed as little-endian bytes on every platform: in place where that
  // is the memory order, else copied.
  const uint32_t* row = sig + static_cast<size_t>(band) * rows;
#if defined(__BYTE_ORDER__) && __BYTE_ORDER__ == __ORDER_LITTLE_ENDIAN__
  return XXH3_64bits_withSeed(row, 4 * static_cast<size_t>(rows), seed + band);
#else
  uint8_t small[4 * 64];
  std::vector<uint8_t> large;
  uint8_t* bytes = small;
  if (rows > 64) {
    large.resize(4 * static_cast<size_t>(rows));
    bytes = large.data();
  }
  for (int i = 0; i < rows; ++i) {
    const uint32_t v = row[i];
    bytes[4 * i] = static_cast<uint8_t>(v);
    bytes[4 * i + 1] = static_cast<uint8_t>(v >> 8);
    bytes[4 * i + 2] = static_cast<uint8_t>(v >> 16);
    bytes[4 * i + 3] = static_cast<uint8_t>(v >> 24);
  }
  return XXH3_64bits_withSeed(bytes, 4 * static_cast<size_t>(rows), seed + band);
#endif
}

}  // namespace shingleton
