#include "index/inspect_report.h"

#include <algorithm>
#include <cstdio>

#include "index/json_writer.h"
#include "index/manifest.h"
#include "index/normalizer.h"

namespace shingleton {
namespace {

constexpr const char* kBold = "\x1b[1m";
constexpr const char* kGreen = "\x1b[32m";
constexpr const char* kRed = "\x1b[31m";
constexpr const char* kReset = "\x1b[0m";

std::string Paint(const std::string& s, const char* sgr, const ReportStyle& style) {
  return style.colour ? sgr + s + kReset : s;
}

std::string Pad(const std::string& s, size_t width, bool right) {
  const size_t w = DisplayWidth(s);
  if (w >= width) return s;
  return right ? std::string(width - w, ' ') + s : s + std::string(width - w, ' ');
}

std::string Num(uint64_t v) { return std::to_string(v); }

std::string MiB(uint64_t bytes) {
  return Fixed(static_cast<double>(bytes) / (1024.0 * 1024.0), 1) + " MiB";
}

std::string Section(const std::string& title, const ReportStyle& style) {
  return Paint(title, kBold, style) + "\n";
}

std::string DecisionText(const DecisionInfo& d, const ReportStyle& style) {
  if (d.kept) return Paint("kept", kGreen, style);
  return Paint("dropped", kRed, style) + " (" + d.reason + ") as a duplicate of " +
         d.duplicate_of;
}

void DocFields(JsonWriter* w, const DocInfo& d) {
  w->Field("id", d.id);
  w->Field("key", ClusterLabel(d.key));
  w->Field("url", d.url);
  w->Field("source", d.source);
  w->FieldUint("text_bytes", d.text_bytes);
  w->FieldUint("tokens", d.tokens);
  w->FieldBool("full_text", d.full_text);
}

void DecisionFields(JsonWriter* w, const DecisionInfo& d) {
  w->FieldBool("kept", d.kept);
  w->Key("duplicate_of");
  if (d.kept) {
    w->Null();
  } else {
    w->String(d.duplicate_of);
  }
  w->Field("reason", d.reason);
  w->Field("cluster", d.cluster);
  w->FieldUint("cluster_size", d.cluster_size);
  w->FieldDouble("similarity", d.similarity, 4);
}

std::string BandList(const std::vector<int>& bands) {
  std::string s;
  for (int b : bands) s += (s.empty() ? "" : ",") + std::to_string(b);
  return s.empty() ? "-" : s;
}

// Words of a run list with a shared flag (a word is shared if any byte of it is).
std::vector<std::pair<std::string, bool>> Words(const std::vector<TextRun>& runs) {
  std::vector<std::pair<std::string, bool>> words;
  bool open = false;  // the last word continues into the next run
  for (const TextRun& r : runs) {
    size_t i = 0;
    while (i <= r.text.size()) {
      size_t j = r.text.find(' ', i);
      if (j == std::string::npos) j = r.text.size();
      const std::string piece = r.text.substr(i, j - i);
      if (open && !words.empty()) {
        words.back().first += piece;
        words.back().second = words.back().second || (r.shared && !piece.empty());
      } else if (!piece.empty()) {
        words.push_back({piece, r.shared});
      }
      open = j == r.text.size();
      if (j == r.text.size()) break;
      i = j + 1;
    }
  }
  return words;
}

// Greedy line filling; shared runs are bracketed (no colour) or green.
std::vector<std::string> WrapMarked(
    const std::vector<std::pair<std::string, bool>>& words, size_t width,
    const ReportStyle& style, std::vector<size_t>* widths) {
  std::vector<std::string> lines;
  std::string line;
  size_t line_width = 0;
  bool in_shared = false;
  auto close = [&] {
    if (in_shared) line += style.colour ? kReset : "]";
    in_shared = false;
  };
  auto flush = [&] {
    close();
    lines.push_back(line);
    widths->push_back(line_width);
    line.clear();
    line_width = 0;
  };
  for (const auto& [word, shared] : words) {
    const size_t extra =
        (shared && !in_shared && !style.colour ? 2 : 0) + (line_width ? 1 : 0);
    if (line_width && line_width + extra + DisplayWidth(word) > width) flush();
    if (line_width) {
      if (in_shared && !shared) close();
      line += ' ';
      ++line_width;
    }
    if (shared && !in_shared) {
      line += style.colour ? kGreen : "[";
      line_width += style.colour ? 0 : 2;  // the closing bracket counted now
      in_shared = true;
    } else if (!shared && in_shared) {
      close();
    }
    line += word;
    line_width += DisplayWidth(word);
  }
  if (line_width || lines.empty()) flush();
  return lines;
}

}  // namespace

size_t DisplayWidth(const std::string& s) {
  size_t n = 0;
  for (size_t i = 0; i < s.size(); ++i) {
    if (s[i] == '\x1b') {  // an SGR sequence (ESC [ ... m) takes no room
      while (i < s.size() && s[i] != 'm') ++i;
      continue;
    }
    n += (static_cast<unsigned char>(s[i]) & 0xC0) != 0x80;
  }
  return n;
}

std::string Fixed(double v, int digits) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*f", digits, v);
  return buf;
}

