#include "client/progress.h"

#include <unistd.h>

#include <cstdio>
#include <sstream>

namespace shingleton::cli {

std::string WithCommas(uint64_t n) {
  std::string digits = std::to_string(n), out;
  for (size_t i = 0; i < digits.size(); ++i) {
    if (i > 0 && (digits.size() - i) % 3 == 0) out.push_back(',');
    out.push_back(digits[i]);
  }
  return out;
}

std::string HumanBytes(double bytes) {
  const char* units[] = {"B", "KB", "MB", "GB", "TB"};
  int u = 0;
  while (bytes >= 1000 && u < 4) bytes /= 1000, ++u;
  char buf[32];
  std::snprintf(buf, sizeof buf, u == 0 ? "%.0f %s" : "%.1f %s", bytes, units[u]);
  return buf;
}

namespace {
std::string Clock(double seconds) {
  if (seconds < 0 || seconds > 99 * 3600) return "--:--";
  int s = static_cast<int>(seconds + 0.5);
  char buf[32];
  if (s >= 3600) {
    std::snprintf(buf, sizeof buf, "%d:%02d:%02d", s / 3600, s / 60 % 60, s % 60);
  } else {
    std::snprintf(buf, sizeof buf, "%02d:%02d", s / 60, s % 60);
  }
  return buf;
}
}  // namespace

ProgressLine::ProgressLine() : enabled_(::isatty(STDERR_FILENO) == 1) {}
ProgressLine::~ProgressLine() { Finish(); }

void ProgressLine::Update(const JobProgress& p) {
  if (!enabled_) return;
  std::lock_guard<std::mutex> lock(mu_);
  const double secs = p.seconds > 0 ? p.seconds : 1e-9;
  std::ostringstream line;
  line << "\r\033[K" << p.phase << "  docs " << WithCommas(p.docs) << "  "
       << HumanBytes(static_cast<double>(p.text_bytes)) << "  "
       << WithCommas(static_cast<uint64_t>(p.docs / secs)) << " docs/s  "
       << HumanBytes(p.text_bytes / secs) << "/s";
  if (p.phase == "reading" && p.raw_bytes_total > 0 && p.raw_bytes_done > 0) {
    const double frac = static_cast<double>(p.raw_bytes_done) / p.raw_bytes_total;
    char pct[16];
    std::snprintf(pct, sizeof pct, "%.0f%%", 100 * frac);
    line << "  " << pct << "  ETA " << Clock(secs * (1 - frac) / frac);
  }
  std::fputs(line.str().c_str(), stderr);
  std::fflush(stderr);
  drawn_ = true;
}

void ProgressLine::Finish() {
  std::lock_guard<std::mutex> lock(mu_);
  if (drawn_) std::fputs("\r\033[K", stderr);
  drawn_ = false;
}

std::string SummaryTable(const DedupSummary& s, const std::string& out_dir) {
  auto pct = [&](uint64_t n) {
    char buf[32];
    std::snprintf(buf, sizeof buf, "%5.1f%%", s.documents ? 100.0 * n / s.documents : 0.0);
    return std::string(buf);
  };
  char secs[32];
  std::snprintf(secs, sizeof secs, "%.2f s", s.seconds_total);
  const double rate = s.seconds_total > 0 ? s.documents / s.seconds_total : 0;
  std::ostringstream out;
  auto row = [&](const char* label, const std::string& value, const std::string& extra = "") {
    char buf[256];
    std::snprintf(buf, sizeof buf, "  %-18s %14s  %s\n", label, value.c_str(), extra.c_str());
    out << buf;
  };
  out << "shingleton dedup: done\n";
  row("documents in", WithCommas(s.records_read));
  if (s.skipped_total() > 0) row("skipped (bad)", WithCommas(s.skipped_total()), "see summary.json");
  row("kept", WithCommas(s.kept), pct(s.kept));
  row("dropped", WithCommas(s.dropped), pct(s.dropped));
  for (size_t r = 1; r < s.dropped_by_reason.size(); ++r) {
    if (s.dropped_by_reason[r] == 0) continue;
    const std::string label = std::string("  ") + DropReasonName(static_cast<DropReason>(r));
    row(label.c_str(), WithCommas(s.dropped_by_reason[r]));
  }
  row("clusters (2+)", WithCommas(s.clusters));
  row("largest cluster", WithCommas(s.largest_cluster));
  if (s.empty_documents > 0) row("empty documents", WithCommas(s.empty_documents));
  row("verified edges", WithCommas(s.edges), WithCommas(s.comparisons) + " comparisons");
  if (s.chain_guard.clusters_guarded > 0) {
    row("chains guarded", WithCommas(s.chain_guard.clusters_guarded),
        WithCommas(s.chain_guard.members_kept) + " members kept, " + WithCommas(s.chain_guard.members_moved) +
            " moved");
  }
  row("time", secs, WithCommas(static_cast<uint64_t>(rate)) + " docs/s");
  out << "  manifests: " << out_dir << "/keep.jsonl, " << out_dir << "/drop.jsonl, " << out_dir
      << "/summary.json\n";
  out << "  scheme:    " << s.scheme.Serialize() << "\n";
  return out.str();
}

}  // namespace shingleton::cli
