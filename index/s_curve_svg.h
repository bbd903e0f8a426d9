// An SVG 1.1 drawing of the LSH S-curve P(s) = 1 - (1 - s^r)^b (bands.h) with the
// threshold marked and the false-positive area (under the curve left of t) and
// false-negative area (above it right of t) shaded. Own plotting code: a
// self-contained, well-formed XML document, no scripts, no external references.
//
// Thread safety: pure function.
#pragma once

#include <string>

namespace shingleton {

struct SCurvePlot {
  int bands = 16, rows = 8;       // the layout drawn. Default: 16 x 8
  double threshold = 0.8;         // marked with a vertical line. Default: 0.8
  int width = 640, height = 420;  // pixels. Default: 640 x 420
};

std::string SCurveSvg(const SCurvePlot& plot);

}  // namespace shingleton
