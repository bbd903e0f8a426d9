// IndexStore: the banded LSH index persisted in RocksDB.
//
// Layout (kLayoutVersion = 3), one column family per kind of data:
//   meta        "layout" -> decimal layout version; "scheme" -> SketchScheme::Serialize();
//               "job" -> the last job's summary JSON
//   postings    band (u16 BE) | bucket (u64 BE) | doc key (u64 BE) -> ""   (one key per
//               posting: written without read-modify-write; a bucket is a key-range scan;
//               a bloom filter on the 10-byte band | bucket prefix skips absent buckets)
//   signatures  doc key (u64 BE) -> k x u32 little-endian
//   docs        doc key (u64 BE) -> DocumentMeta (see EncodeDocument)
//   decisions   doc key (u64 BE) -> cluster, kept key, similarity, cluster size
//   edges       key a (u64 BE) | key b (u64 BE) -> similarity (f32 as u32 bits), band
//   content     XXH3-128 of the normalised text (hi, lo: u64 BE each) | doc key -> ""
//   urls        normalised URL bytes | 0x00 | doc key (u64 BE) -> ""
// Open() checks the layout version and the scheme and refuses mismatches with a
// message that names both. Every rocksdb::Status is converted here.
//
// Layout 3 (from 2): the postings family has the band | bucket prefix extractor and
// its prefix bloom filter; bulk-built indexes may keep several overlapping level-0
// files (auto compaction is off while bulk loading).
//
// Thread safety: all methods may be called concurrently (RocksDB is thread-safe);
// a WriteBatchBuilder and a BulkIndexWriter belong to one thread.
#pragma once

#include <atomic>
#include <cstdint>
#include <functional>
#include <memory>
#include <mutex>
#include <string>
#include <string_view>
#include <thread>
#include <utility>
#include <vector>

#include "index/document.h"
#include "index/scheme.h"
#include "index/status.h"

namespace rocksdb {
class DB;
class ColumnFamilyHandle;
class Iterator;
struct ReadOptions;
class Slice;
class SstFileWriter;
class WriteBatch;
}  // namespace rocksdb

namespace shingleton {

inline constexpr int kLayoutVersion = 3;

struct StoreOptions {
  // Bulk-build mode: writes skip the WAL; durability comes from Flush() before the
  // index is published (the embedded job builds into a temporary directory and
  // renames it only after success). Default: false (every write goes to the WAL).
  bool bulk_load = false;
  // Open without write access (frozen or inspected indexes). Default: false.
  bool read_only = false;
  // fsync the WAL before a write returns (an acknowledged service write survives a
  // machine crash, not only a process crash). Default: false.
  bool sync_writes = false;
  // Postings arrive as online point writes and are read after them in bursts (a
  // shard: ingest, then verification; or a query now and then). Their memtable is
  // then an unsorted vector, sorted once when flushed: an insert is an append instead
  // of a skip-list search of random posting keys (in the service bench, 40% of a
  // shard's ingest CPU).
  // A vector memtable is slow to read (every iterator sorts a copy), so each read of
  // the postings first flushes the family if postings were written since the last
  // flush: reads between writes pay a flush each (a small level-0 file). Batches
  // that commit together are then inserted one after another, not in parallel.
  // Ignored with read_only or bulk_load. Default: false (a skip list; reads see
  // writes without a flush).
  bool append_postings = false;
};

// Collects the writes for many documents into one RocksDB WriteBatch.
class WriteBatchBuilder {
 public:
  // REQUIRES: `store` outlives the builder.
  explicit WriteBatchBuilder(const class IndexStore* store);
  ~WriteBatchBuilder();
  WriteBatchBuilder(const WriteBatchBuilder&) = delete;
  WriteBatchBuilder& operator=(const WriteBatchBuilder&) = delete;

  // Metadata, signature and one posting per band. `sig` has k values; `buckets`
  // has one bucket per band.
  void AddDocument(const DocumentMeta& doc, const uint32_t* sig, int k, const uint64_t* buckets);
  // The parts on their own: a shard stores only the postings it owns and the
  // signatures of their documents; a coordinator stores metadata and signatures.
  void AddMeta(const DocumentMeta& doc);
  void AddSignature(uint64_t key, const uint32_t* sig, int k);
  // The same from the wire form (index/signature_codec.h, 4k bytes little-endian),
  // which is also the stored form: no unpacking. REQUIRES: packed.size() == 4k.
  void AddPackedSignature(uint64_t key, std::string_view packed);
  void AddPosting(int band, uint64_t bucket, uint64_t key);
  // Exact-content and URL lookups (reference generations use them).
  void AddContent(const DocumentMeta& doc);
  void AddUrl(const std::string& normalized_url, uint64_t key);
  void AddDecision(const Decision& d);
  void AddEdge(const Edge& e);
  // Many at once, added in key order (cheap memtable inserts; the same entries as
  // one call per item).
  void AddDecisions(const std::vector<Decision>& decisions);
  void AddEdges(const std::vector<Edge>& edges);
  // Key-value entries in the batch.
  size_t count() const { return count_; }

