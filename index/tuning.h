// Tuning the LSH layout: which (b, r) for a threshold, what its S-curve looks like,
// and, with labelled pairs on an existing index, how the index's layout performs.
//
// The model (Leskovec, Rajaraman, Ullman, Mining of Massive Datasets, ch. 3.4):
// a pair of Jaccard similarity s becomes a candidate with P(s) = 1 - (1 - s^r)^b
// (bands.h). A candidate becomes an edge when its estimated Jaccard, the fraction
// of k equal MinHash values, is >= t; modelled as Binomial(k, s) / k >= t
// (Broder 1997: each MinHash value agrees with probability s, independently).
// Predicted detection of a pair: q(s, t) = P(s) * P[Binomial(k, s) >= ceil(t k)].
//
// Measured: a labelled pair is detected at threshold t when its two stored
// signatures share a bucket in some band of the index and their estimated
// Jaccard is >= t — what a job at threshold t would make an edge (buckets larger
// than the all-pairs limit compare with leaders only, so a job can find slightly
// fewer). A pair is truly similar at t when its label's similarity is >= t, or,
// for same/different labels, when it is labelled same.
//
// Thread safety: pure functions; MeasureLabels only reads the store.
#pragma once

#include <string>
#include <vector>

#include "index/bands.h"
#include "index/index_store.h"
#include "index/status.h"

namespace shingleton {

struct TuneOptions {
  double threshold = 0.8;  // REQUIRES 0 < t < 1. Default: 0.8
  int num_hashes = 128;    // Default: 128
  double fp_weight =
      1 - kDefaultFnWeight;  // weight of the false-positive area. Default: 0.05
  int bands = 0,
      rows = 0;  // a layout to evaluate instead of choosing one. Default: 0 (choose)
};

struct LayoutRow {
  Banding banding;
  double cost = 0;            // fp_weight * FP area + (1 - fp_weight) * FN area
  double p_at_threshold = 0;  // P(t)
};

struct CurvePoint {
  double s = 0, p = 0;
};

struct TuneReport {
  TuneOptions options;
  LayoutRow best;  // the chosen (or given) layout
  std::vector<LayoutRow>
      alternatives;               // per rows count r, the most bands fitting k; by cost
  std::vector<CurvePoint> curve;  // s = 0.1, 0.2, ..., 1.0
};

StatusOr<TuneReport> Tune(const TuneOptions& options, size_t alternatives = 6);

// P[Binomial(n, p) >= m].
double BinomialTail(int n, double p, int m);

struct LabelledPair {
  std::string a, b;
  bool has_similarity = false;
  double similarity = 0;  // with has_similarity
  bool same = false;      // without: the same/different label
  std::string where;      // file:line
};

// Lines "ID_A<TAB>ID_B<TAB>LABEL"; LABEL is a similarity in [0, 1] or one of
// same/different (also 1/0 would read as similarities). Blank lines and lines
// starting with '#' are skipped. Errors name file and line.
StatusOr<std::vector<LabelledPair>> ReadLabels(const std::string& path);

struct MeasuredRow {
  double threshold = 0;
  uint64_t true_pairs = 0, detected = 0, true_detected = 0;
  double precision = 1, recall = 1;                      // measured (1 when undefined)
  double predicted_precision = 1, predicted_recall = 1;  // from q(s, t)
};

struct LabelReport {
  std::string scheme;
  uint64_t pairs = 0;
  uint64_t unknown_ids = 0;  // pairs naming an id not in the index (left out)
  std::string
      similarity_source;  // "labels", "exact (stored text)" or "estimated (signatures)"
  std::vector<MeasuredRow> rows;
};

// s of a pair for the prediction: the label's similarity; else the exact Jaccard
// of the stored texts when both are whole (dedup --store-text); else the
// estimated Jaccard of the signatures.
StatusOr<LabelReport> MeasureLabels(const IndexStore& store,
                                    const std::vector<LabelledPair>& pairs,
                                    const std::vector<double>& thresholds);

}  // namespace shingleton
