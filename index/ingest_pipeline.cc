#include "index/ingest_pipeline.h"

#include <oneapi/tbb/enumerable_thread_specific.h>
#include <oneapi/tbb/parallel_pipeline.h>
#include <oneapi/tbb/global_control.h>
#include <oneapi/tbb/task_arena.h>

#include <atomic>
#include <filesystem>
#include <memory>
#include <thread>

#include "index/line_reader.h"
#include "index/warc_reader.h"
#include "index/warc_record.h"
#include "index/signer.h"

namespace shingleton {
namespace {

// The lines of one batch, copied into one buffer followed by simdjson padding.
struct RawBatch {
  size_t file_index = 0;
  std::string buffer;
  struct Line {
    size_t offset, length;
    uint64_t number;
  };
  std::vector<Line> lines;
  std::vector<WarcRecord> warc;  // WARC input: whole records instead of lines
  uint64_t raw_bytes_done = 0;
  size_t size() const { return lines.size() + warc.size(); }
};

// Reads the inputs in order, one batch at a time. Owned by the serial stage.
class BatchReader {
 public:
  BatchReader(const IngestOptions& options) : options_(options) {}

  // Returns nullptr at the end or on error (then status() is set).
  std::unique_ptr<RawBatch> Next() {
    auto batch = std::make_unique<RawBatch>();
    while (batch->size() == 0) {
      if (!lines_ && !warc_ && !OpenNext()) return nullptr;
      batch->file_index = file_index_;
      const bool more = warc_ ? FillWarc(batch.get()) : FillLines(batch.get());
      if (!status_.ok()) return nullptr;
      if (!more) {  // this file is exhausted
        done_bytes_ += warc_ ? warc_->raw_offset() : lines_->raw_offset();
        lines_.reset();
        warc_.reset();
        ++file_index_;
      }
    }
    batch->buffer.append(simdjson::SIMDJSON_PADDING, ' ');
    batch->raw_bytes_done =
        done_bytes_ + (warc_ ? warc_->raw_offset() : lines_ ? lines_->raw_offset() : 0);
    return batch;
  }
  const Status& status() const { return status_; }

 private:
  bool Full(const RawBatch& b) const {
    return b.size() >= options_.batch_lines || b.buffer.size() >= options_.batch_bytes;
  }

  // Returns false when the file has no more lines.
  bool FillLines(RawBatch* batch) {
    std::string_view line;
    while (!Full(*batch)) {
      if (!lines_->Next(&line)) {
        status_ = lines_->status();
        return false;
      }
      if (line.find_first_not_of(" \t") == std::string_view::npos) continue;  // blank line
      batch->lines.push_back({batch->buffer.size(), line.size(), lines_->line_number()});
      batch->buffer.append(line.data(), line.size());
      batch->buffer.push_back('\n');
    }
    return true;
  }

  bool FillWarc(RawBatch* batch) {
    size_t bytes = 0;
    while (batch->warc.size() < options_.batch_lines && bytes < options_.batch_bytes) {
      WarcRecord rec;
      if (!warc_->Next(&rec)) {
        status_ = warc_->status();
        return false;
      }
      bytes += rec.block.size();
      batch->warc.push_back(std::move(rec));
    }
    return true;
  }

  bool OpenNext() {
    if (file_index_ >= options_.inputs.size()) return false;
    const std::string& path = options_.inputs[file_index_];
    auto is_warc = FileLooksLikeWarc(path);
    if (!is_warc.ok()) {
      status_ = is_warc.status();
      return false;
    }
    if (is_warc.value()) {
      warc_ = std::make_unique<WarcReader>();
      status_ = warc_->Open(path);
    } else {
      lines_ = std::make_unique<LineReader>();
      status_ = lines_->Open(path);
    }
    return status_.ok();
  }