 private:
  friend class IndexStore;
  // One direction of an edge: key (a, b), or (b, a) when reversed.
  void AddEdgeEntry(const Edge& e, bool reversed);
  const IndexStore* store_;
  size_t count_ = 0;
  bool has_postings_ = false;
  std::string key_, value_;  // scratch
  std::unique_ptr<rocksdb::WriteBatch> batch_;
};

// Writes the bulk data of a batch job (postings, signatures, documents, content,
// decisions, edges)
// without the memtable: entries are buffered per family; when all buffers together
// reach `buffer_bytes`, the largest is sorted,
// written as one SST file (rocksdb::SstFileWriter) and ingested into the index
// (IngestExternalFile, moving the file). Several runs of one family overlap and stay
// level-0 files; reads merge them. Keys must be distinct within the job (doc keys are:
// the DocTable refuses duplicates); a repeated key keeps the last value.
// A full run is sorted, written and ingested on a background thread while the next
// one fills (at most one run in flight; a written run's buffers are reused by the
// next run of the same kind, postings or the rest, so memory stays below
// ~(families + 2) x 1.5 x buffer_bytes). Nothing is
// visible until the run holding it has been ingested; Finish() ingests the rest.
// REQUIRES: the store was opened with bulk_load (no WAL, no auto compaction).
class BulkIndexWriter {
 public:
  // Default buffer: 96 MiB of keys, values and sort entries over all families.
  explicit BulkIndexWriter(class IndexStore* store, size_t buffer_bytes = 96 << 20);
  ~BulkIndexWriter();  // unfinished runs are dropped, their files removed
  BulkIndexWriter(const BulkIndexWriter&) = delete;
  BulkIndexWriter& operator=(const BulkIndexWriter&) = delete;

  Status AddMeta(const DocumentMeta& doc);
  Status AddSignature(uint64_t key, const uint32_t* sig, int k);
  Status AddPosting(int band, uint64_t bucket, uint64_t key);
  Status AddContent(const DocumentMeta& doc);
  Status AddDecision(const Decision& d);
  Status AddEdge(const Edge& e);
  // Writes and ingests every buffered run.
  Status Finish();
  // SST files ingested so far.
  size_t files() const { return files_; }

 private:
  struct Run;
  Status Add(int family, std::string_view key, std::string_view value);
  // Hands the family's run to the background writer (after the previous one is done).
  Status StartRun(int family);
  // Waits for the background writer; returns its status.
  Status WaitForWriter();
  // Sorts, writes and ingests one run as SST file number `number`.
  Status WriteRun(int family, Run* run, uint64_t number);
  // Sort one run in key order and put it into `writer` (named `file` in errors).
  static Status PutEntries(Run* run, rocksdb::SstFileWriter* writer, const std::string& file);
  static Status PutPostings(Run* run, rocksdb::SstFileWriter* writer, const std::string& file);
  Status Added(size_t bytes);  // accounts an added entry; may start a run

  class IndexStore* store_;
  size_t buffer_bytes_;
  size_t buffered_ = 0;  // footprint of all runs_
  std::vector<std::unique_ptr<Run>> runs_;  // by family index
  size_t files_ = 0;
  uint64_t next_file_ = 0;
  std::unique_ptr<Run> writing_;  // the run the background writer owns
  // Written runs, emptied: buffers for the next run of their kind ([1]: postings).
  std::unique_ptr<Run> spare_[2];
  int writing_family_ = 0;
  std::thread writer_;
  Status writer_status_;          // set by the writer; read after joining it
  std::string key_, value_;  // scratch
};

// One probe of the postings: a band's bucket.
struct BucketRef {
  int band = 0;
  uint64_t bucket = 0;
};

class IndexStore {
 public:
  ~IndexStore();
  IndexStore(const IndexStore&) = delete;
  IndexStore& operator=(const IndexStore&) = delete;

