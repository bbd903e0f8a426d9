#include "index/tuning.h"

#include <algorithm>
#include <cmath>
#include <fstream>

#include "index/minhash.h"
#include "index/shingler.h"
#include "index/text_diff.h"

namespace shingleton {
namespace {

LayoutRow Row(double t, int bands, int rows, double fp_weight) {
  LayoutRow row;
  row.banding = EvaluateBanding(t, bands, rows);
  row.cost = fp_weight * row.banding.false_positive_area +
             (1 - fp_weight) * row.banding.false_negative_area;
  row.p_at_threshold = CandidateProbability(t, bands, rows);
  return row;
}

std::vector<std::string> SplitTabs(const std::string& line) {
  std::vector<std::string> out;
  size_t i = 0;
  while (true) {
    size_t j = line.find('\t', i);
    out.push_back(line.substr(i, j == std::string::npos ? std::string::npos : j - i));
    if (j == std::string::npos) break;
    i = j + 1;
  }
  return out;
}

bool SharesBucket(const SketchScheme& s, const uint32_t* a, const uint32_t* b) {
  for (int band = 0; band < s.bands; ++band) {
    if (BandBucket(a, band, s.rows, s.seed) == BandBucket(b, band, s.rows, s.seed))
      return true;
  }
  return false;
}

struct ScoredPair {
  double s = 0;          // similarity used for the prediction
  double estimated = 0;  // of the signatures
  bool candidate = false;
  const LabelledPair* label = nullptr;
};

}  // namespace

double BinomialTail(int n, double p, int m) {
  if (m <= 0) return 1;
  if (m > n) return 0;
  if (p <= 0) return 0;
  if (p >= 1) return 1;
  double sum = 0;
  for (int i = m; i <= n; ++i) {
    const double log_term = std::lgamma(n + 1.0) - std::lgamma(i + 1.0) -
                            std::lgamma(n - i + 1.0) + i * std::log(p) +
                            (n - i) * std::log1p(-p);
    sum += std::exp(log_term);
  }
  return std::min(1.0, sum);
}

StatusOr<TuneReport> Tune(const TuneOptions& o, size_t alternatives) {
  if (!(o.threshold > 0 && o.threshold < 1))
    return Status::InvalidArgument("--threshold must be in (0, 1)");
  if (o.num_hashes < 1 || o.num_hashes > 4096)
    return Status::InvalidArgument("--hashes must be in [1, 4096]");
  if (!(o.fp_weight >= 0 && o.fp_weight <= 1))
    return Status::InvalidArgument("--fp-weight must be in [0, 1]");
  if ((o.bands > 0) != (o.rows > 0))
    return Status::InvalidArgument("give both --bands and --rows, or neither");
  if (o.bands > 0 && o.bands * o.rows > o.num_hashes) {
    return Status::InvalidArgument("--bands x --rows exceeds --hashes");
  }
  TuneReport r;
  r.options = o;
  if (o.bands > 0) {
    r.best = Row(o.threshold, o.bands, o.rows, o.fp_weight);
  } else {
    const Banding chosen = ChooseBanding(o.threshold, o.num_hashes, 1 - o.fp_weight);
    r.best = Row(o.threshold, chosen.bands, chosen.rows, o.fp_weight);
  }
  for (int rows = 1; rows <= o.num_hashes; ++rows) {
    const int bands = o.num_hashes / rows;
    if (bands == r.best.banding.bands && rows == r.best.banding.rows) continue;
    r.alternatives.push_back(Row(o.threshold, bands, rows, o.fp_weight));
  }
  std::sort(r.alternatives.begin(), r.alternatives.end(),
            [](const LayoutRow& a, const LayoutRow& b) { return a.cost < b.cost; });
  if (r.alternatives.size() > alternatives) r.alternatives.resize(alternatives);
  for (int i = 1; i <= 10; ++i) {
    const double s = i / 10.0;
    r.curve.push_back(
        {s, CandidateProbability(s, r.best.banding.bands, r.best.banding.rows)});
  }
  return r;
}

StatusOr<std::vector<LabelledPair>> ReadLabels(const std::string& path) {
  std::ifstream in(path);
  if (!in) return Status::IoError("cannot read " + path);
  std::vector<LabelledPair> out;
  std::string line;
  for (int number = 1; std::getline(in, line); ++number) {
    if (!line.empty() && line.back() == '\r') line.pop_back();
    if (line.empty() || line[0] == '#') continue;
    const std::string where = path + ":" + std::to_string(number);
    std::vector<std::string> f = SplitTabs(line);
    if (f.size() != 3)
      return Status::BadInput(where + ": expected ID_A<TAB>ID_B<TAB>LABEL");
    LabelledPair p{f[0], f[1], false, 0, false, where};
    if (f[2] == "same" || f[2] == "different") {
      p.same = f[2] == "same";
    } else {
      char* end = nullptr;
      p.similarity = std::strtod(f[2].c_str(), &end);
      if (f[2].empty() || *end != '\0' || !(p.similarity >= 0 && p.similarity <= 1)) {
        return Status::BadInput(
            where + ": label \"" + f[2] +
            "\" is neither a similarity in [0, 1] nor same/different");
      }
      p.has_similarity = true;
    }
    out.push_back(std::move(p));
  }
  return out;
}

StatusOr<LabelReport> MeasureLabels(const IndexStore& store,
                                    const std::vector<LabelledPair>& pairs,
                                    const std::vector<double>& thresholds) {
  const SketchScheme& scheme = store.scheme();
  LabelReport report;
  report.scheme = scheme.Serialize();
  std::vector<ScoredPair> scored;
  bool all_labels = true, all_exact = true;
  for (const LabelledPair& p : pairs) {
    auto da = store.GetDocument(DocKey(p.a));
    auto db = store.GetDocument(DocKey(p.b));
    if (!da.ok() || !db.ok() || da->id != p.a || db->id != p.b) {
      ++report.unknown_ids;
      continue;
    }
    SHINGLETON_ASSIGN_OR_RETURN(std::vector<uint32_t> sa, store.GetSignature(da->key));
    SHINGLETON_ASSIGN_OR_RETURN(std::vector<uint32_t> sb, store.GetSignature(db->key));
    ScoredPair sp;
    sp.label = &p;
    sp.estimated = EstimateJaccard(sa.data(), sb.data(), scheme.num_hashes);
    sp.candidate = SharesBucket(scheme, sa.data(), sb.data());
    const bool whole =
        da->excerpt.size() == da->text_bytes && db->excerpt.size() == db->text_bytes;
    if (p.has_similarity) {
      sp.s = p.similarity;
    } else if (whole) {
      all_labels = false;
      sp.s = ExactJaccard(ShingleSetOfText(scheme, da->excerpt),
                          ShingleSetOfText(scheme, db->excerpt));
    } else {
      all_labels = all_exact = false;
      sp.s = sp.estimated;
    }
    scored.push_back(sp);
  }
  report.pairs = scored.size();
  report.similarity_source = all_labels  ? "labels"
                             : all_exact ? "exact (stored text)"
                                         : "estimated (signatures)";
  const int k = scheme.num_hashes;
  for (double t : thresholds) {
    MeasuredRow row;
    row.threshold = t;
    const int m = static_cast<int>(std::ceil(t * k - 1e-9));
    double q_true = 0, q_all = 0;
    for (const ScoredPair& sp : scored) {
      const bool truth =
          sp.label->has_similarity ? sp.label->similarity >= t : sp.label->same;
      const bool detected = sp.candidate && sp.estimated >= t;
      const double q = CandidateProbability(sp.s, scheme.bands, scheme.rows) *
                       BinomialTail(k, sp.s, m);
      row.true_pairs += truth;
      row.detected += detected;
      row.true_detected += truth && detected;
      q_all += q;
      if (truth) q_true += q;
    }
    row.precision =
        row.detected ? static_cast<double>(row.true_detected) / row.detected : 1;
    row.recall =
        row.true_pairs ? static_cast<double>(row.true_detected) / row.true_pairs : 1;
    row.predicted_precision = q_all > 0 ? q_true / q_all : 1;
    row.predicted_recall = row.true_pairs ? q_true / row.true_pairs : 1;
    report.rows.push_back(row);
  }
  return report;
}

}  // namespace shingleton
