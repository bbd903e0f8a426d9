// LSH banding against Mining of Massive Datasets (Leskovec, Rajaraman, Ullman),
// ch. 3.4 "Locality-Sensitive Hashing for Documents" (the analysis is §3.4.2,
// section number from memory): the S-curve
// P(s) = 1 - (1 - s^r)^b, its table for b = 20, r = 5, the threshold
// approximation (1/b)^(1/r); measured candidate rates of real signatures; and
// ChooseBanding / EvaluateBanding against independent numerical integration.
#include "index/bands.h"

#include <gtest/gtest.h>

#include "tests/test_util.h"

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <random>
#include <set>
#include <tuple>
#include <utility>
#include <vector>

#include "index/minhash.h"

namespace shingleton {
namespace {

// The S-curve written out from its definition (MMDS §3.4.2): the probability
// that all r rows of a band agree is s^r; that no band agrees, (1 - s^r)^b.
double SCurve(double s, int b, int r) {
  double all_rows = 1;
  for (int i = 0; i < r; ++i) all_rows *= s;
  double no_band = 1;
  for (int i = 0; i < b; ++i) no_band *= 1 - all_rows;
  return 1 - no_band;
}

// Composite trapezoid rule with `steps` intervals (independent of the
// library's Simpson rule).
template <typename F>
double Trapezoid(F f, double lo, double hi, int steps = 20000) {
  const double h = (hi - lo) / steps;
  double sum = 0.5 * (f(lo) + f(hi));
  for (int i = 1; i < steps; ++i) sum += f(lo + i * h);
  return sum * h;
}

double FpArea(double t, int b, int r, int steps = 20000) {
  return Trapezoid([&](double s) { return SCurve(s, b, r); }, 0.0, t, steps);
}
double FnArea(double t, int b, int r, int steps = 20000) {
  return Trapezoid([&](double s) { return 1 - SCurve(s, b, r); }, t, 1.0, steps);
}

// MMDS ch. 3.4, the table of 1 - (1 - s^5)^20 (b = 20, r = 5). Each value must
// agree to the table's printed precision (half a unit in the last digit).
// The 0.3 entry is from memory of the same table.
TEST(SCurveTest, MiningMassiveDatasetsTable) {
  struct Row {
    double s;
    double printed;
    double half_unit;
  };
  const Row kTable[] = {{0.2, 0.006, 0.0005},  {0.3, 0.047, 0.0005}, {0.4, 0.186, 0.0005},
                        {0.5, 0.470, 0.0005},  {0.6, 0.802, 0.0005}, {0.7, 0.975, 0.0005},
                        {0.8, 0.9996, 0.00005}};
  for (const Row& row : kTable) {
    EXPECT_NEAR(CandidateProbability(row.s, 20, 5), row.printed, row.half_unit)
        << "s=" << row.s;
  }
}

// The definition at its ends and for a single one-row band (P(s) = s).
TEST(SCurveTest, MatchesDefinition) {
  EXPECT_EQ(CandidateProbability(0.0, 20, 5), 0.0);
  EXPECT_EQ(CandidateProbability(1.0, 20, 5), 1.0);
  for (int i = 0; i <= 100; ++i) {
    const double s = i / 100.0;
    EXPECT_NEAR(CandidateProbability(s, 1, 1), s, 1e-15);
    for (auto [b, r] : {std::pair{20, 5}, {16, 8}, {32, 4}, {1, 128}, {128, 1}, {7, 3}}) {
      EXPECT_NEAR(CandidateProbability(s, b, r), SCurve(s, b, r), 1e-12)
          << b << "x" << r << " s=" << s;
    }
  }
}

// MMDS §3.4.2: the threshold, where the S-curve rises most steeply, is
// approximately (1/b)^(1/r), about 0.55 for b = 20, r = 5. The steepest point is
// exactly the inflection point; setting d/ds log P'(s) = 0 for
// P'(s) = b r s^(r-1) (1 - s^r)^(b-1) gives s^r = (r-1)/(rb-1) (calculus).
TEST(SCurveTest, ThresholdApproximation) {
  for (auto [b, r] : {std::pair{20, 5}, {16, 8}, {32, 4}, {10, 10}}) {
    // Steepest point of CandidateProbability by central differences on a grid.
    double best_s = 0, best_slope = -1;
    const double h = 1e-5;
    for (double s = 0.01; s < 0.99; s += 1e-4) {
      const double slope =
          (CandidateProbability(s + h, b, r) - CandidateProbability(s - h, b, r)) /
          (2 * h);
      if (slope > best_slope) best_slope = slope, best_s = s;
    }
    const double exact = std::pow(static_cast<double>(r - 1) / (r * b - 1), 1.0 / r);
    const double approx = std::pow(1.0 / b, 1.0 / r);
    EXPECT_NEAR(best_s, exact, 2e-4) << b << "x" << r;
    EXPECT_NEAR(best_s, approx, 0.03) << b << "x" << r;  // "approximately"
  }
}

// ---------------------------------------------------------------------------
// Measured candidate rate of real signatures vs the S-curve. For a pair with
// exact Jaccard s and k = b*r independent min-wise hash functions, each band
// agrees entirely with probability s^r, independently (MMDS §3.4.2), so the
// number of candidate pairs among N is Binomial(N, P(s)). Allowed deviation:
// 4 binomial sigma plus 0.005 for the departure of a concrete hash family from
// the ideal one.


void CheckCandidateRate(int bands, int rows) {
  constexpr int kPairs = 2000;
  const int k = bands * rows;
  std::mt19937_64 rng(bands * 1000 + rows);
  std::vector<uint32_t> sa(k), sb(k);
  for (double s : {0.3, 0.5, 0.7, 0.8, 0.9}) {
    int candidates = 0;
    for (int n = 0; n < kPairs; ++n) {
      const testing::SetPair p = testing::MakeSetPair(s, 100, &rng);
      const uint64_t seed = rng();
      const MinHasher h(k, seed);
      h.Sign(p.a.data(), p.a.size(), sa.data());
      h.Sign(p.b.data(), p.b.size(), sb.data());
      bool candidate = false;
      for (int band = 0; band < bands; ++band) {
        const bool same_bucket = BandBucket(sa.data(), band, rows, seed) ==
                                 BandBucket(sb.data(), band, rows, seed);
        const bool same_rows =
            std::equal(sa.begin() + band * rows, sa.begin() + (band + 1) * rows,
                       sb.begin() + band * rows);
        // Equal rows give equal buckets (a function); unequal rows collide in
        // a 64-bit hash with probability ~2^-64.
        ASSERT_EQ(same_bucket, same_rows) << "band " << band;
        candidate |= same_bucket;
      }
      candidates += candidate;
    }
    const double p = SCurve(s, bands, rows);
    const double rate = static_cast<double>(candidates) / kPairs;
    const double sigma = std::sqrt(p * (1 - p) / kPairs);
    std::printf("%dx%d s=%.1f: measured %.4f, 1-(1-s^r)^b = %.4f\n", bands, rows, s, rate,
                p);
    EXPECT_NEAR(rate, p, 4 * sigma + 0.005) << bands << "x" << rows << " s=" << s;
  }
}

TEST(CandidateRateTest, TwentyBandsOfFive) { CheckCandidateRate(20, 5); }
TEST(CandidateRateTest, SixteenBandsOfEight) { CheckCandidateRate(16, 8); }

// Different bands of the same values land in different buckets (seed + band).
TEST(CandidateRateTest, BandIndexIsPartOfTheBucket) {
  const std::vector<uint32_t> sig(40, 7);
  std::set<uint64_t> buckets;
  for (int band = 0; band < 8; ++band) buckets.insert(BandBucket(sig.data(), band, 5, 1));
  EXPECT_EQ(buckets.size(), 8u);
}

// ---------------------------------------------------------------------------
// EvaluateBanding and ChooseBanding against independent integration.

// Exact areas by expanding (1 - s^r)^b = sum_j C(b,j) (-1)^j s^(rj) and
// integrating term by term (calculus).
void ExactAreas(double t, int b, int r, double* fp, double* fn) {
  double binom = 1, fp_sum = 0, fn_sum = 0;
  for (int j = 0; j <= b; ++j) {
    const double sign = (j % 2) ? -1 : 1;
    const double e = r * j + 1.0;
    fp_sum += sign * binom * std::pow(t, e) / e;        // ∫_0^t s^(rj)
    fn_sum += sign * binom * (1 - std::pow(t, e)) / e;  // ∫_t^1 s^(rj)
    binom = binom * (b - j) / (j + 1);
  }
  *fp = t - fp_sum;  // ∫_0^t 1 - (1 - s^r)^b
  *fn = fn_sum;      // ∫_t^1 (1 - s^r)^b
}

TEST(EvaluateBandingTest, TwentyByFiveAtHalf) {
  const Banding e = EvaluateBanding(0.5, 20, 5);
  EXPECT_EQ(e.bands, 20);
  EXPECT_EQ(e.rows, 5);
  EXPECT_NEAR(e.false_positive_area, FpArea(0.5, 20, 5), 1e-4);
  EXPECT_NEAR(e.false_negative_area, FnArea(0.5, 20, 5), 1e-4);
  double fp, fn;
  ExactAreas(0.5, 20, 5, &fp, &fn);
  EXPECT_NEAR(e.false_positive_area, fp, 1e-8);
  EXPECT_NEAR(e.false_negative_area, fn, 1e-8);
  std::printf("20x5 t=0.5: FP area %.6f, FN area %.6f\n", fp, fn);
}

TEST(EvaluateBandingTest, OtherLayouts) {
  for (auto [t, b, r] :
       {std::tuple{0.8, 16, 8}, {0.3, 4, 2}, {0.9, 1, 1}, {0.6, 32, 4}}) {
    const Banding e = EvaluateBanding(t, b, r);
    EXPECT_NEAR(e.false_positive_area, FpArea(t, b, r), 1e-4) << b << "x" << r;
    EXPECT_NEAR(e.false_negative_area, FnArea(t, b, r), 1e-4) << b << "x" << r;
    double fp, fn;
    ExactAreas(t, b, r, &fp, &fn);
    EXPECT_NEAR(e.false_positive_area, fp, 1e-8) << b << "x" << r;
    EXPECT_NEAR(e.false_negative_area, fn, 1e-8) << b << "x" << r;
  }
  // b = r = 1: P(s) = s, so FP = t^2/2 and FN = (1-t)^2/2.
  const Banding e = EvaluateBanding(0.9, 1, 1);
  EXPECT_NEAR(e.false_positive_area, 0.405, 1e-12);
  EXPECT_NEAR(e.false_negative_area, 0.005, 1e-12);
}

// ChooseBanding minimises fp_weight * FP + fn_weight * FN over b*r <= k
// (bands.h). The minimum is recomputed here by brute force over every layout
// with trapezoid areas.
struct Choice {
  int bands, rows;
  double cost;
};

Choice BruteForceChoice(double t, int k, double fn_weight) {
  Choice best{0, 0, INFINITY};
  for (int b = 1; b <= k; ++b) {
    for (int r = 1; b * r <= k; ++r) {
      const double cost =
          (1 - fn_weight) * FpArea(t, b, r, 4000) + fn_weight * FnArea(t, b, r, 4000);
      if (cost < best.cost) best = {b, r, cost};
    }
  }
  return best;
}

TEST(ChooseBandingTest, OptimalAgainstBruteForce) {
  struct Config {
    double t;
    int k;
    double fn_weight;
  };
  for (const Config c : {Config{0.8, 128, kDefaultFnWeight}, Config{0.5, 100, 0.5},
                         Config{0.9, 64, 0.95}, Config{0.7, 200, 0.8}}) {
    const Banding chosen = ChooseBanding(c.t, c.k, c.fn_weight);
    ASSERT_GE(chosen.bands, 1);
    ASSERT_GE(chosen.rows, 1);
    EXPECT_LE(chosen.bands * chosen.rows, c.k);
    EXPECT_NEAR(chosen.false_positive_area, FpArea(c.t, chosen.bands, chosen.rows), 1e-4);
    EXPECT_NEAR(chosen.false_negative_area, FnArea(c.t, chosen.bands, chosen.rows), 1e-4);
    const Choice brute = BruteForceChoice(c.t, c.k, c.fn_weight);
    const double chosen_cost =
        (1 - c.fn_weight) * FpArea(c.t, chosen.bands, chosen.rows) +
        c.fn_weight * FnArea(c.t, chosen.bands, chosen.rows);
    // Brute force uses 4000 trapezoid steps (error < 1e-6 for these curves).
    EXPECT_LE(chosen_cost, brute.cost + 2e-6)
        << "t=" << c.t << " k=" << c.k << ": chose " << chosen.bands << "x" << chosen.rows
        << ", brute force " << brute.bands << "x" << brute.rows;
    std::printf("t=%.2f k=%d w=%.2f: ChooseBanding %dx%d, brute force %dx%d\n", c.t, c.k,
                c.fn_weight, chosen.bands, chosen.rows, brute.bands, brute.rows);
  }
}

// The minimiser of (1-w) FP + w FN has non-increasing FN and non-decreasing FP
// as w grows (exchange argument: adding the optimality inequalities of w1 < w2
// gives (w2 - w1)(FN2 - FN1) <= 0).
TEST(ChooseBandingTest, HigherRecallWeightNeverIncreasesFalseNegatives) {
  for (double t : {0.5, 0.8}) {
    double prev_fn = INFINITY, prev_fp = -INFINITY;
    for (int i = 0; i <= 20; ++i) {
      const double w = i / 20.0;
      const Banding c = ChooseBanding(t, 128, w);
      EXPECT_LE(c.bands * c.rows, 128);
      EXPECT_LE(c.false_negative_area, prev_fn + 1e-9) << "t=" << t << " w=" << w;
      EXPECT_GE(c.false_positive_area, prev_fp - 1e-9) << "t=" << t << " w=" << w;
      prev_fn = c.false_negative_area;
      prev_fp = c.false_positive_area;
    }
  }
}

// The extremes have exact answers. Since 1 - s^r >= (1 - s)^r on [0, 1],
// (1 - s^r)^b >= (1 - s)^(rb) >= (1 - s)^k: recall only (w = 1) is best served
// by k bands of one row, FN = (1 - t)^(k+1) / (k+1). Since
// P(s) >= 1 - (1 - s^r) = s^r >= s^k: precision only (w = 0) by one band of k
// rows, FP = t^(k+1) / (k+1). (Settings chosen so that the runner-up differs
// by far more than rounding.)
TEST(ChooseBandingTest, ExtremeWeights) {
  const Banding recall = ChooseBanding(0.3, 16, 1.0);
  EXPECT_EQ(recall.bands, 16);
  EXPECT_EQ(recall.rows, 1);
  EXPECT_NEAR(recall.false_negative_area, std::pow(0.7, 17) / 17, 1e-9);
  const Banding precision = ChooseBanding(0.3, 16, 0.0);
  EXPECT_EQ(precision.bands, 1);
  EXPECT_EQ(precision.rows, 16);
  EXPECT_NEAR(precision.false_positive_area, std::pow(0.3, 17) / 17, 1e-12);
}

}  // namespace
}  // namespace shingleton