  // Creates a new, empty index at `path`. Fails if anything exists there.
  static StatusOr<std::unique_ptr<IndexStore>> Create(const std::string& path,
                                                      const SketchScheme& scheme,
                                                      const StoreOptions& options = {});
  // Opens an existing index. When `expected` is given, the stored scheme must
  // equal it (Status::Mismatch otherwise).
  static StatusOr<std::unique_ptr<IndexStore>> Open(const std::string& path,
                                                    const SketchScheme* expected,
                                                    const StoreOptions& options = {});
  // Reads the stored scheme of the index at `path` without keeping it open.
  static StatusOr<SketchScheme> ReadScheme(const std::string& path);

  const SketchScheme& scheme() const { return scheme_; }
  const std::string& path() const { return path_; }

  // Applies and clears the batch atomically.
  Status Write(WriteBatchBuilder* batch);
  Status PutJobRecord(const std::string& json);
  StatusOr<std::string> GetJobRecord();
  // Other records of the meta family (e.g. a service job's parameters). Keys
  // "layout" and "scheme" are reserved.
  Status PutMeta(const std::string& key, const std::string& value);
  StatusOr<std::string> GetMeta(const std::string& key) const;
  // Flushes memtables to SST files (used before publishing a bulk-built index).
  Status Flush();

  // Calls fn(band, bucket, doc keys sorted ascending) for every bucket of `band`
  // holding at least `min_size` documents, in bucket order. Stops at the first
  // non-OK status fn returns and passes it on.
  using BucketFn = std::function<Status(int band, uint64_t bucket, const std::vector<uint64_t>&)>;
  Status ForEachBucket(int band, size_t min_size, const BucketFn& fn) const;

  // Every posting of `band` as (bucket, doc key), ascending, appended to *out: one
  // sequential scan, no call per bucket (ForEachBucket's form costs a call each).
  Status ReadBand(int band, std::vector<std::pair<uint64_t, uint64_t>>* out) const;

  // RocksDB's estimates of the numbers of postings and signatures (cheap, approximate).
  uint64_t EstimatePostings() const;
  uint64_t EstimateSignatures() const;

  // Keys of documents with exactly this normalised content / normalised URL.
  StatusOr<std::vector<uint64_t>> DocumentsWithContent(uint64_t hi, uint64_t lo) const;
  StatusOr<std::vector<uint64_t>> DocumentsWithUrl(const std::string& normalized_url) const;
  // Every content record (content hash, doc key) / URL record (normalised URL, doc
  // key) in key order: ascending (hi, lo, key) / (URL bytes, key). One sequential
  // scan, for merging with another sorted list instead of one lookup per document.
  Status ForEachContent(const std::function<Status(uint64_t hi, uint64_t lo, uint64_t key)>& fn) const;
  Status ForEachUrl(const std::function<Status(std::string_view url, uint64_t key)>& fn) const;
  // Compacts every column family into the fewest files (used when freezing).
  Status Compact();

  // The keys of one bucket, ascending.
  StatusOr<std::vector<uint64_t>> BucketMembers(int band, uint64_t bucket) const;
  // The members of many buckets in one pass: the probes are visited in key order with
  // one iterator (the prefix bloom filter skips absent buckets). (*out)[i] holds the
  // keys of probes[i], ascending.
  Status BucketMembersOf(const std::vector<BucketRef>& probes,
                         std::vector<std::vector<uint64_t>>* out) const;
  // The signatures of `keys` (any order; sorted is cheapest): *sigs gets
  // keys.size() x k values (zeros for a missing key), (*found)[i] says whether keys[i]
  // has one. Read as ReadInKeyOrder says.
  Status GetSignatures(const std::vector<uint64_t>& keys, std::vector<uint32_t>* sigs,
                       std::vector<char>* found) const;
  // Calls fn for every stored document (key order) / signature (key order).
  Status ForEachDocument(const std::function<Status(DocumentMeta)>& fn) const;
  Status ForEachSignature(const std::function<Status(uint64_t, std::vector<uint32_t>)>& fn) const;
  // Calls fn for every document in key order with its decision (nullptr when it has
  // none) and its signature (empty when it has none, or when !with_signatures): one
  // sequential scan of each family, merged by key, instead of point lookups.
  using DocumentRecordFn =
      std::function<Status(const DocumentMeta&, const Decision*, const std::vector<uint32_t>&)>;
  Status ForEachDocumentRecord(const DocumentRecordFn& fn, bool with_signatures = true) const;

