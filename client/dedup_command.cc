// `shingleton dedup`: the embedded job on JSON Lines inputs.
#include <cinttypes>
#include <cstdio>
#include <iostream>
#include <memory>

#include <spdlog/sinks/stdout_color_sinks.h>
#include <spdlog/spdlog.h>

#include "client/commands.h"
#include "client/progress.h"
#include "index/dedup_job.h"

namespace shingleton::cli {
namespace {

struct DedupFlags {
  DedupOptions options;
  std::string shingle = "word";
  std::string keep = "longest";
  std::string seed_text;
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
  DedupOptions& o = f.options;
  auto kind = ParseShingleKind(f.shingle);
  if (!kind.ok()) {
    std::cerr << "shingleton dedup: " << kind.status().message() << "\n";
    return 2;
  }
  o.shingle_kind = kind.value();
  auto policy = KeepPolicy::Parse(f.keep);
  if (!policy.ok()) {
    std::cerr << "shingleton dedup: " << policy.status().message() << "\n";
    return 2;
  }
  o.policy = policy.value();
  if (o.policy.kind() == KeepPolicy::Kind::kField) o.ingest.fields.rank = o.policy.field();
  if (!f.seed_text.empty()) {
    char* end = nullptr;
    o.seed = std::strtoull(f.seed_text.c_str(), &end, 0);
    if (*end != '\0') {
      std::cerr << "shingleton dedup: --seed: not a number: " << f.seed_text << "\n";
      return 2;
    }
  }
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
  DedupOptions& o = flags->options;
  CLI::App* cmd = app->add_subcommand(
      "dedup",
      "Cut JSON Lines corpora down to one document per near-duplicate cluster.\n"
      "Writes keep.jsonl, drop.jsonl and summary.json to --out and keeps the LSH index\n"
      "(RocksDB) at --index. Inputs are never modified.");
  cmd->add_option("-i,--input", o.ingest.inputs,
                  "Input file: JSON Lines, one object per line, plain or gzip (.gz). Repeatable; "
                  "read in the order given")
      ->required()
      ->check(CLI::ExistingFile);
  cmd->add_option("-o,--out", o.out_dir, "Output directory for the manifests (created if missing)")
      ->required();
  cmd->add_option("--index", o.index_path, "Where the RocksDB index is kept [default: OUT/index]");
  cmd->add_option("-t,--threshold", o.threshold,
                  "Minimum estimated Jaccard similarity of two documents to count as "
                  "near-duplicates (0 < t < 1)")
      ->capture_default_str();
  cmd->add_option("-j,--threads", o.ingest.threads, "Worker threads; 0 uses every core")
      ->capture_default_str();
  cmd->add_option("--id-field", o.ingest.fields.id, "JSON field holding the unique document id (string)")
      ->capture_default_str();
  cmd->add_option("--text-field", o.ingest.fields.text, "JSON field holding the document text (string)")
      ->capture_default_str();
  cmd->add_option("--url-field", o.ingest.fields.url, "JSON field holding the URL (optional in records)")
      ->capture_default_str();
  cmd->add_option("--shingle", flags->shingle,
                  "Shingle kind: word (k consecutive words) or char (k consecutive characters, "
                  "for scripts written without spaces)")
      ->capture_default_str();
  cmd->add_option("--shingle-size", o.shingle_size, "Words or characters per shingle; 0 means 5")
      ->capture_default_str();
  cmd->add_option("--hashes", o.num_hashes, "MinHash signature length k")->capture_default_str();
  cmd->add_option("--bands", o.bands, "LSH bands b; 0 chooses b and r from the threshold")
      ->capture_default_str();
  cmd->add_option("--rows", o.rows, "LSH rows per band r; 0 chooses b and r from the threshold")
      ->capture_default_str();
  cmd->add_option("--recall-weight", o.fn_weight,
                  "Weight of missed pairs (vs spurious candidates, 1 - w) when choosing bands")
      ->capture_default_str();
  cmd->add_option("--seed", flags->seed_text,
                  "Hash seed of shingles and MinHash (decimal or 0x hex) [default: 0x5348494e47]");
  cmd->add_option("--keep", flags->keep,
                  "Which document of a cluster is kept: longest (most text bytes), first (input "
                  "order), or field:NAME (largest numeric field NAME); ties go to the smallest id")
      ->capture_default_str();
  cmd->add_flag("--skip-bad", o.skip_bad,
                "Skip and count bad records (malformed JSON, missing id/text, duplicate id, "
                "invalid UTF-8) instead of stopping at the first");
  cmd->add_flag("--replace", o.replace, "Replace an existing index and manifests at the outputs");
  cmd->add_option("--excerpt-bytes", o.ingest.excerpt_bytes,
                  "Bytes of each text kept in the index as an audit excerpt; 0 keeps none")
      ->capture_default_str();
  cmd->add_option("--all-pairs-limit", o.all_pairs_limit,
                  "Buckets up to this size verify every pair; larger ones compare with leaders")
      ->capture_default_str();
  cmd->add_option("--max-leaders", o.max_leaders, "Leaders kept per large bucket")
      ->capture_default_str();
  cmd->add_flag("-q,--quiet", flags->quiet, "Print nothing on success");
  cmd->add_flag("-v,--verbose", flags->verbose, "Log each phase of the job on stderr");
  cmd->callback([flags, rc] { *rc = RunDedup(*flags); });
}

}  // namespace shingleton::cli