  const IngestOptions& options_;
  size_t file_index_ = 0;
  std::unique_ptr<LineReader> lines_;
  std::unique_ptr<WarcReader> warc_;
  uint64_t done_bytes_ = 0;
  Status status_;
};

// Per-thread parse + sign state.
struct Worker {
  Worker(const IngestOptions& o, const SketchScheme& s) : parser(o.fields), signer(s) {}
  RecordParser parser;
  Signer signer;
};

std::string ExcerptOf(std::string_view text, size_t max_bytes) {
  if (text.size() <= max_bytes) return std::string(text);
  size_t n = max_bytes;
  while (n > 0 && (static_cast<unsigned char>(text[n]) & 0xC0) == 0x80) --n;  // whole code points
  return std::string(text.substr(0, n));
}

// Fills rec.meta from a parsed record and signs its text.
void SignRecord(const ParsedRecord& parsed, const IngestOptions& options, Worker* w, uint32_t* sig,
                uint64_t* buckets, SignedRecord* rec) {
  rec->meta.id = std::string(parsed.id);
  rec->meta.key = DocKey(parsed.id);
  rec->meta.url = std::string(parsed.url);
  rec->meta.rank = parsed.rank;
  rec->meta.date = std::string(parsed.date);
  rec->meta.text_bytes = parsed.text.size();
  rec->meta.excerpt = ExcerptOf(parsed.text, options.excerpt_bytes);
  uint64_t content[2];
  rec->meta.tokens = w->signer.Sign(parsed.text, sig, buckets, content);
  rec->meta.content_hi = content[0];
  rec->meta.content_lo = content[1];
}

void SignJsonLine(const RawBatch& raw, size_t i, const IngestOptions& options, const std::string& file,
                  Worker* w, uint32_t* sig, uint64_t* buckets, SignedRecord* rec) {
  const RawBatch::Line& line = raw.lines[i];
  rec->meta.source = file + ":" + std::to_string(line.number);
  ParsedRecord parsed;
  Status s = w->parser.Parse(raw.buffer.data() + line.offset, line.length,
                             raw.buffer.size() - line.offset, &parsed, &rec->bad);
  if (!s.ok()) {
    rec->error = s.WithContext(rec->meta.source);
    return;
  }
  SignRecord(parsed, options, w, sig, buckets, rec);
}

void SignWarcRecord(const WarcRecord& warc, const IngestOptions& options, const std::string& file,
                    Worker* w, uint32_t* sig, uint64_t* buckets, SignedRecord* rec) {
  rec->meta.source = file + "@" + std::to_string(warc.offset);
  WarcDocument doc;
  WarcSkip skip = WarcSkip::kNone;
  Status s = ExtractWarcDocument(warc, &doc, &skip);
  if (!s.ok()) {
    rec->bad = BadRecord::kMalformedRecord;
    rec->error = s.WithContext(file);
    return;
  }
  if (skip != WarcSkip::kNone) {
    rec->skipped = WarcSkipName(skip);
    return;
  }
  if (doc.id.empty()) {
    rec->bad = BadRecord::kMissingField;
    rec->error = Status::BadInput(rec->meta.source + ": record without WARC-Record-ID");
    return;
  }
  ParsedRecord parsed;
  parsed.id = doc.id;
  parsed.url = doc.url;
  parsed.date = doc.date;
  parsed.text = doc.text;
  SignRecord(parsed, options, w, sig, buckets, rec);
  rec->truncated = doc.truncated;
}

std::unique_ptr<SignedBatch> SignBatch(const RawBatch& raw, const IngestOptions& options,
                                       const SketchScheme& scheme, Worker* w) {
  auto out = std::make_unique<SignedBatch>();
  const size_t n = raw.size();
  const int k = scheme.num_hashes, b = scheme.bands;
  out->records.resize(n);
  out->sigs.resize(n * k);
  out->buckets.resize(n * b);
  out->raw_bytes_done = raw.raw_bytes_done;
  const std::string& file = options.inputs[raw.file_index];
  for (size_t i = 0; i < raw.lines.size(); ++i) {
    out->text_bytes += raw.lines[i].length + 1;
    SignJsonLine(raw, i, options, file, w, &out->sigs[i * k], &out->buckets[i * b], &out->records[i]);
  }
  for (size_t i = 0; i < raw.warc.size(); ++i) {
    out->text_bytes += raw.warc[i].block.size();
    SignWarcRecord(raw.warc[i], options, file, w, &out->sigs[i * k], &out->buckets[i * b],
                   &out->records[i]);
  }
  return out;
}

}  // namespace

int ResolveThreads(int requested) {
  return requested > 0 ? requested : static_cast<int>(std::max(1u, std::thread::hardware_concurrency()));
}

StatusOr<uint64_t> InputBytes(const std::vector<std::string>& inputs) {
  uint64_t total = 0;
  for (const auto& path : inputs) {
    std::error_code ec;
    auto size = std::filesystem::file_size(path, ec);
    if (ec) return Status::IoError("cannot read " + path + ": " + ec.message());
    total += size;
  }
  return total;
}

Status RunIngestPipeline(const IngestOptions& options, const SketchScheme& scheme,
                         const BatchSink& sink) {
  const int threads = ResolveThreads(options.threads);
  const size_t in_flight =
      options.max_batches_in_flight ? options.max_batches_in_flight : 2 * threads + 2;
  BatchReader reader(options);
  Status sink_status;
  std::atomic<bool> stop{false};
  // One Worker per TBB thread, created on first use.
  tbb::enumerable_thread_specific<std::unique_ptr<Worker>> workers;
  auto get_worker = [&]() -> Worker* {
    auto& w = workers.local();
    if (!w) w = std::make_unique<Worker>(options, scheme);
    return w.get();
  };

  // Allows more threads than cores when asked for (TBB would otherwise cap and warn).
  tbb::global_control allow(tbb::global_control::max_allowed_parallelism,
                            std::max<size_t>(ResolveThreads(options.threads), 2));
  tbb::task_arena arena(threads);
  arena.execute([&] {
    tbb::parallel_pipeline(
        in_flight,
        tbb::make_filter<void, RawBatch*>(
            tbb::filter_mode::serial_in_order,
            [&](tbb::flow_control& fc) -> RawBatch* {
              if (stop.load()) {
                fc.stop();
                return nullptr;
              }
              auto batch = reader.Next();
              if (!batch) {
                fc.stop();
                return nullptr;
              }
              return batch.release();
            }) &
            tbb::make_filter<RawBatch*, SignedBatch*>(
                tbb::filter_mode::parallel,
                [&](RawBatch* raw) -> SignedBatch* {
                  std::unique_ptr<RawBatch> owned(raw);
                  if (stop.load()) return nullptr;
                  return SignBatch(*raw, options, scheme, get_worker()).release();
                }) &
            tbb::make_filter<SignedBatch*, void>(
                tbb::filter_mode::serial_in_order, [&](SignedBatch* batch) {
                  std::unique_ptr<SignedBatch> owned(batch);
                  if (!batch || stop.load()) return;
                  Status s = sink(*batch);
                  if (!s.ok()) {
                    sink_status = s;
                    stop.store(true);
                  }
                }));
  });
  if (!sink_status.ok()) return sink_status;
  return reader.status();
}

}  // namespace shingleton
