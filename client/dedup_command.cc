// `shingleton dedup`: the embedded job on JSON Lines inputs.
#include <cinttypes>
#include <cstdio>
#include <iostream>
#include <memory>

#include <spdlog/sinks/stdout_color_sinks.h>
#include <spdlog/spdlog.h>

#include "client/commands.h"
#include "client/job_flags.h"
#include "client/progress.h"
#include "index/dedup_job.h"

namespace shingleton::cli {
namespace {

struct DedupFlags {
  JobFlags job;
  bool quiet = false;
  bool verbose = false;
};

// With --verbose, one log line on stderr as each phase of the job begins.
ProgressFn PhaseLogger(ProgressFn inner) {
  auto logger = spdlog::stderr_color_mt("dedup");
  auto last_phase = std::make_shared<std::string>();
  return [logger, last_phase, inner](const JobProgress& p) {
    if (p.phase != *last_phase) {
      *last_phase = p.phase;
      logger->info("{} (after {:.2f} s; {} records, {} bytes read)", p.phase, p.seconds, p.docs,
                   p.text_bytes);
    }
    if (inner) inner(p);
  };
}

int RunDedup(DedupFlags& f) {
  Status applied = ApplyJobFlags(&f.job);
  if (!applied.ok()) {
    std::cerr << "shingleton dedup: " << applied.message() << "\n";
    return 2;
  }
  DedupOptions& o = f.job.options;
  ProgressLine progress;
  if (!f.quiet && progress.enabled()) {
    o.progress = [&progress](const JobProgress& p) { progress.Update(p); };
  }
  if (f.verbose) o.progress = PhaseLogger(o.progress);
  auto summary = RunDedupJob(o);
  progress.Finish();
  if (!summary.ok()) {
    std::cerr << "shingleton dedup: " << summary.status().ToString() << "\n"
              << "shingleton dedup: no manifest was written";
    if (summary.status().code() == Status::Code::kBadInput) {
      std::cerr << " (use --skip-bad to skip and count bad records)";
    }
    std::cerr << "\n";
    return 1;
  }
  if (!f.quiet) std::cout << SummaryTable(summary.value(), o.out_dir);
  return 0;
}

}  // namespace

void AddDedupCommand(CLI::App* app, int* rc) {
  auto flags = std::make_shared<DedupFlags>();
  DedupOptions& o = flags->job.options;
  CLI::App* cmd = app->add_subcommand(
      "dedup",
      "Cut JSON Lines or WARC corpora down to one document per near-duplicate cluster.\n"
      "Writes keep.jsonl, drop.jsonl and summary.json to --out and keeps the LSH index\n"
      "(RocksDB) at --index. Inputs are never modified.");
  cmd->add_option("-i,--input", o.ingest.inputs,
                  "Input file: JSON Lines (one object per line) or WARC 1.0/1.1, plain, gzip or "
                  "zstd, detected from the content. Repeatable; read in the order given")
      ->required()
      ->check(CLI::ExistingFile);
  cmd->add_option("-o,--out", o.out_dir, "Output directory for the manifests (created if missing)")
      ->required();
  cmd->add_option("--index", o.index_path, "Where the RocksDB index is kept [default: OUT/index]");
  AddJobFlags(cmd, &flags->job);
  cmd->add_option("--reference", o.references,
                  "A frozen reference generation (made by `shingleton freeze`) to deduplicate "
                  "against; repeatable, earlier ones win ties. Reference documents always win and "
                  "are never listed in the manifests")
      ->check(CLI::ExistingDirectory);
  cmd->add_flag("--url-revisits", o.url_revisits,
                "Drop a document whose normalised URL is already in a reference generation (a "
                "re-crawled page), with reason \"url\"");
  cmd->add_option_function<std::string>(
         "--reference-lookup",
         [&o](const std::string& v) {
           auto l = ParseReferenceLookup(v);
           if (!l.ok()) throw CLI::ValidationError("--reference-lookup", l.status().message());
           o.reference_lookup = l.value();
         },
         "How candidates are found in the references: merge (the crawl's postings, content "
         "hashes and URLs merged in key order with each generation's, sequential reads) or "
         "point (lookups per document and band; fewer reads for a small crawl against a large "
         "generation). Same decisions either way [default: merge]")
      ->check(CLI::IsMember({"merge", "point"}));
  cmd->add_flag("--replace", o.replace, "Replace an existing index and manifests at the outputs");
  cmd->add_flag("-q,--quiet", flags->quiet, "Print nothing on success");
  cmd->add_flag("-v,--verbose", flags->verbose, "Log each phase of the job on stderr");
  cmd->callback([flags, rc] { *rc = RunDedup(*flags); });
}

}  // namespace shingleton::cli