TextTable::TextTable(std::vector<std::string> headers, std::string align)
    : headers_(std::move(headers)), align_(std::move(align)) {
  align_.resize(headers_.size(), 'l');
}

void TextTable::AddRow(std::vector<std::string> cells) {
  cells.resize(headers_.size());
  rows_.push_back(std::move(cells));
}

std::string TextTable::Render(const ReportStyle& style) const {
  std::vector<size_t> width(headers_.size());
  for (size_t c = 0; c < headers_.size(); ++c) {
    width[c] = DisplayWidth(headers_[c]);
    for (const auto& row : rows_) width[c] = std::max(width[c], DisplayWidth(row[c]));
  }
  auto line = [&](const std::vector<std::string>& cells, bool header) {
    std::string out;
    for (size_t c = 0; c < cells.size(); ++c) {
      const bool last = c + 1 == cells.size();
      std::string cell =
          Pad(cells[c], last && align_[c] == 'l' ? 0 : width[c], align_[c] == 'r');
      out += (c ? "  " : "") + (header ? Paint(cell, kBold, style) : cell);
    }
    while (!out.empty() && out.back() == ' ') out.pop_back();
    return out + "\n";
  };
  std::string out = line(headers_, true);
  for (const auto& row : rows_) out += line(row, false);
  return out;
}

std::string StatsTable(const StatsReport& r, const ReportStyle& style) {
  TextTable t({"", ""}, "ll");
  t.AddRow({"index", r.index_path});
  t.AddRow({"scheme", r.scheme});
  t.AddRow({"threshold", r.threshold > 0 ? Fixed(r.threshold) : "unknown"});
  t.AddRow({"keep policy", r.keep_policy.empty() ? "unknown" : r.keep_policy});
  t.AddRow({"documents", Num(r.documents)});
  t.AddRow({"kept", Num(r.kept)});
  t.AddRow({"dropped", Num(r.dropped)});
  for (const auto& [reason, n] : r.dropped_by_reason) t.AddRow({"  " + reason, Num(n)});
  t.AddRow({"clusters (2+ documents)", Num(r.clusters)});
  t.AddRow({"largest cluster", Num(r.largest_cluster)});
  t.AddRow(
      {"chained clusters", Num(r.chained_clusters) + " (spread below the threshold)"});
  t.AddRow({"verified edges", Num(r.edges)});
  t.AddRow({"whole text stored",
            Num(r.full_text_documents) + " of " + Num(r.documents) + " documents"});
  const uint64_t per_doc = r.documents ? r.bytes_on_disk / r.documents : 0;
  t.AddRow({"index on disk",
            MiB(r.bytes_on_disk) + " (" + Num(per_doc) + " bytes per document)"});
  std::string out = Section("Job", style);
  const std::string body = t.Render(style);
  out += body.substr(body.find('\n') + 1);  // no header line for a key-value table
  TextTable h({"cluster size", "clusters"}, "rr");
  for (const auto& [bin, n] : r.size_histogram) h.AddRow({bin, Num(n)});
  out += "\n" + Section("Cluster sizes", style) + h.Render(style);
  return out;
}

std::string StatsJson(const StatsReport& r) {
  JsonWriter w;
  w.BeginObject();
  w.Field("index", r.index_path);
  w.Field("scheme", r.scheme);
  w.FieldDouble("threshold", r.threshold, 4);
  w.Field("keep_policy", r.keep_policy);
  for (const auto& [k, v] : std::vector<std::pair<const char*, uint64_t>>{
           {"documents", r.documents},
           {"kept", r.kept},
           {"dropped", r.dropped},
           {"clusters", r.clusters},
           {"largest_cluster", r.largest_cluster},
           {"chained_clusters", r.chained_clusters},
           {"edges", r.edges},
           {"full_text_documents", r.full_text_documents},
           {"bytes_on_disk", r.bytes_on_disk}}) {
    w.FieldUint(k, v);
  }
  w.FieldDouble("bytes_per_document",
                r.documents ? static_cast<double>(r.bytes_on_disk) / r.documents : 0, 1);
  w.Key("dropped_by_reason");
  w.BeginObject();
  for (const auto& [reason, n] : r.dropped_by_reason) {
    w.FieldUint(reason, n);
  }
  w.EndObject();
  w.Key("cluster_sizes");
  w.BeginArray();
  for (const auto& [bin, n] : r.size_histogram) {
    w.BeginObject();
    w.Field("size", bin);
    w.FieldUint("clusters", n);
    w.EndObject();
  }
  w.EndArray();
  w.EndObject();
  return w.Take();
}