  StatusOr<DocumentMeta> GetDocument(uint64_t key) const;
  // The documents of `keys` (any order; sorted is cheapest), in that order;
  // NotFound names the first key without one. Read as ReadInKeyOrder says.
  StatusOr<std::vector<DocumentMeta>> GetDocuments(const std::vector<uint64_t>& keys) const;
  StatusOr<std::vector<uint32_t>> GetSignature(uint64_t key) const;
  StatusOr<Decision> GetDecision(uint64_t key) const;
  // Every stored edge touching `key`.
  StatusOr<std::vector<Edge>> EdgesOf(uint64_t key) const;

  // The raw database and families, for benchmarks that compare against RocksDB
  // itself with the same options. Not for data-path code.
  enum class Family { kPostings, kSignatures, kDocs };
  rocksdb::DB* raw_db() const { return db_.get(); }
  rocksdb::ColumnFamilyHandle* raw_family(Family f) const {
    return f == Family::kPostings ? postings_ : f == Family::kSignatures ? signatures_ : docs_;
  }

  // Value encodings (exposed for tests and tools).
  static std::string EncodeDocument(const DocumentMeta& doc);
  static StatusOr<DocumentMeta> DecodeDocument(uint64_t key, std::string_view value);

 private:
  friend class WriteBatchBuilder;
  friend class BulkIndexWriter;
  IndexStore() = default;
  // Keys read by a scan when at least 1 in kDenseReadRatio entries of their key range
  // is wanted, else by one MultiGet.
  static constexpr double kDenseReadRatio = 32;
  // Calls fn(i, value) for every keys[i] present in the doc-keyed family `cf` (keys in
  // any order, repeats allowed). Sparse keys are read by one MultiGet; dense ones (see
  // kDenseReadRatio) by one sequential scan of their key range with readahead, without
  // filling the block cache, calling fn in key order.
  Status ReadInKeyOrder(rocksdb::ColumnFamilyHandle* cf, const std::vector<uint64_t>& keys,
                        const std::function<Status(size_t, std::string_view)>& fn) const;
  static StatusOr<std::unique_ptr<IndexStore>> OpenInternal(const std::string& path, bool create,
                                                            const StoreOptions& given);
  // An iterator over the postings. With append_postings, first flushes postings
  // written since the last flush, so that the iterator reads sorted files instead
  // of sorting the memtable.
  StatusOr<std::unique_ptr<rocksdb::Iterator>> NewPostingsIterator(
      const rocksdb::ReadOptions& ro) const;
  Status FlushUnsortedPostings() const;
  // An iterator over one band of the postings, positioned at its first posting:
  // sequential (readahead, no block cache fill), across buckets. *upper_key and
  // *upper hold its upper bound and must outlive it.
  StatusOr<std::unique_ptr<rocksdb::Iterator>> ScanBand(int band, std::string* upper_key,
                                                        rocksdb::Slice* upper) const;
  Status CheckLayoutAndScheme(const SketchScheme* expected);

  std::string path_;
  StoreOptions options_;
  SketchScheme scheme_;
  std::unique_ptr<rocksdb::DB> db_;
  std::vector<rocksdb::ColumnFamilyHandle*> handles_;  // owned; destroyed before db_
  rocksdb::ColumnFamilyHandle* meta_ = nullptr;
  rocksdb::ColumnFamilyHandle* postings_ = nullptr;
  rocksdb::ColumnFamilyHandle* signatures_ = nullptr;
  rocksdb::ColumnFamilyHandle* docs_ = nullptr;
  rocksdb::ColumnFamilyHandle* decisions_ = nullptr;
  rocksdb::ColumnFamilyHandle* edges_ = nullptr;
  rocksdb::ColumnFamilyHandle* content_ = nullptr;
  rocksdb::ColumnFamilyHandle* urls_ = nullptr;
  // Set (before the write) by every Write() that adds postings to a vector memtable;
  // cleared by the flush that sorts them, under flush_mu_, which concurrent readers
  // take so that they wait for that flush instead of each sorting the memtable.
  mutable std::atomic<bool> unsorted_postings_{false};
  mutable std::mutex flush_mu_;
};

// Bytes of the regular files under `path` (an index, a shard's data directory);
// 0 when it does not exist. Unreadable entries are skipped.
uint64_t DirectoryBytes(const std::string& path);

}  // namespace shingleton
