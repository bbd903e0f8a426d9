// Terminal progress and summary rendering for the CLI.
//
// ProgressLine redraws one status line on stderr ("\r...") when stderr is a TTY
// and prints nothing otherwise, so logs and pipes stay clean.
//
// Thread safety: Update() may be called from any thread (serialised internally).
#pragma once

#include <mutex>
#include <string>

#include "index/dedup_job.h"

namespace shingleton::cli {

class ProgressLine {
 public:
  ProgressLine();  // enabled iff stderr is a terminal
  ~ProgressLine();  // ends the line if one was drawn
  void Update(const JobProgress& p);
  void Finish();
  bool enabled() const { return enabled_; }

 private:
  std::mutex mu_;
  bool enabled_;
  bool drawn_ = false;  // GUARDED_BY(mu_)
};

// "12,345" style thousands separators.
std::string WithCommas(uint64_t n);
// "1.2 MB", "3.4 GB".
std::string HumanBytes(double bytes);

// The end-of-job table printed on stdout.
std::string SummaryTable(const DedupSummary& s, const std::string& out_dir);

}  // namespace shingleton::cli