std::string ClustersTable(const std::vector<ClusterRow>& rows, const ReportStyle& style) {
  if (rows.empty()) return "no cluster matches\n";
  TextTable t({"cluster", "size", "spread", "kept document"}, "lrrl");
  for (const ClusterRow& r : rows)
    t.AddRow({r.cluster, Num(r.size), Fixed(r.spread), r.kept_id});
  return t.Render(style);
}

std::string ClustersJson(const std::vector<ClusterRow>& rows) {
  JsonWriter w;
  w.BeginArray();
  for (const ClusterRow& r : rows) {
    w.BeginObject();
    w.Field("cluster", r.cluster);
    w.FieldUint("size", r.size);
    w.FieldDouble("spread", r.spread, 4);
    w.Field("kept_id", r.kept_id);
    w.EndObject();
  }
  w.EndArray();
  return w.Take();
}

std::string ClusterTable(const ClusterReport& r, const ReportStyle& style) {
  std::string out = Section("Cluster " + r.summary.cluster + ": " + Num(r.summary.size) +
                                " documents, kept " + r.summary.kept_id + ", spread " +
                                Fixed(r.summary.spread),
                            style);
  TextTable t({"id", "decision", "est. J", "exact J", "bytes", "url"}, "llrrrl");
  for (const MemberRow& m : r.members) {
    t.AddRow({m.doc.id,
              m.decision.kept ? Paint("kept", kGreen, style)
                              : "dropped (" + m.decision.reason + ")",
              Fixed(m.decision.similarity),
              m.exact_jaccard >= 0 ? Fixed(m.exact_jaccard) : "-", Num(m.doc.text_bytes),
              m.doc.url});
  }
  out += t.Render(style);
  bool any_exact = false;
  for (const MemberRow& m : r.members) any_exact = any_exact || m.exact_jaccard >= 0;
  if (!any_exact) out += "exact J needs the whole texts: run dedup with --store-text\n";
  return out;
}

std::string ClusterJson(const ClusterReport& r) {
  JsonWriter w;
  w.BeginObject();
  w.Field("cluster", r.summary.cluster);
  w.Field("kept_id", r.summary.kept_id);
  w.FieldUint("size", r.summary.size);
  w.FieldDouble("spread", r.summary.spread, 4);
  w.Key("members");
  w.BeginArray();
  for (const MemberRow& m : r.members) {
    w.BeginObject();
    DocFields(&w, m.doc);
    DecisionFields(&w, m.decision);
    w.Key("exact_jaccard");
    if (m.exact_jaccard >= 0) {
      w.Double(m.exact_jaccard, 4);
    } else {
      w.Null();
    }
    w.EndObject();
  }
  w.EndArray();
  w.EndObject();
  return w.Take();
}

std::string ExplanationTable(const Explanation& x, const ReportStyle& style) {
  std::string out = Section(x.doc.id + ": " + DecisionText(x.decision, style), style);
  TextTable facts({"", ""}, "ll");
  if (!x.decision.kept)
    facts.AddRow({"estimated Jaccard to it", Fixed(x.decision.similarity)});
  facts.AddRow({"cluster", x.decision.cluster + " (" + Num(x.decision.cluster_size) +
                               " documents)"});
  facts.AddRow({"url", x.doc.url});
  facts.AddRow({"source", x.doc.source});
  facts.AddRow(
      {"text", Num(x.doc.text_bytes) + " bytes, " + Num(x.doc.tokens) + " tokens"});
  facts.AddRow({"job threshold", Fixed(x.threshold)});
  const std::string body = facts.Render(style);
  out += body.substr(body.find('\n') + 1);
  out += "\n" + Section("Evidence: documents sharing a bucket with it", style);
  out +=
      "edge: a verified pair the job stored; below threshold: compared and rejected; not "
      "verified:\n"
      "similar but never compared directly (an exact copy's pairs are verified on its "
      "first copy;\n"
      "large buckets compare with leaders only)\n";
  if (x.evidence.empty()) {
    out += "no document shares a bucket with it\n";
  } else {
    TextTable t({"other", "kind", "est. J", "shared bands", "other's decision"}, "llrll");
    for (const EvidenceRow& e : x.evidence) {
      const std::string kind = e.exact                      ? "edge (exact)"
                               : e.edge                     ? "edge"
                               : e.similarity < x.threshold ? "below threshold"
                                                            : "not verified";
      t.AddRow(
          {e.other_id, kind, Fixed(e.similarity), BandList(e.bands), e.other_decision});
    }
    out += t.Render(style);
    if (x.candidates_not_shown)
      out += "(" + Num(x.candidates_not_shown) + " more candidates not shown)\n";
  }
  if (!x.chain.empty()) {
    out += "\n" + Section("Chain of edges to the kept document", style);
    TextTable c({"from", "to", "est. J", "via"}, "llrl");
    for (const ChainHop& h : x.chain)
      c.AddRow({h.from, h.to, Fixed(h.similarity), h.via});
    out += c.Render(style);
  }
  return out;
}

