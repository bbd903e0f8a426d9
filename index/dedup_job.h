// DedupJob: the embedded, single-process near-duplicate job.
//
// Composes the library's stages:
//   IngestPipeline (read, parse, normalise, shingle, sign; parallel, bounded)
//     -> IndexStore via BulkIndexWriter (postings, signatures, documents as sorted
//        SST runs; the in-memory DocTable holds no signature yet)
//     -> the signatures of documents in shared buckets (and of exact duplicates;
//        of all documents when matching references) loaded back into the DocTable
//     -> BucketVerifier over every bucket of every band (parallel over bands)
//     -> ResolveClusters (union-find + keep policy)
//     -> decisions and edges back into the index, manifests, summary.json.
// Failure leaves no trace: the index is built in "<index>.building-<pid>" and
// manifests in temporaries; only a successful job renames them into place, so an
// existing index and existing manifests are untouched by a failed job.
// Decisions depend only on the inputs and parameters (any --threads; any input
// order unless the keep policy is `first`).
//
// Thread safety: RunDedupJob blocks and uses its own threads.
#pragma once

#include <array>
#include <cstdint>
#include <functional>
#include <map>
#include <string>
#include <vector>

#include "index/candidates.h"
#include "index/chain_guard.h"
#include "index/ingest_pipeline.h"
#include "index/keep_policy.h"
#include "index/record_parser.h"
#include "index/reference_resolution.h"
#include "index/reference_set.h"
#include "index/scheme.h"
#include "index/status.h"

namespace shingleton {

struct JobProgress {
  uint64_t docs = 0;             // records read so far
  uint64_t text_bytes = 0;       // uncompressed bytes read so far
  uint64_t raw_bytes_done = 0;   // on-disk input bytes consumed so far
  uint64_t raw_bytes_total = 0;  // on-disk size of all inputs
  double seconds = 0;
  std::string phase;             // "reading", "candidates", "clusters", "writing"
};
using ProgressFn = std::function<void(const JobProgress&)>;

struct DedupOptions {
  IngestOptions ingest;            // inputs, field names, threads, batching
  std::string out_dir;             // required: manifests and summary.json go here
  std::string index_path;          // default: <out_dir>/index
  double threshold = 0.8;          // minimum estimated Jaccard of an edge. Default 0.8
  ShingleKind shingle_kind = ShingleKind::kWord;  // Default: word
  int shingle_size = 0;            // 0: 5 for word shingles, 5 for char shingles
  int num_hashes = 128;            // MinHash k. Default 128
  // Sketch: "minhash" (k hash functions) or "oph" (one-permutation hashing with
  // densification, for large k); see SignatureMethodForSketch (scheme.h). Default: minhash
  std::string sketch = "minhash";
  int bands = 0, rows = 0;         // 0: chosen from the threshold (ChooseBanding)
  double fn_weight = 0.95;         // weight of false negatives when choosing bands
  uint64_t seed = SketchScheme().seed;
  KeepPolicy policy;               // Default: longest
  bool skip_bad = false;           // skip and count bad records instead of failing
  bool replace = false;            // replace an existing index and manifests in out_dir
  size_t all_pairs_limit = 64;     // see VerifyOptions
  size_t max_leaders = 16;
  // Frozen reference generations (freeze) to deduplicate against; a document that
  // duplicates a reference document is dropped in its favour. Default: none.
  std::vector<std::string> references;
  // Drop a document whose normalised URL is in a reference generation (a re-crawl),
  // with reason "url". Default: false.
  bool url_revisits = false;
  // Chain guard (chain_guard.h): re-assign the members of clusters whose spread is
  // below chain_bound so every drop is similar to its own kept document; 0 means
  // the threshold. Default: off.
  bool chain_guard = false;
  double chain_bound = 0;
  // How near candidates are found in the references (reference_resolution.h);
  // both give the same decisions. Default: merge (sorted band keys, sequential reads).
  ReferenceLookup reference_lookup = ReferenceLookup::kMerge;
  ProgressFn progress;             // called from the job's threads, at most ~5 times/s
};

struct BadRecordExample {
  std::string where;  // file:line: message
  BadRecord kind;
};

struct DedupSummary {
  SketchScheme scheme;
  uint64_t records_read = 0;     // non-blank input lines
  uint64_t documents = 0;        // indexed (records_read - skipped)
  uint64_t kept = 0, dropped = 0;
  uint64_t clusters = 0;         // clusters with 2 or more documents
  uint64_t largest_cluster = 0;
  uint64_t empty_documents = 0;  // no token after normalisation
  uint64_t exact_duplicates = 0; // identical normalised text to an earlier document: no LSH work
  std::array<uint64_t, 6> dropped_by_reason{};  // indexed by DropReason
  std::vector<std::string> reference_names;
  std::map<std::string, uint64_t> records_without_document;  // WARC records skipped, by reason
  uint64_t truncated_records = 0;                             // WARC-Truncated or cut bodies
  uint64_t text_bytes = 0;
  std::array<uint64_t, static_cast<size_t>(BadRecord::kCount)> skipped{};  // by kind
  std::vector<BadRecordExample> skipped_examples;  // the first few
  uint64_t buckets_checked = 0;  // buckets with >= 2 documents
  uint64_t comparisons = 0;      // signature comparisons
  uint64_t edges = 0;            // verified, distinct pairs
  ChainGuardResult chain_guard;  // with DedupOptions::chain_guard
  double seconds_read = 0, seconds_candidates = 0, seconds_clusters = 0, seconds_write = 0;
  double seconds_references = 0;  // of seconds_candidates: matching reference generations
  double seconds_total = 0;
  uint64_t skipped_total() const;
};

// Builds the scheme the options describe (bands chosen from the threshold when unset).
StatusOr<SketchScheme> SchemeFromOptions(const DedupOptions& options);

StatusOr<DedupSummary> RunDedupJob(const DedupOptions& options);

// Adds kept, dropped, clusters and the largest cluster of `decisions` to *summary.
void CountDecisions(const std::vector<Decision>& decisions, DedupSummary* summary);

// The summary.json text of a finished job.
std::string SummaryJson(const DedupOptions& options, const DedupSummary& summary);

}  // namespace shingleton
