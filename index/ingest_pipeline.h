// IngestPipeline: input files -> signed documents, in input order, in batches.
//
//   reader (serial, in order) -> parse + normalise + shingle + sign (parallel)
//     -> sink (serial, in input order)
// Built on tbb::parallel_pipeline: at most `max_batches_in_flight` batches exist at
// once, so memory is bounded whatever the input size. The sink sees batches in
// exactly the input order whatever the thread count, and assigns ordinals.
// This is the one ingest path: the embedded job and the ingest worker differ only
// in their sinks.
//
// Thread safety: Run() blocks; the sink is called from one thread at a time.
#pragma once

#include <cstdint>
#include <functional>
#include <string>
#include <vector>

#include "index/document.h"
#include "index/record_parser.h"
#include "index/scheme.h"
#include "index/status.h"

namespace shingleton {

// Input files are JSON Lines or WARC (ISO 28500; WARC/1.0 and 1.1), detected from
// their first decompressed bytes; plain, gzip (including record-at-a-time
// .warc.gz) or Zstandard. A WARC record's document is its WARC-Record-ID,
// WARC-Target-URI and WARC-Date, and the text of a 200 text/html (visible text) or
// text/plain response, or of a text resource/conversion record; other records are
// skipped and counted. The record's source is "file@byte-offset".
struct IngestOptions {
  std::vector<std::string> inputs;  // JSONL or WARC files, read in this order
  FieldNames fields;
  // Worker threads for parsing and signing. Default 0: all cores.
  int threads = 0;
  // A batch closes at this many lines or bytes. Defaults: 1024 lines, 4 MiB.
  size_t batch_lines = 1024;
  size_t batch_bytes = 4 << 20;
  // Batches alive at once. Default 0: 2 * threads + 2.
  size_t max_batches_in_flight = 0;
  // Raw text bytes kept as the audit excerpt of each document. Default 160; 0 keeps none.
  size_t excerpt_bytes = 160;
};

// One input record after signing, or the reason it could not be read.
struct SignedRecord {
  DocumentMeta meta;  // ordinal is left 0: the sink assigns it
  BadRecord bad = BadRecord::kNone;
  Status error;       // non-OK when bad != kNone; message starts with "file:line: "
  // Non-empty for a WARC record that holds no document (a request, a 404, an
  // image...): not an error; counted by this reason (WarcSkipName).
  std::string skipped;
  bool truncated = false;  // WARC-Truncated, or a body cut at the size limit
};

struct SignedBatch {
  std::vector<SignedRecord> records;
  std::vector<uint32_t> sigs;     // records.size() x num_hashes
  std::vector<uint64_t> buckets;  // records.size() x bands
  uint64_t text_bytes = 0;        // uncompressed bytes of the lines in the batch
  uint64_t raw_bytes_done = 0;    // input bytes (on disk) consumed up to this batch, all files
  const uint32_t* sig(size_t i, int k) const { return &sigs[i * k]; }
  const uint64_t* bucket(size_t i, int b) const { return &buckets[i * b]; }
};

// Called serially in input order; a non-OK status stops the pipeline and is returned.
using BatchSink = std::function<Status(const SignedBatch&)>;

// The number of worker threads `requested` means: itself if > 0, else every core.
int ResolveThreads(int requested);

// Total on-disk bytes of the inputs (for progress), or an error naming a missing file.
StatusOr<uint64_t> InputBytes(const std::vector<std::string>& inputs);

// REQUIRES: scheme.Validate().ok(). Returns the first error of the reader (I/O,
// gzip) or of the sink; bad records are not errors here — the sink decides.
Status RunIngestPipeline(const IngestOptions& options, const SketchScheme& scheme,
                         const BatchSink& sink);

}  // namespace shingleton
