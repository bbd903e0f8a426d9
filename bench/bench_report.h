// bench_report: the result rows of `shingleton-bench` and the registry of suites.
//
// A figure is always measured against a baseline measured in the same run (the
// machines are shared and noisy; absolute times drift). ratio = value / baseline_value
// for "higher is better" units (MB/s, docs/s).
//
// Suites register themselves with SHINGLETON_BENCH_SUITE(name, fn); fn appends rows.
// Thread safety: suites run one after another on the main thread.
#pragma once

#include <functional>
#include <string>
#include <vector>

namespace shingleton::bench {

struct BenchOptions {
  bool quick = false;        // --quick: a smoke run, whole bench under a minute
  std::string work_dir;      // scratch directory for databases and corpora (removed after)
  std::string bin_dir;       // directory of the shingleton executables (for the service run)
};

struct BenchRow {
  std::string name;          // e.g. "sign_k128"
  double value = 0;          // our figure
  std::string unit;          // e.g. "MB/s/core", "docs/s"
  std::string baseline;      // name of the baseline, e.g. "shingle_only"
  double baseline_value = 0; // the baseline's figure, same unit, same run
  double goal = 0;           // the ratio we aim for (0 = none); printed, never asserted
  std::string note;          // one line: what limits the figure, when it misses its goal
  double ratio() const { return baseline_value > 0 ? value / baseline_value : 0; }
};

using SuiteFn = std::function<void(const BenchOptions&, std::vector<BenchRow>*)>;

struct Suite {
  std::string name;
  SuiteFn fn;
};

std::vector<Suite>& Suites();

struct SuiteRegistrar {
  SuiteRegistrar(std::string name, SuiteFn fn) { Suites().push_back({std::move(name), std::move(fn)}); }
};

#define SHINGLETON_BENCH_SUITE(name, fn) \
  static ::shingleton::bench::SuiteRegistrar bench_suite_registrar_##name(#name, fn)

// Seconds of a monotonic clock.
double NowSeconds();

// Runs `body` repeatedly until at least `min_seconds` have passed (and at least once);
// returns the best (shortest) seconds per call — the least disturbed by other load.
double BestSeconds(const std::function<void()>& body, double min_seconds, int min_runs = 3);

}  // namespace shingleton::bench
