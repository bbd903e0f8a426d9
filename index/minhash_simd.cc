// Highway per-target code of Ms32MinUpdate (see minhash_simd.h). foreach_target
// re-includes this file once per instruction set; HWY_EXPORT builds the table
// that HWY_DYNAMIC_DISPATCH picks from at run time.
#undef HWY_TARGET_INCLUDE
#define HWY_TARGET_INCLUDE "index/minhash_simd.cc"
#include <hwy/foreach_target.h>  // IWYU pragma: keep
#include <hwy/highway.h>

#include "index/minhash_simd.h"

HWY_BEFORE_NAMESPACE();
namespace shingleton {
namespace HWY_NAMESPACE {
namespace hn = hwy::HWY_NAMESPACE;

// One vector of N hash functions at a time; the inner loop runs over the shingles
// so that the parameters and the running minima stay in registers.
// Returns the number of functions updated (whole vectors); the caller does the rest.
size_t Ms32MinUpdateVectors(const Ms32Params& p, const uint32_t* x_lo, const uint32_t* x_hi,
                            size_t n, uint32_t* sig) {
#if HWY_TARGET == HWY_SCALAR
  return 0;  // one lane cannot hold 64-bit products; the caller's scalar code does all
#else
  const hn::ScalableTag<uint32_t> d;
  const hn::Repartition<uint64_t, decltype(d)> d64;
  const size_t lanes = hn::Lanes(d);
  const auto low_half = hn::Set(d64, 0xFFFFFFFFULL);
  size_t i = 0;
  for (; i + lanes <= p.k; i += lanes) {
    const auto a_lo = hn::LoadU(d, p.a_lo + i);
    // MulEven multiplies the even 32-bit lanes; the odd ones are moved down first.
    const auto a_lo_odd = hn::BitCast(d, hn::ShiftRight<32>(hn::BitCast(d64, a_lo)));
    const auto a_hi = hn::LoadU(d, p.a_hi + i);
    const auto b_lo = hn::BitCast(d64, hn::LoadU(d, p.b_lo + i));
    const auto b_lo_even = hn::And(b_lo, low_half);
    const auto b_lo_odd = hn::ShiftRight<32>(b_lo);
    const auto b_hi = hn::LoadU(d, p.b_hi + i);
    auto m = hn::LoadU(d, sig + i);
    for (size_t j = 0; j < n; ++j) {
      const auto xl = hn::Set(d, x_lo[j]);
      const auto xh = hn::Set(d, x_hi[j]);
      const auto low_even = hn::Add(hn::MulEven(a_lo, xl), b_lo_even);
      const auto low_odd = hn::Add(hn::MulEven(a_lo_odd, xl), b_lo_odd);
      // Carry word of a_lo*x_lo + b_lo: the high half of each 64-bit product,
      // already in the odd lane for odd functions, shifted down for even ones.
      const auto carry =
          hn::OddEven(hn::BitCast(d, low_odd), hn::BitCast(d, hn::ShiftRight<32>(low_even)));
      const auto cross = hn::Add(hn::Mul(a_hi, xl), hn::Mul(a_lo, xh));
      m = hn::Min(m, hn::Add(cross, hn::Add(b_hi, carry)));
    }
    hn::StoreU(m, d, sig + i);
  }
  return i;
#endif
}

// sig[j] = left_mask[j] ? left : right for j in [begin, end).
void FillGap(const uint32_t* left_mask, uint32_t left, uint32_t right, size_t begin, size_t end,
             uint32_t* sig) {
  const hn::ScalableTag<uint32_t> d;
  const size_t lanes = hn::Lanes(d);
  const auto l = hn::Set(d, left), r = hn::Set(d, right);
  size_t j = begin;
  for (; j + lanes <= end; j += lanes) {
    const auto m = hn::LoadU(d, left_mask + j);
    hn::StoreU(hn::Or(hn::And(m, l), hn::AndNot(m, r)), d, sig + j);
  }
  for (; j < end; ++j) sig[j] = (left & left_mask[j]) | (right & ~left_mask[j]);
}

void RotateIntoEmptyBinsImpl(const uint64_t* filled, const uint32_t* left_mask, size_t k,
                             uint32_t* sig) {
  size_t first = SIZE_MAX, prev = 0;
  for (size_t w = 0; w * 64 < k; ++w) {
    for (uint64_t bits = filled[w]; bits != 0; bits &= bits - 1) {
      const size_t f = w * 64 + static_cast<size_t>(hwy::Num0BitsBelowLS1Bit_Nonzero64(bits));
      if (first == SIZE_MAX) {
        first = f;
      } else {
        FillGap(left_mask, sig[prev], sig[f], prev + 1, f, sig);
      }
      prev = f;
    }
  }
  const uint32_t left = sig[prev], right = sig[first];  // the gap that wraps around
  FillGap(left_mask, left, right, prev + 1, k, sig);
  FillGap(left_mask, left, right, 0, first, sig);
}

const char* Ms32TargetName() { return hwy::TargetName(HWY_TARGET); }

}  // namespace HWY_NAMESPACE
}  // namespace shingleton
HWY_AFTER_NAMESPACE();

#if HWY_ONCE
namespace shingleton {

HWY_EXPORT(Ms32MinUpdateVectors);
HWY_EXPORT(Ms32TargetName);
HWY_EXPORT(RotateIntoEmptyBinsImpl);

size_t Ms32MinUpdate(const Ms32Params& p, const uint32_t* x_lo, const uint32_t* x_hi, size_t n,
                     uint32_t* sig) {
  return HWY_DYNAMIC_DISPATCH(Ms32MinUpdateVectors)(p, x_lo, x_hi, n, sig);
}

void RotateIntoEmptyBins(const uint64_t* filled, const uint32_t* left_mask, size_t k,
                         uint32_t* sig) {
  HWY_DYNAMIC_DISPATCH(RotateIntoEmptyBinsImpl)(filled, left_mask, k, sig);
}

const char* Ms32KernelTarget() { return HWY_DYNAMIC_DISPATCH(Ms32TargetName)(); }

}  // namespace shingleton
#endif  // HWY_ONCE
