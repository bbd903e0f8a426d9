// Vector kernels of the sketches, in one unit so that the Highway per-target code
// stays in one translation unit (minhash_simd.cc).
//
// Ms32MinUpdate: the "minhash-ms32" family (minhash.h).
// The 64-bit multiply-add-shift h(x) = high 32 bits of (a*x + b) mod 2^64 is split
// into 32-bit halves, which suits 32-bit SIMD lanes without 64-bit multiplies:
//   h = (a_hi*x_lo + a_lo*x_hi + b_hi + ((a_lo*x_lo + b_lo) >> 32)) mod 2^32,
// where a_lo*x_lo + b_lo <= 2^64 - 2^32 cannot overflow 64 bits. The values are
// therefore bit for bit those of the scalar definition (MinHasher::SignScalar).
// The best instruction set of the running CPU is chosen at run time
// (HWY_DYNAMIC_DISPATCH over the targets compiled by foreach_target).
//
// Thread safety: reentrant.
#pragma once

#include <cstddef>
#include <cstdint>

namespace shingleton {

// The k hash functions as four arrays of k 32-bit halves (structure of arrays).
struct Ms32Params {
  const uint32_t* a_lo;
  const uint32_t* a_hi;
  const uint32_t* b_lo;
  const uint32_t* b_hi;
  size_t k;
};

// For every i < m: sig[i] = min(sig[i], min over j < n of h_i(x_hi[j]:x_lo[j])), where
// m = p.k rounded down to a multiple of the vector length (0 on a CPU without
// usable vectors); returns m. The caller
// updates the remaining p.k - m functions (fewer than one vector) with scalar code.
size_t Ms32MinUpdate(const Ms32Params& p, const uint32_t* x_lo, const uint32_t* x_hi, size_t n,
                     uint32_t* sig);

// The rotation step of one-permutation hashing (oph.h) for bins without probes:
// every bin j whose bit in `filled` is clear takes sig[p] if left_mask[j] is all
// ones, else sig[q], where p and q are the nearest set bits to the left and right
// of j, cyclically. REQUIRES: at least one bit of filled[0 .. ceil(k/64)) set;
// left_mask[j] is 0 or 0xFFFFFFFF; left_mask has k + kRotationPadding readable
// entries (a gap's last partial vector is loaded whole, then stored masked).
inline constexpr size_t kRotationPadding = 16;
void RotateIntoEmptyBins(const uint64_t* filled, const uint32_t* left_mask, size_t k,
                         uint32_t* sig);

// Name of the instruction set the dispatcher picks on this CPU, e.g. "AVX2".
const char* Ms32KernelTarget();

}  // namespace shingleton
