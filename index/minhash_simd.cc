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

#if HWY_TARGET != HWY_SCALAR
// The parameters of one vector of hash functions, split for MulEven (which
// multiplies the even 32-bit lanes): the odd lanes' a_lo and b_lo moved down.
template <class D>
struct HashLanes {
  using V = hn::Vec<D>;
  using V64 = hn::Vec<hn::Repartition<uint64_t, D>>;
  V a_lo, a_lo_odd, a_hi, b_hi;
  V64 b_lo_even, b_lo_odd;

  HashLanes(D d, const Ms32Params& p, size_t i) {
    const hn::Repartition<uint64_t, D> d64;
    a_lo = hn::LoadU(d, p.a_lo + i);
    a_lo_odd = hn::BitCast(d, hn::ShiftRight<32>(hn::BitCast(d64, a_lo)));
    a_hi = hn::LoadU(d, p.a_hi + i);
    b_hi = hn::LoadU(d, p.b_hi + i);
    const auto b_lo = hn::BitCast(d64, hn::LoadU(d, p.b_lo + i));
    b_lo_even = hn::And(b_lo, hn::Set(d64, 0xFFFFFFFFULL));
    b_lo_odd = hn::ShiftRight<32>(b_lo);
  }

  // h(x) of every lane for the broadcast halves xl, xh of one shingle hash.
  HWY_INLINE V Hash(D d, V xl, V xh) const {
    const auto low_even = hn::Add(hn::MulEven(a_lo, xl), b_lo_even);
    const auto low_odd = hn::Add(hn::MulEven(a_lo_odd, xl), b_lo_odd);
    // Carry word of a_lo*x_lo + b_lo: the high half of each 64-bit product,
    // already in the odd lane for odd functions, shifted down for even ones.
    const auto carry = hn::OddEven(hn::BitCast(d, low_odd), hn::BitCast(d, hn::ShiftRight<32>(low_even)));
    const auto cross = hn::Add(hn::Mul(a_hi, xl), hn::Mul(a_lo, xh));
    return hn::Add(cross, hn::Add(b_hi, carry));
  }
};
#endif

// Two vectors of hash functions at a time (then one), the inner loop over the
// shingles, so that the parameters and running minima stay in registers and each
// shingle's broadcast serves both vectors.
// Returns the number of functions updated (whole vectors); the caller does the rest.
size_t Ms32MinUpdateVectors(const Ms32Params& p, const uint32_t* x_lo, const uint32_t* x_hi,
                            size_t n, uint32_t* sig) {
#if HWY_TARGET == HWY_SCALAR
  return 0;  // one lane cannot hold 64-bit products; the caller's scalar code does all
#else
  const hn::ScalableTag<uint32_t> d;
  const size_t lanes = hn::Lanes(d);
  size_t i = 0;
  for (; i + 2 * lanes <= p.k; i += 2 * lanes) {
    const HashLanes<decltype(d)> f0(d, p, i), f1(d, p, i + lanes);
    auto m0 = hn::LoadU(d, sig + i);
    auto m1 = hn::LoadU(d, sig + i + lanes);
    for (size_t j = 0; j < n; ++j) {
      const auto xl = hn::Set(d, x_lo[j]);
      const auto xh = hn::Set(d, x_hi[j]);
      m0 = hn::Min(m0, f0.Hash(d, xl, xh));
      m1 = hn::Min(m1, f1.Hash(d, xl, xh));
    }
    hn::StoreU(m0, d, sig + i);
    hn::StoreU(m1, d, sig + i + lanes);
  }
  for (; i + lanes <= p.k; i += lanes) {
    const HashLanes<decltype(d)> f(d, p, i);
    auto m = hn::LoadU(d, sig + i);
    for (size_t j = 0; j < n; ++j) m = hn::Min(m, f.Hash(d, hn::Set(d, x_lo[j]), hn::Set(d, x_hi[j])));
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
  if (j < end) {  // the last partial vector: a masked store, no scalar tail
    // left_mask is padded (kRotationPadding), so the whole vector is readable.
    const auto m = hn::LoadU(d, left_mask + j);
    hn::BlendedStore(hn::Or(hn::And(m, l), hn::AndNot(m, r)), hn::FirstN(d, end - j), d, sig + j);
  }
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
