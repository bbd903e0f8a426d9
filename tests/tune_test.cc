// `shingleton tune`: the S-curve against the published table, the chosen layout
// against a brute-force search with independently integrated areas, the SVG as
// well-formed XML (parsed by Debian's Python), and labelled pairs on the demo
// index against demo_data/truth.tsv.
#include <gtest/gtest.h>
#include <simdjson.h>

#include <cmath>

#include "index/tuning.h"
#include "tests/process_util.h"
#include "tests/test_util.h"

namespace shingleton {
namespace {

using namespace shingleton::testing;

// Mining of Massive Datasets, Leskovec/Rajaraman/Ullman, ch. 3 (section 3.4.2,
// figure 3.11): b = 20, r = 5; values to the printed digits.
TEST(TuneTest, SCurveMatchesTheMmdsTable) {
  TuneOptions o;
  o.threshold = 0.5;
  o.num_hashes = 100;
  o.bands = 20;
  o.rows = 5;
  auto r = Tune(o);
  ASSERT_TRUE(r.ok()) << r.status().ToString();
  ASSERT_EQ(r->curve.size(), 10u);
  const struct {
    int index;  // s = (index + 1) / 10
    double value, tolerance;
  } table[] = {{1, 0.006, 5e-4}, {3, 0.186, 5e-4}, {4, 0.470, 5e-4},
               {5, 0.802, 5e-4}, {6, 0.975, 5e-4}, {7, 0.9996, 5e-5}};
  for (const auto& row : table) {
    EXPECT_NEAR(r->curve[row.index].s, (row.index + 1) / 10.0, 1e-12);
    EXPECT_NEAR(r->curve[row.index].p, row.value, row.tolerance)
        << "s = " << r->curve[row.index].s;
  }
}

// The areas by definition, ∫_0^t P and ∫_t^1 (1 - P), with the trapezoid rule on
// 20000 steps — a different rule from the library's Simpson.
double Area(int b, int r, double lo, double hi, bool complement) {
  const int n = 20000;
  double sum = 0;
  for (int i = 0; i <= n; ++i) {
    const double s = lo + (hi - lo) * i / n;
    const double p = 1 - std::pow(1 - std::pow(s, r), b);
    sum += (i == 0 || i == n ? 0.5 : 1.0) * (complement ? 1 - p : p);
  }
  return sum * (hi - lo) / n;
}

TEST(TuneTest, BestLayoutMinimisesTheWeightedAreas) {
  for (double t : {0.5, 0.8, 0.85}) {
    TuneOptions o;
    o.threshold = t;
    o.num_hashes = 64;
    auto r = Tune(o);
    ASSERT_TRUE(r.ok());
    const auto& best = r->best.banding;
    EXPECT_NEAR(best.false_positive_area, Area(best.bands, best.rows, 0, t, false), 1e-6);
    EXPECT_NEAR(best.false_negative_area, Area(best.bands, best.rows, t, 1, true), 1e-6);
    double min_cost = INFINITY;
    for (int b = 1; b <= 64; ++b) {
      for (int rows = 1; b * rows <= 64; ++rows) {
        min_cost = std::min(min_cost, 0.05 * Area(b, rows, 0, t, false) +
                                          0.95 * Area(b, rows, t, 1, true));
      }
    }
    EXPECT_NEAR(r->best.cost, min_cost, 1e-6) << "t = " << t;
    for (const LayoutRow& a : r->alternatives) EXPECT_GE(a.cost, r->best.cost - 1e-12);
  }
}

// By definition: P[Bin(10, 1/2) >= 8] = (C(10,8) + C(10,9) + C(10,10)) / 2^10 = 56/1024.
TEST(TuneTest, BinomialTailByDefinition) {
  EXPECT_NEAR(BinomialTail(10, 0.5, 8), 56.0 / 1024, 1e-12);
  EXPECT_NEAR(BinomialTail(128, 0.8, 0), 1.0, 1e-12);
  EXPECT_NEAR(BinomialTail(4, 0.3, 4), 0.3 * 0.3 * 0.3 * 0.3, 1e-12);
  EXPECT_EQ(BinomialTail(4, 0.3, 5), 0.0);
}

// The SVG is parsed by Python's xml.etree (Debian's /usr/bin/python3): the root is
// an SVG element, the curve has 401 points rising left to right, and the dashed
// threshold line stands at x = 60 + t * 550 (the plot frame).
TEST(TuneTest, SvgIsWellFormedXmlWithTheThresholdMarked) {
  TempDir dir;
  RunResult r = RunShingleton(
      {"tune", "--threshold", "0.85", "--hashes", "128", "--svg", dir.File("s.svg")});
  ASSERT_EQ(r.exit_code, 0) << r.output;
  EXPECT_NE(r.output.find("best layout: 12 bands x 10 rows"), std::string::npos)
      << r.output;
  WriteFile(dir.File("check.py"),
            "import sys, xml.etree.ElementTree as ET\n"
            "ns = '{http://www.w3.org/2000/svg}'\n"
            "root = ET.parse(sys.argv[1]).getroot()\n"
            "assert root.tag == ns + 'svg', root.tag\n"
            "pts = [tuple(map(float, p.split(','))) for p in root.find(ns + "
            "'polyline').get('points').split()]\n"
            "assert len(pts) == 401, len(pts)\n"
            "assert all(b[0] > a[0] and b[1] <= a[1] for a, b in zip(pts, pts[1:]))\n"
            "dashed = [l for l in root.iter(ns + 'line') if l.get('stroke-dasharray')]\n"
            "assert len(dashed) == 1 and abs(float(dashed[0].get('x1')) - (60 + 0.85 * "
            "550)) < 0.01\n"
            "print('svg ok')\n");
  const std::string cmd =
      "/usr/bin/python3 " + dir.File("check.py") + " " + dir.File("s.svg") + " 2>&1";
  FILE* p = ::popen(cmd.c_str(), "r");
  ASSERT_NE(p, nullptr);
  char buf[4096];
  std::string out;
  while (size_t n = std::fread(buf, 1, sizeof buf, p)) out.append(buf, n);
  EXPECT_EQ(::pclose(p), 0) << out;
  EXPECT_EQ(out, "svg ok\n");
}

// Labelled pairs from truth.tsv: each variant with its base ("same"), and unique
// documents paired with each other ("different"). Copies identical after
// normalisation (kinds exact, case-punct) have identical signatures, so they are
// detected at every threshold; unrelated unique pages share no shingle and are
// never detected, so measured precision is 1.
TEST(TuneTest, LabelsMeasuredNextToPredicted) {
  TempDir dir;
  ASSERT_EQ(RunShingleton({"dedup", "--input", DemoCorpusPath(), "--out", dir.File("out"),
                           "--store-text", "--quiet"})
                .exit_code,
            0);
  const auto truth = ReadDemoTruth();
  std::map<std::string, std::string> base_of;
  for (const auto& [id, t] : truth) {
    if (t.role == "base") base_of[t.family] = id;
  }
  std::string labels = "# id_a\tid_b\tlabel\n";
  size_t same = 0, copies = 0, different = 0;
  std::string last_unique;
  for (const auto& [id, t] : truth) {
    if (t.role == "variant") {
      labels += id + "\t" + base_of.at(t.family) + "\tsame\n";
      ++same;
      copies += t.kind == "exact" || t.kind == "case-punct";
    } else if (t.role == "unique") {
      if (!last_unique.empty() && different < 300) {
        labels += last_unique + "\t" + id + "\tdifferent\n";
        ++different;
      }
      last_unique = id;
    }
  }
  labels += "doc-none\t" + last_unique + "\tsame\n";
  WriteFile(dir.File("labels.tsv"), labels);
  RunResult r = RunShingleton({"tune", "--threshold", "0.8", "--hashes", "128",
                               "--labels", dir.File("labels.tsv"), "--index",
                               dir.File("out") + "/index", "--json"});
  ASSERT_EQ(r.exit_code, 0) << r.output;
  simdjson::dom::parser parser;
  simdjson::dom::element e;
  ASSERT_FALSE(parser.parse(r.output).get(e)) << r.output;
  simdjson::dom::element l = e["labels"];
  EXPECT_EQ(uint64_t(l["pairs"]), same + different);
  EXPECT_EQ(uint64_t(l["unknown_ids"]), 1u);
  EXPECT_EQ(std::string_view(l["similarity_source"]), "exact (stored text)");
  double last_recall = 2;
  size_t rows = 0;
  for (simdjson::dom::element row : l["rows"].get_array()) {
    ++rows;
    const double t = double(row["threshold"]);
    EXPECT_EQ(uint64_t(row["true_pairs"]), same);
    EXPECT_GE(uint64_t(row["true_detected"]), copies) << "t = " << t;
    EXPECT_DOUBLE_EQ(double(row["precision"]), 1.0) << "t = " << t;
    EXPECT_GE(double(row["predicted_precision"]), 0.99) << "t = " << t;
    const double recall = double(row["recall"]);
    EXPECT_LE(recall, last_recall + 1e-12);
    last_recall = recall;
    std::printf("t=%.2f recall measured %.4f predicted %.4f\n", t, recall,
                double(row["predicted_recall"]));
    // The model (S-curve x binomial estimate, tuning.h) on the pairs' exact Jaccard
    // predicts the measured recall; 0.05 is our tolerance for the demo's few hundred
    // pairs.
    EXPECT_NEAR(recall, double(row["predicted_recall"]), 0.05) << "t = " << t;
  }
  EXPECT_EQ(rows, 7u);  // t - 0.2 .. t + 0.1 by 0.05

  WriteFile(dir.File("bad.tsv"), "a\tb\tsame\nx\ty\tmaybe\n");
  RunResult bad = RunShingleton(
      {"tune", "--labels", dir.File("bad.tsv"), "--index", dir.File("out") + "/index"});
  EXPECT_EQ(bad.exit_code, 1);
  EXPECT_NE(bad.output.find(dir.File("bad.tsv") + ":2: label \"maybe\""),
            std::string::npos)
      << bad.output;
}

TEST(TuneTest, HelpDocumentsEveryOption) {
  RunResult r = RunShingleton({"tune", "--help"});
  EXPECT_EQ(r.exit_code, 0);
  for (const char* opt : {"--threshold FLOAT=0.8", "--hashes INT=128",
                          "--fp-weight FLOAT=0.05", "--bands INT=0", "--rows INT=0",
                          "--svg", "--labels", "--index", "--at", "--json"}) {
    EXPECT_NE(r.output.find(opt), std::string::npos)
        << "tune --help lacks " << opt << "\n"
        << r.output;
  }
}

}  // namespace
}  // namespace shingleton
