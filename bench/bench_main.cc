// shingleton-bench: measures Shingleton's costs as ratios against baselines measured in
// the same run, prints a table and writes the rows as a JSON list (see bench_report.h).
#include <algorithm>
#include <chrono>
#include <cstdio>
#include <filesystem>
#include <iostream>
#include <string>
#include <unistd.h>

#include <CLI/CLI.hpp>
#include <hwy/targets.h>

#include "bench/bench_report.h"
#include "index/atomic_file.h"
#include "index/json_writer.h"

namespace shingleton::bench {

std::vector<Suite>& Suites() {
  static std::vector<Suite> suites;
  return suites;
}

double NowSeconds() {
  return std::chrono::duration<double>(std::chrono::steady_clock::now().time_since_epoch()).count();
}

double BestSeconds(const std::function<void()>& body, double min_seconds, int min_runs) {
  double best = 1e300;
  double start = NowSeconds();
  for (int run = 0; run < min_runs || NowSeconds() - start < min_seconds; ++run) {
    double t0 = NowSeconds();
    body();
    best = std::min(best, NowSeconds() - t0);
  }
  return best;
}

namespace {

std::string RowsJson(const std::vector<BenchRow>& rows) {
  JsonWriter w;
  w.BeginArray();
  for (const BenchRow& r : rows) {
    w.BeginObject();
    w.Key("name"); w.String(r.name);
    w.Key("value"); w.Double(r.value, 3);
    w.Key("unit"); w.String(r.unit);
    w.Key("baseline"); w.String(r.baseline);
    w.Key("baseline_value"); w.Double(r.baseline_value, 3);
    w.Key("ratio"); w.Double(r.ratio(), 3);
    if (r.goal > 0) { w.Key("goal"); w.Double(r.goal, 2); }
    if (!r.note.empty()) { w.Key("note"); w.String(r.note); }
    w.EndObject();
  }
  w.EndArray();
  return w.Take() + "\n";
}

void PrintTable(const std::vector<BenchRow>& rows) {
  std::printf("%-22s %12s %-10s %-16s %12s %8s %6s\n", "figure", "value", "unit", "baseline",
              "baseline", "ratio", "goal");
  for (const BenchRow& r : rows) {
    std::string goal = r.goal > 0 ? (r.ratio() >= r.goal ? ">=" : "< ") + std::to_string(r.goal).substr(0, 4) : "";
    std::printf("%-22s %12.2f %-10s %-16s %12.2f %8.3f %6s\n", r.name.c_str(), r.value,
                r.unit.c_str(), r.baseline.c_str(), r.baseline_value, r.ratio(), goal.c_str());
    if (!r.note.empty()) std::printf("    note: %s\n", r.note.c_str());
  }
}

std::string SelfDir() {
  std::error_code ec;
  auto p = std::filesystem::read_symlink("/proc/self/exe", ec);
  return ec ? std::string(".") : p.parent_path().string();
}

}  // namespace
}  // namespace shingleton::bench

int main(int argc, char** argv) {
  using namespace shingleton::bench;
  CLI::App app{"shingleton-bench: Shingleton's costs as ratios against baselines measured in the "
               "same run (ratio = ours / baseline, higher is better). Figures are printed and "
               "written as JSON; nothing here passes or fails."};
  BenchOptions opt;
  std::string json_path;
  std::vector<std::string> only;
  app.add_flag("--quick", opt.quick, "Smoke run: small inputs, the whole bench in under a minute (default: off)");
  app.add_option("--json", json_path, "Write the rows to this file as a JSON list (default: none)");
  app.add_option("--only", only, "Run only these suites (default: all; see --list)");
  bool list = false;
  app.add_flag("--list", list, "List the suites and exit");
  app.add_option("--work-dir", opt.work_dir, "Scratch directory (default: a new directory under $TMPDIR or /tmp)");
  bool no_avx512 = false;
  app.add_flag("--no-avx512", no_avx512,
               "Run the vector kernels without AVX-512, as on a CPU that has only AVX2, to compare "
               "the figures of both kinds of machine in one place (default: off; the best the CPU has)");
  CLI11_PARSE(app, argc, argv);
  if (no_avx512) hwy::DisableTargets(HWY_AVX3 | HWY_AVX3_DL);
  if (list) {
    for (const Suite& s : Suites()) std::cout << s.name << "\n";
    return 0;
  }
  std::string made_dir;
  if (opt.work_dir.empty()) {
    const char* tmp = std::getenv("TMPDIR");
    std::string tmpl = std::string(tmp && *tmp ? tmp : "/tmp") + "/shingleton-bench-XXXXXX";
    if (!mkdtemp(tmpl.data())) { std::perror("mkdtemp"); return 1; }
    opt.work_dir = made_dir = tmpl;
  }
  opt.bin_dir = SelfDir();
  std::vector<BenchRow> rows;
  for (const Suite& s : Suites()) {
    if (!only.empty() && std::find(only.begin(), only.end(), s.name) == only.end()) continue;
    std::fprintf(stderr, "bench: %s ...\n", s.name.c_str());
    s.fn(opt, &rows);
  }
  PrintTable(rows);
  if (!made_dir.empty()) std::filesystem::remove_all(made_dir);
  if (!json_path.empty()) {
    auto st = shingleton::WriteFileAtomically(json_path, RowsJson(rows));
    if (!st.ok()) { std::cerr << "shingleton-bench: " << st.ToString() << "\n"; return 1; }
  }
  return 0;
}
