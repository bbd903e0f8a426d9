// Rendering of inspection results (inspect.h) for people and for scripts:
// aligned text tables, optionally coloured (ANSI SGR, only when the caller says
// the output is a terminal), and JSON (RFC 8259, via JsonWriter) with every field.
// The CLI and the coordinator's Inspect RPC both render here, so `--index` and
// `--coordinator` print the same thing.
//
// Thread safety: pure functions.
#pragma once

#include <string>
#include <vector>

#include "index/inspect.h"

namespace shingleton {

struct ReportStyle {
  bool colour =
      false;  // ANSI colours (bold headers, kept/dropped, shared text). Default: off
  int width = 100;            // text width of diff output. Default: 100
  bool side_by_side = false;  // diff: two columns instead of one text after the other
};

// An aligned table: columns separated by two spaces; numeric columns right-aligned.
class TextTable {
 public:
  // `align` has one letter per column: 'l' or 'r'.
  TextTable(std::vector<std::string> headers, std::string align);
  void AddRow(std::vector<std::string> cells);
  std::string Render(const ReportStyle& style) const;

 private:
  std::vector<std::string> headers_;
  std::string align_;
  std::vector<std::vector<std::string>> rows_;
};

// Display width of UTF-8 text: its code points, ANSI colour sequences not counted
// (no wide or combining characters expected).
size_t DisplayWidth(const std::string& s);
std::string Fixed(double v, int digits = 4);

std::string StatsTable(const StatsReport& r, const ReportStyle& style);
std::string StatsJson(const StatsReport& r);
std::string ClustersTable(const std::vector<ClusterRow>& rows, const ReportStyle& style);
std::string ClustersJson(const std::vector<ClusterRow>& rows);
std::string ClusterTable(const ClusterReport& r, const ReportStyle& style);
std::string ClusterJson(const ClusterReport& r);
std::string ExplanationTable(const Explanation& x, const ReportStyle& style);
std::string ExplanationJson(const Explanation& x);
std::string QueryTable(const std::vector<TextQueryHit>& hits, const ReportStyle& style);
std::string QueryJson(const std::vector<TextQueryHit>& hits);
// Shared runs are [bracketed] without colour, coloured with it.
std::string DiffText(const DiffReport& r, const ReportStyle& style);
std::string DiffJson(const DiffReport& r);

// One inspection request, as the CLI and the Inspect RPC carry it.
struct InspectCommand {
  std::string command;            // stats | clusters | cluster | explain | query | diff
  std::vector<std::string> args;  // cluster: ID; explain: DOC; diff: A B
  ClusterQuery clusters;          // clusters
  size_t max_candidates = 20;     // explain: rejected candidates listed. Default: 20
  std::string text;               // query
  double min_similarity = 0;      // query; 0: the job's threshold
  size_t limit = 20;              // query. Default: 20
};

// Runs the command and renders it (JSON when `json`). InvalidArgument for an
// unknown command or wrong arguments.
StatusOr<std::string> RunInspection(const Inspector& inspector, const InspectCommand& c,
                                    const ReportStyle& style, bool json);

}  // namespace shingleton
