// `shingleton tune`: choose the LSH layout for a threshold before a crawl — the best
// (b, r) for k hashes with its false-positive and false-negative areas, the S-curve
// table, an SVG drawing — and, with labelled pairs on an existing index, measured
// precision and recall next to the model's prediction (index/tuning.h).
#include <unistd.h>

#include <fstream>
#include <iostream>
#include <memory>

#include "client/commands.h"
#include "index/index_store.h"
#include "index/inspect_report.h"
#include "index/json_writer.h"
#include "index/s_curve_svg.h"
#include "index/tuning.h"

namespace shingleton::cli {
namespace {

struct TuneFlags {
  TuneOptions options;
  std::string svg;
  std::string labels;
  std::string index;
  std::vector<double> thresholds;
  bool json = false;
};

void LayoutJson(JsonWriter* w, const LayoutRow& r) {
  w->BeginObject();
  w->FieldInt("bands", r.banding.bands);
  w->FieldInt("rows", r.banding.rows);
  w->FieldDouble("false_positive_area", r.banding.false_positive_area, 6);
  w->FieldDouble("false_negative_area", r.banding.false_negative_area, 6);
  w->FieldDouble("cost", r.cost, 6);
  w->FieldDouble("p_at_threshold", r.p_at_threshold, 6);
  w->EndObject();
}

std::string TuneJson(const TuneReport& r, const LabelReport* labels) {
  JsonWriter w;
  w.BeginObject();
  w.FieldDouble("threshold", r.options.threshold, 4);
  w.FieldInt("hashes", r.options.num_hashes);
  w.FieldDouble("fp_weight", r.options.fp_weight, 4);
  w.Key("best");
  LayoutJson(&w, r.best);
  w.Key("alternatives");
  w.BeginArray();
  for (const LayoutRow& a : r.alternatives) LayoutJson(&w, a);
  w.EndArray();
  w.Key("s_curve");
  w.BeginArray();
  for (const CurvePoint& p : r.curve) {
    w.BeginObject();
    w.FieldDouble("s", p.s, 2);
    w.FieldDouble("p", p.p, 6);
    w.EndObject();
  }
  w.EndArray();
  if (labels) {
    w.Key("labels");
    w.BeginObject();
    w.Field("scheme", labels->scheme);
    w.FieldUint("pairs", labels->pairs);
    w.FieldUint("unknown_ids", labels->unknown_ids);
    w.Field("similarity_source", labels->similarity_source);
    w.Key("rows");
    w.BeginArray();
    for (const MeasuredRow& m : labels->rows) {
      w.BeginObject();
      w.FieldDouble("threshold", m.threshold, 4);
      w.FieldUint("true_pairs", m.true_pairs);
      w.FieldUint("detected", m.detected);
      w.FieldUint("true_detected", m.true_detected);
      w.FieldDouble("precision", m.precision, 4);
      w.FieldDouble("recall", m.recall, 4);
      w.FieldDouble("predicted_precision", m.predicted_precision, 4);
      w.FieldDouble("predicted_recall", m.predicted_recall, 4);
      w.EndObject();
    }
    w.EndArray();
    w.EndObject();
  }
  w.EndObject();
  return w.Take() + "\n";
}

std::string TuneTable(const TuneReport& r, const LabelReport* labels,
                      const ReportStyle& style) {
  const Banding& b = r.best.banding;
  std::string out = "threshold " + Fixed(r.options.threshold, 2) +
                    ", k = " + std::to_string(r.options.num_hashes) +
                    " hashes, false-positive weight " + Fixed(r.options.fp_weight, 2) +
                    "\n";
  out += "best layout: " + std::to_string(b.bands) + " bands x " +
         std::to_string(b.rows) + " rows (dedup --bands " + std::to_string(b.bands) +
         " --rows " + std::to_string(b.rows) +
         "); P(t) = " + Fixed(r.best.p_at_threshold) + "\n\n";
  TextTable layouts({"bands", "rows", "FP area", "FN area", "cost", "P(t)"}, "rrrrrr");
  auto add = [&](const LayoutRow& l) {
    layouts.AddRow({std::to_string(l.banding.bands), std::to_string(l.banding.rows),
                    Fixed(l.banding.false_positive_area, 5),
                    Fixed(l.banding.false_negative_area, 5), Fixed(l.cost, 5),
                    Fixed(l.p_at_threshold)});
  };
  add(r.best);
  for (const LayoutRow& a : r.alternatives) add(a);
  out += layouts.Render(style) +
         "(first row: the best; then the best few using k / r bands of r rows)\n\n";
  TextTable curve({"s", "P(s) = 1-(1-s^r)^b"}, "rr");
  for (const CurvePoint& p : r.curve) curve.AddRow({Fixed(p.s, 1), Fixed(p.p)});
  out += curve.Render(style);
  if (labels) {
    out += "\nlabelled pairs: " + std::to_string(labels->pairs) + " (" +
           std::to_string(labels->unknown_ids) +
           " naming ids not in the index left out); index scheme " + labels->scheme +
           "; similarity for the prediction: " + labels->similarity_source + "\n";
    TextTable m({"threshold", "true pairs", "detected", "precision", "predicted",
                 "recall", "predicted"},
                "rrrrrrr");
    for (const MeasuredRow& row : labels->rows) {
      m.AddRow({Fixed(row.threshold, 2), std::to_string(row.true_pairs),
                std::to_string(row.detected), Fixed(row.precision),
                Fixed(row.predicted_precision), Fixed(row.recall),
                Fixed(row.predicted_recall)});
    }
    out += m.Render(style);
  }
  return out;
}

int RunTune(TuneFlags& f) {
  auto report = Tune(f.options);
  if (!report.ok()) {
    std::cerr << "shingleton tune: " << report.status().message() << "\n";
    return 2;
  }
  for (double t : f.thresholds) {
    if (!(t > 0 && t < 1)) {
      std::cerr << "shingleton tune: --at " << t << " is not in (0, 1)\n";
      return 2;
    }
  }
  if (!f.labels.empty() && f.index.empty()) {
    std::cerr << "shingleton tune: --labels needs --index\n";
    return 2;
  }
  std::unique_ptr<LabelReport> labels;
  if (!f.labels.empty()) {
    StoreOptions so;
    so.read_only = true;
    auto store = IndexStore::Open(f.index, nullptr, so);
    auto pairs = ReadLabels(f.labels);
    Status s = !store.ok() ? store.status() : !pairs.ok() ? pairs.status() : Status::Ok();
    std::vector<double> thresholds = f.thresholds;
    if (thresholds.empty()) {
      for (int i = -4; i <= 2; ++i) {
        const double t = f.options.threshold + 0.05 * i;
        if (t > 0.01 && t < 0.999) thresholds.push_back(t);
      }
    }
    if (s.ok()) {
      auto measured = MeasureLabels(*store.value(), pairs.value(), thresholds);
      s = measured.status();
      if (s.ok()) labels = std::make_unique<LabelReport>(std::move(measured.value()));
    }
    if (!s.ok()) {
      std::cerr << "shingleton tune: " << s.ToString() << "\n";
      return 1;
    }
  }
  if (!f.svg.empty()) {
    SCurvePlot plot;
    plot.bands = report->best.banding.bands;
    plot.rows = report->best.banding.rows;
    plot.threshold = f.options.threshold;
    std::ofstream out(f.svg, std::ios::binary | std::ios::trunc);
    out << SCurveSvg(plot);
    if (!out.flush()) {
      std::cerr << "shingleton tune: cannot write " << f.svg << "\n";
      return 1;
    }
  }
  ReportStyle style;
  style.colour = ::isatty(STDOUT_FILENO) == 1;
  std::cout << (f.json ? TuneJson(*report, labels.get())
                       : TuneTable(*report, labels.get(), style));
  return 0;
}

}  // namespace

void AddTuneCommand(CLI::App* app, int* rc) {
  auto f = std::make_shared<TuneFlags>();
  CLI::App* cmd = app->add_subcommand("tune",
                                      "Choose LSH bands and rows for a threshold: the "
                                      "best (b, r) for k hashes with its false-positive\n"
                                      "and false-negative areas under the S-curve "
                                      "1-(1-s^r)^b, the curve at s = 0.1..1.0, an SVG\n"
                                      "drawing; with --labels on an --index, measured "
                                      "precision and recall next to predicted.");
  cmd->add_option("-t,--threshold", f->options.threshold,
                  "Similarity threshold of the next job (0 < t < 1)")
      ->capture_default_str();
  cmd->add_option("--hashes", f->options.num_hashes, "MinHash signature length k")
      ->capture_default_str();
  cmd->add_option("--fp-weight", f->options.fp_weight,
                  "Weight of the false-positive area (spurious candidates); the "
                  "false-negative area "
                  "(missed pairs) gets 1 - w")
      ->capture_default_str();
  cmd->add_option("--bands", f->options.bands,
                  "Evaluate this many bands instead of choosing; 0 chooses")
      ->capture_default_str();
  cmd->add_option("--rows", f->options.rows, "Rows per band with --bands; 0 chooses")
      ->capture_default_str();
  cmd->add_option("--svg", f->svg,
                  "Also draw the S-curve with the threshold marked into this SVG file");
  cmd->add_option("--labels", f->labels,
                  "TSV of labelled pairs: ID_A<TAB>ID_B<TAB>LABEL, LABEL a similarity in "
                  "[0, 1] or "
                  "same/different; needs --index")
      ->check(CLI::ExistingFile);
  cmd->add_option("--index", f->index,
                  "An existing index whose documents the labels name")
      ->check(CLI::ExistingDirectory);
  cmd->add_option("--at", f->thresholds,
                  "Thresholds at which --labels are measured; repeatable [default: t-0.2 "
                  ".. t+0.1 by 0.05]");
  cmd->add_flag("--json", f->json, "Print JSON instead of tables [default: off]");
  cmd->callback([f, rc] { *rc = RunTune(*f); });
}

}  // namespace shingleton::cli