std::string ExplanationJson(const Explanation& x) {
  JsonWriter w;
  w.BeginObject();
  DocFields(&w, x.doc);
  DecisionFields(&w, x.decision);
  w.FieldDouble("threshold", x.threshold, 4);
  w.Key("evidence");
  w.BeginArray();
  for (const EvidenceRow& e : x.evidence) {
    w.BeginObject();
    w.Field("other_id", e.other_id);
    w.FieldBool("edge", e.edge);
    w.FieldBool("exact", e.exact);
    w.FieldDouble("similarity", e.similarity, 4);
    w.Key("bands");
    w.BeginArray();
    for (int b : e.bands) w.Int(b);
    w.EndArray();
    w.Field("other_decision", e.other_decision);
    w.EndObject();
  }
  w.EndArray();
  w.FieldUint("candidates_not_shown", x.candidates_not_shown);
  w.Key("chain");
  w.BeginArray();
  for (const ChainHop& h : x.chain) {
    w.BeginObject();
    w.Field("from", h.from);
    w.Field("to", h.to);
    w.FieldDouble("similarity", h.similarity, 4);
    w.Field("via", h.via);
    w.EndObject();
  }
  w.EndArray();
  w.EndObject();
  return w.Take();
}

std::string QueryTable(const std::vector<TextQueryHit>& hits, const ReportStyle& style) {
  if (hits.empty()) return "no near-duplicate in the index\n";
  TextTable t({"id", "est. J", "bands", "decision", "url"}, "lrrll");
  for (const TextQueryHit& h : hits)
    t.AddRow({h.id, Fixed(h.similarity), Num(h.bands), h.decision, h.url});
  return t.Render(style);
}

std::string QueryJson(const std::vector<TextQueryHit>& hits) {
  JsonWriter w;
  w.BeginArray();
  for (const TextQueryHit& h : hits) {
    w.BeginObject();
    w.Field("id", h.id);
    w.Field("url", h.url);
    w.FieldDouble("similarity", h.similarity, 4);
    w.FieldInt("bands", h.bands);
    w.Field("decision", h.decision);
    w.EndObject();
  }
  w.EndArray();
  return w.Take();
}

std::string DiffText(const DiffReport& r, const ReportStyle& style) {
  TextTable t({"", "A", "B"}, "lll");
  t.AddRow({"id", r.a.id, r.b.id});
  t.AddRow({"url", r.a.url, r.b.url});
  t.AddRow({"text bytes", Num(r.a.text_bytes), Num(r.b.text_bytes)});
  t.AddRow({"stored", r.a.full_text ? "whole text" : "excerpt",
            r.b.full_text ? "whole text" : "excerpt"});
  t.AddRow({"shingles", Num(r.shingles_a), Num(r.shingles_b)});
  std::string out = t.Render(style);
  out += "shared shingles " + Num(r.shared_shingles) + "; Jaccard of the stored texts " +
         Fixed(r.text_jaccard) +
         (r.exact ? " (exact)"
                  : " (excerpts only; run dedup with --store-text for whole texts)") +
         "; estimated Jaccard " + Fixed(r.estimated_jaccard) + "\n";
  out += std::string("normalised text as the shingler sees it; ") +
         (style.colour ? "shared shingles in green" : "shared shingles in [brackets]") +
         "\n\n";
  const auto words_a = Words(r.runs_a), words_b = Words(r.runs_b);
  if (!style.side_by_side) {
    std::vector<size_t> wa, wb;
    out += Section("A " + r.a.id, style);
    for (const auto& l :
         WrapMarked(words_a, static_cast<size_t>(std::max(20, style.width)), style, &wa))
      out += l + "\n";
    out += "\n" + Section("B " + r.b.id, style);
    for (const auto& l :
         WrapMarked(words_b, static_cast<size_t>(std::max(20, style.width)), style, &wb))
      out += l + "\n";
    return out;
  }
  const size_t col = static_cast<size_t>(std::max(20, (style.width - 3) / 2));
  std::vector<size_t> wa, wb;
  const auto la = WrapMarked(words_a, col, style, &wa),
             lb = WrapMarked(words_b, col, style, &wb);
  out += Pad(Paint("A " + r.a.id, kBold, style), col, false) + " | " +
         Paint("B " + r.b.id, kBold, style) + "\n";
  for (size_t i = 0; i < std::max(la.size(), lb.size()); ++i) {
    std::string left = i < la.size() ? la[i] : "";
    const size_t lw = i < la.size() ? wa[i] : 0;
    if (lw < col) left += std::string(col - lw, ' ');
    std::string right = i < lb.size() ? lb[i] : "";
    std::string line = left + " | " + right;
    while (!line.empty() && line.back() == ' ') line.pop_back();
    out += line + "\n";
  }
  return out;
}

