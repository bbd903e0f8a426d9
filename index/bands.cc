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
  // The cost of every layout, by the same Simpson's rule as EvaluateBanding, with
  // (1 - s^r)^b built up one band at a time for each r: one multiplication per
  // grid point and layout instead of a pow (k = 9000 has about 83,000 layouts).
  constexpr int kIntervals = 1000;
  std::vector<std::vector<double>> cost(num_hashes + 1);  // cost[b][r - 1]
  for (int b = 1; b <= num_hashes; ++b) cost[b].resize(num_hashes / b);
  std::vector<double> q_lo(kIntervals + 1), q_hi(kIntervals + 1), p_lo(kIntervals + 1), p_hi(kIntervals + 1);
  const double h_lo = threshold / kIntervals, h_hi = (1.0 - threshold) / kIntervals;
  auto simpson = [](const std::vector<double>& f, double h, bool complement) {
    double sum = 0;
    for (size_t i = 0; i < f.size(); ++i) {
      const double v = complement ? 1.0 - f[i] : f[i];
      sum += v * (i == 0 || i + 1 == f.size() ? 1 : (i % 2 ? 4 : 2));
    }
    return sum * h / 3;
  };
  for (int r = 1; r <= num_hashes; ++r) {
    for (int i = 0; i <= kIntervals; ++i) {
      q_lo[i] = 1.0 - std::pow(i * h_lo, r);
      q_hi[i] = 1.0 - std::pow(threshold + i * h_hi, r);
      p_lo[i] = p_hi[i] = 1.0;
    }
    for (int b = 1; b * r <= num_hashes; ++b) {
      for (int i = 0; i <= kIntervals; ++i) {
        p_lo[i] *= q_lo[i];  // (1 - s^r)^b = 1 - P(s)
        p_hi[i] *= q_hi[i];
      }
      // FP area: ∫_0^t P = ∫ (1 - p_lo); FN area: ∫_t^1 (1 - P) = ∫ p_hi.
      cost[b][r - 1] = fp_weight * simpson(p_lo, h_lo, true) + fn_weight * simpson(p_hi, h_hi, false);
    }
  }
  int best_b = 0, best_r = 0;
  double best_cost = INFINITY;
  for (int b = 1; b <= num_hashes; ++b) {  // the order that breaks ties: fewer bands, then fewer rows
    for (int r = 1; b * r <= num_hashes; ++r) {
      if (cost[b][r - 1] < best_cost - 1e-12) {
        best_cost = cost[b][r - 1];
        best_b = b;
        best_r = r;
      }
    }
  }
  return EvaluateBanding(threshold, best_b, best_r);
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

void BandBuckets(const uint32_t* sig, int bands, int rows, uint64_t seed, uint64_t* buckets) {
  // One loop around the inlined hash: the length-dependent branches of XXH3 are the
  // same for every band (e.g. 409 bands of 22 values with --hashes 9000).
  for (int band = 0; band < bands; ++band) buckets[band] = BandBucket(sig, band, rows, seed);
}

}  // namespace shingleton
