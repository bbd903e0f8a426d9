#include "index/s_curve_svg.h"

#include <cstdio>

#include "index/bands.h"

namespace shingleton {
namespace {

std::string F(double v) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.2f", v);
  return buf;
}

// Maps (s, p) in [0,1]^2 to the plot area.
struct Frame {
  double left, top, w, h;
  double X(double s) const { return left + s * w; }
  double Y(double p) const { return top + (1 - p) * h; }
};

std::string Axes(const Frame& f) {
  std::string out = "<g stroke=\"#d0d0d0\" stroke-width=\"1\">\n";
  for (int i = 0; i <= 10; ++i) {
    const double v = i / 10.0;
    out += "<line x1=\"" + F(f.X(v)) + "\" y1=\"" + F(f.Y(0)) + "\" x2=\"" + F(f.X(v)) +
           "\" y2=\"" + F(f.Y(1)) + "\"/>\n";
    out += "<line x1=\"" + F(f.X(0)) + "\" y1=\"" + F(f.Y(v)) + "\" x2=\"" + F(f.X(1)) +
           "\" y2=\"" + F(f.Y(v)) + "\"/>\n";
  }
  out += "</g>\n<g stroke=\"#000000\" stroke-width=\"1.5\" fill=\"none\">\n";
  out += "<rect x=\"" + F(f.left) + "\" y=\"" + F(f.top) + "\" width=\"" + F(f.w) +
         "\" height=\"" + F(f.h) + "\"/>\n";
  out += "</g>\n<g font-family=\"sans-serif\" font-size=\"12\" fill=\"#000000\">\n";
  for (int i = 0; i <= 10; i += 2) {
    const double v = i / 10.0;
    out += "<text x=\"" + F(f.X(v)) + "\" y=\"" + F(f.Y(0) + 16) +
           "\" text-anchor=\"middle\">" + F(v).substr(0, 3) + "</text>\n";
    out += "<text x=\"" + F(f.left - 6) + "\" y=\"" + F(f.Y(v) + 4) +
           "\" text-anchor=\"end\">" + F(v).substr(0, 3) + "</text>\n";
  }
  out += "<text x=\"" + F(f.X(0.5)) + "\" y=\"" + F(f.Y(0) + 34) +
         "\" text-anchor=\"middle\">Jaccard similarity s</text>\n";
  out += "<text x=\"" + F(f.left - 40) + "\" y=\"" + F(f.Y(0.5)) +
         "\" text-anchor=\"middle\" transform=\"rotate(-90 " + F(f.left - 40) + " " +
         F(f.Y(0.5)) + ")\">P(candidate)</text>\n";
  out += "</g>\n";
  return out;
}

std::string F4(double v) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.4f", v);
  return buf;
}

}  // namespace

std::string SCurveSvg(const SCurvePlot& p) {
  const Frame f{60, 40, p.width - 90.0, p.height - 100.0};
  const int steps = 400;
  auto P = [&](double s) { return CandidateProbability(s, p.bands, p.rows); };
  std::string curve, fp_area, fn_area;
  for (int i = 0; i <= steps; ++i) {
    const double s = static_cast<double>(i) / steps;
    curve += (i ? " " : "") + F(f.X(s)) + "," + F(f.Y(P(s)));
  }
  fp_area = F(f.X(0)) + "," + F(f.Y(0));
  fn_area = F(f.X(p.threshold)) + "," + F(f.Y(1));
  for (int i = 0; i <= steps; ++i) {
    const double s = static_cast<double>(i) / steps;
    if (s <= p.threshold) fp_area += " " + F(f.X(s)) + "," + F(f.Y(P(s)));
    if (s >= p.threshold) fn_area += " " + F(f.X(s)) + "," + F(f.Y(P(s)));
  }
  fp_area += " " + F(f.X(p.threshold)) + "," + F(f.Y(P(p.threshold))) + " " +
             F(f.X(p.threshold)) + "," + F(f.Y(0));
  fn_area += " " + F(f.X(1)) + "," + F(f.Y(1));
  const Banding areas = EvaluateBanding(p.threshold, p.bands, p.rows);
  std::string out = "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n";
  out += "<svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\" width=\"" +
         std::to_string(p.width) + "\" height=\"" + std::to_string(p.height) +
         "\" viewBox=\"0 0 " + std::to_string(p.width) + " " + std::to_string(p.height) +
         "\">\n";
  out += "<title>LSH S-curve, b = " + std::to_string(p.bands) +
         ", r = " + std::to_string(p.rows) + "</title>\n";
  out += "<rect x=\"0\" y=\"0\" width=\"" + std::to_string(p.width) + "\" height=\"" +
         std::to_string(p.height) + "\" fill=\"#ffffff\"/>\n";
  out += Axes(f);
  out += "<polygon points=\"" + fp_area +
         "\" fill=\"#d62728\" fill-opacity=\"0.25\" stroke=\"none\"/>\n";
  out += "<polygon points=\"" + fn_area +
         "\" fill=\"#1f77b4\" fill-opacity=\"0.25\" stroke=\"none\"/>\n";
  out += "<polyline points=\"" + curve +
         "\" fill=\"none\" stroke=\"#000000\" stroke-width=\"2\"/>\n";
  out += "<line x1=\"" + F(f.X(p.threshold)) + "\" y1=\"" + F(f.Y(0)) + "\" x2=\"" +
         F(f.X(p.threshold)) + "\" y2=\"" + F(f.Y(1)) +
         "\" stroke=\"#2ca02c\" stroke-width=\"2\" stroke-dasharray=\"6 4\"/>\n";
  out += "<g font-family=\"sans-serif\" font-size=\"13\" fill=\"#000000\">\n";
  out += "<text x=\"" + F(f.left) + "\" y=\"24\">P(s) = 1 - (1 - s^" +
         std::to_string(p.rows) + ")^" + std::to_string(p.bands) +
         "   threshold t = " + F(p.threshold) +
         "   P(t) = " + F4(CandidateProbability(p.threshold, p.bands, p.rows)) +
         "</text>\n";
  out += "<text x=\"" + F(f.X(p.threshold) + 6) + "\" y=\"" + F(f.Y(0.05)) +
         "\" fill=\"#2ca02c\">t</text>\n";
  out += "<text x=\"" + F(f.left + 8) + "\" y=\"" + F(f.top + 18) +
         "\" fill=\"#d62728\">false-positive area " + F4(areas.false_positive_area) +
         "</text>\n";
  out += "<text x=\"" + F(f.left + 8) + "\" y=\"" + F(f.top + 36) +
         "\" fill=\"#1f77b4\">false-negative area " + F4(areas.false_negative_area) +
         "</text>\n";
  out += "</g>\n</svg>\n";
  return out;
}

}  // namespace shingleton