std::string DiffJson(const DiffReport& r) {
  JsonWriter w;
  auto runs = [&w](const char* key, const std::vector<TextRun>& rs) {
    w.Key(key);
    w.BeginArray();
    for (const TextRun& run : rs) {
      w.BeginObject();
      w.Field("text", run.text);
      w.FieldBool("shared", run.shared);
      w.EndObject();
    }
    w.EndArray();
  };
  w.BeginObject();
  w.Key("a");
  w.BeginObject();
  DocFields(&w, r.a);
  w.EndObject();
  w.Key("b");
  w.BeginObject();
  DocFields(&w, r.b);
  w.EndObject();
  w.FieldUint("shingles_a", r.shingles_a);
  w.FieldUint("shingles_b", r.shingles_b);
  w.FieldUint("shared_shingles", r.shared_shingles);
  w.FieldDouble("text_jaccard", r.text_jaccard, 4);
  w.FieldBool("exact", r.exact);
  w.FieldDouble("estimated_jaccard", r.estimated_jaccard, 4);
  runs("runs_a", r.runs_a);
  runs("runs_b", r.runs_b);
  w.EndObject();
  return w.Take();
}

StatusOr<std::string> RunInspection(const Inspector& inspector, const InspectCommand& c,
                                    const ReportStyle& style, bool json) {
  auto need = [&](size_t n) -> Status {
    if (c.args.size() == n) return Status::Ok();
    return Status::InvalidArgument(c.command + " takes " + std::to_string(n) +
                                   " argument(s), got " + std::to_string(c.args.size()));
  };
  if (c.command == "stats") {
    SHINGLETON_ASSIGN_OR_RETURN(StatsReport r, inspector.Stats());
    return json ? StatsJson(r) + "\n" : StatsTable(r, style);
  }
  if (c.command == "clusters") {
    SHINGLETON_ASSIGN_OR_RETURN(std::vector<ClusterRow> rows,
                                inspector.Clusters(c.clusters));
    return json ? ClustersJson(rows) + "\n" : ClustersTable(rows, style);
  }
  if (c.command == "cluster") {
    SHINGLETON_RETURN_IF_ERROR(need(1));
    SHINGLETON_ASSIGN_OR_RETURN(ClusterReport r, inspector.Cluster(c.args[0]));
    return json ? ClusterJson(r) + "\n" : ClusterTable(r, style);
  }
  if (c.command == "explain") {
    SHINGLETON_RETURN_IF_ERROR(need(1));
    SHINGLETON_ASSIGN_OR_RETURN(Explanation x,
                                inspector.Explain(c.args[0], c.max_candidates));
    return json ? ExplanationJson(x) + "\n" : ExplanationTable(x, style);
  }
  if (c.command == "query") {
    SHINGLETON_RETURN_IF_ERROR(ValidateUtf8(c.text));
    SHINGLETON_ASSIGN_OR_RETURN(std::vector<TextQueryHit> hits,
                                inspector.Query(c.text, c.min_similarity, c.limit));
    return json ? QueryJson(hits) + "\n" : QueryTable(hits, style);
  }
  if (c.command == "diff") {
    SHINGLETON_RETURN_IF_ERROR(need(2));
    SHINGLETON_ASSIGN_OR_RETURN(DiffReport r, inspector.Diff(c.args[0], c.args[1]));
    return json ? DiffJson(r) + "\n" : DiffText(r, style);
  }
  return Status::InvalidArgument("unknown inspect command \"" + c.command + "\"");
}

}  // namespace shingleton
