#include "index/dedup_job.h"

#include <unistd.h>

#include <chrono>
#include <filesystem>

#include "index/bands.h"
#include "index/bucket_scan.h"
#include "index/clusters.h"
#include "index/doc_table.h"
#include "index/flat_map.h"
#include "index/index_store.h"
#include "index/json_writer.h"
#include "index/manifest.h"
#include "index/parallel.h"
#include "index/reference_merge.h"
#include "index/reference_resolution.h"
#include "index/url_normalizer.h"

#include <algorithm>
#include <iterator>
#include <memory>
#include <vector>

namespace shingleton {
namespace {

namespace fs = std::filesystem;
using Clock = std::chrono::steady_clock;

constexpr size_t kMaxBadExamples = 20;

double SecondsSince(Clock::time_point t) {
  return std::chrono::duration<double>(Clock::now() - t).count();
}

std::string IndexPath(const DedupOptions& o) {
  return o.index_path.empty() ? o.out_dir + "/index" : o.index_path;
}

// Refuses to overwrite earlier results unless --replace is given; without it, an
// existing index built with another scheme is named as such.
Status CheckOutputs(const DedupOptions& o, const SketchScheme& scheme) {
  std::error_code ec;
  fs::create_directories(o.out_dir, ec);
  if (ec) return Status::IoError("cannot create output directory " + o.out_dir + ": " + ec.message());
  const std::string index = IndexPath(o);
  if (fs::exists(index)) {
    auto existing = IndexStore::ReadScheme(index);
    if (!existing.ok() && existing.status().code() != Status::Code::kNotFound && !o.replace) {
      return existing.status().WithContext("existing index");
    }
    if (existing.ok() && existing.value() != scheme && !o.replace) {
      return Status::Mismatch("the index at " + index + " was built with another sketch scheme (" +
                              existing.value().DescribeDifference(scheme) +
                              "; existing vs this job); pass --replace to rebuild it");
    }
    if (!o.replace) {
      return Status::AlreadyExists("an index already exists at " + index +
                                   "; pass --replace to rebuild it or choose another --out");
    }
  }
  for (const char* name : {"keep.jsonl", "drop.jsonl", "summary.json"}) {
    if (fs::exists(fs::path(o.out_dir) / name) && !o.replace) {
      return Status::AlreadyExists(o.out_dir + "/" + name + " exists; pass --replace to overwrite");
    }
  }
  return Status::Ok();
}

// Reads every input into the store and the table. Bad records fail the job, or
// are skipped and counted with --skip-bad.
struct ContentKey {
  uint64_t hi, lo;
  bool operator==(const ContentKey& o) const { return hi == o.hi && lo == o.lo; }
};
struct ContentKeyHash {
  uint64_t operator()(const ContentKey& c) const { return c.hi; }  // a uniform hash already
};

// What ingestion produces besides the store and the table.
struct IngestOutput {
  std::vector<Edge> exact_edges;            // identical normalised text, found without LSH
  std::vector<std::string> normalized_urls;  // per table index, when URL revisits are wanted
};

Status Ingest(const DedupOptions& o, uint64_t total_bytes, IndexStore* store, DocTable* table,
              DedupSummary* summary, IngestOutput* out, Clock::time_point start) {
  // The first document with each normalised text (its table index); later identical
  // ones join it directly and write no postings (the exact fast path).
  FlatMap<ContentKey, uint32_t, ContentKeyHash> first_with_content;
  const SketchScheme& scheme = store->scheme();
  const int k = scheme.num_hashes, b = scheme.bands;
  // Documents, signatures and postings go to sorted SST runs, not the memtable.
  BulkIndexWriter bulk(store);
  Clock::time_point last_progress = start;
  auto skip = [&](BadRecord kind, const Status& why) {
    ++summary->skipped[static_cast<size_t>(kind)];
    if (summary->skipped_examples.size() < kMaxBadExamples) {
      summary->skipped_examples.push_back({why.message(), kind});
    }
  };
  auto sink = [&](const SignedBatch& signed_batch) -> Status {
    for (size_t i = 0; i < signed_batch.records.size(); ++i) {
      const SignedRecord& rec = signed_batch.records[i];
      ++summary->records_read;
      if (rec.bad != BadRecord::kNone) {
        if (!o.skip_bad) return rec.error;
        skip(rec.bad, rec.error);
        continue;
      }
      if (!rec.skipped.empty()) {
        ++summary->records_without_document[rec.skipped];
        continue;
      }
      if (rec.truncated) ++summary->truncated_records;
      DocumentMeta meta = rec.meta;
      meta.ordinal = table->size();
      // The signature goes to the index only; LoadSignatures() brings back the ones
      // verification needs.
      Status added = table->Add(meta, nullptr);
      if (!added.ok()) {
        Status bad = Status::BadInput(added.message());
        if (!o.skip_bad) return bad;
        skip(BadRecord::kDuplicateId, bad);
        continue;
      }
      if (meta.tokens == 0) ++summary->empty_documents;
      if (o.url_revisits) {
        auto url = meta.url.empty() ? StatusOr<std::string>(std::string()) : NormalizeUrl(meta.url);
        out->normalized_urls.push_back(url.ok() ? url.value() : std::string());
      }
      auto [first, fresh] = first_with_content.emplace(ContentKey{meta.content_hi, meta.content_lo},
                                                       static_cast<uint32_t>(meta.ordinal));
      SHINGLETON_RETURN_IF_ERROR(bulk.AddMeta(meta));
      SHINGLETON_RETURN_IF_ERROR(bulk.AddSignature(meta.key, signed_batch.sig(i, k), k));
      if (fresh) {
        const uint64_t* buckets = signed_batch.bucket(i, b);
        for (int band = 0; band < b; ++band) SHINGLETON_RETURN_IF_ERROR(bulk.AddPosting(band, buckets[band], meta.key));
        continue;
      }
      Edge e;
      const uint64_t first_key = table->key(*first);
      e.a = std::min(meta.key, first_key);
      e.b = std::max(meta.key, first_key);
      e.similarity = 1.0f;
      e.band = Edge::kExactBand;
      out->exact_edges.push_back(e);
      ++summary->exact_duplicates;
    }
    summary->text_bytes += signed_batch.text_bytes;
    if (o.progress && SecondsSince(last_progress) > 0.2) {
      last_progress = Clock::now();
      o.progress({summary->records_read, summary->text_bytes, signed_batch.raw_bytes_done,
                  total_bytes, SecondsSince(start), "reading"});
    }
    return Status::Ok();
  };
  SHINGLETON_RETURN_IF_ERROR(RunIngestPipeline(o.ingest, scheme, sink));
  return bulk.Finish();
}

// Holds in the table the signatures that the rest of the job reads: of every
// document in a shared bucket (`shared_keys`, sorted) and of both ends of every
// exact-duplicate edge; of every document when `all` (point lookups in references
// look each one up).
Status LoadSignatures(const IndexStore& store, bool all, const std::vector<uint64_t>& shared_keys,
                      const std::vector<Edge>& exact_edges, int threads, DocTable* table) {
  if (all) {
    return store.ForEachSignature([&](uint64_t key, std::vector<uint32_t> sig) -> Status {
      const int64_t i = table->IndexOf(key);
      if (i >= 0) table->SetSignature(static_cast<size_t>(i), sig.data());
      return Status::Ok();
    });
  }
  std::vector<uint64_t> ends;
  for (const Edge& e : exact_edges) {
    ends.push_back(e.a);
    ends.push_back(e.b);
  }
  std::sort(ends.begin(), ends.end());
  std::vector<uint64_t> keys;
  keys.reserve(shared_keys.size() + ends.size());
  std::set_union(shared_keys.begin(), shared_keys.end(), ends.begin(), ends.end(), std::back_inserter(keys));
  keys.erase(std::unique(keys.begin(), keys.end()), keys.end());
  table->ReserveSignatures(keys.size());
  return ReadSignaturesInOrder(store, keys, threads, [table](uint64_t key, const uint32_t* sig) -> Status {
    const int64_t i = table->IndexOf(key);
    if (i < 0) return Status::Corruption("a posting names document key " + std::to_string(key) + ", not in the job");
    table->SetSignature(static_cast<size_t>(i), sig);
    return Status::Ok();
  });
}

StatusOr<std::vector<Edge>> FindEdges(const DedupOptions& o, const SharedBuckets& shared, const DocTable& table,
                                      DedupSummary* summary) {
  VerifyOptions vo;
  vo.threshold = o.threshold;
  vo.all_pairs_limit = o.all_pairs_limit;
  vo.max_leaders = o.max_leaders;
  SHINGLETON_ASSIGN_OR_RETURN(
      EdgeScan scan,
      VerifySharedBuckets(shared, vo, table.num_hashes(), [&table](uint64_t key) { return table.SignatureOf(key); },
                          ResolveThreads(o.ingest.threads)));
  summary->comparisons = scan.comparisons;
  summary->buckets_checked = scan.buckets_checked;
  summary->edges = scan.edges.size();
  return std::move(scan.edges);
}

// The documents that already have an exact or URL match in a generation: no near
// candidate can beat it, so the merge skips them.
KeySet SettledDocuments(const DocTable& table, const ReferenceCandidates& candidates) {
  std::vector<uint64_t> keys;
  for (size_t i = 0; i < candidates.size(); ++i) {
    if (!candidates[i].empty()) keys.push_back(table.key(i));
  }
  return KeySet(keys);
}

// The best reference match of every document, given its exact and URL
// candidates. With the merge, `mergers` (one per generation) were fed every band
// of the job's postings during the bucket scan.
StatusOr<std::vector<ReferenceMatch>> MatchReferences(const DedupOptions& o, const ReferenceSet& refs,
                                                      const DocTable& table, const IngestOutput& ingested,
                                                      std::vector<std::unique_ptr<ReferenceMerger>>* mergers,
                                                      ReferenceCandidates candidates) {
  const int threads = ResolveThreads(o.ingest.threads);
  if (o.reference_lookup == ReferenceLookup::kPoint) {
    SHINGLETON_ASSIGN_OR_RETURN(ReferenceCandidates near, LookUpNearCandidates(refs, table, o.threshold, threads));
    for (size_t i = 0; i < near.size(); ++i) candidates[i].insert(candidates[i].end(), near[i].begin(), near[i].end());
  }
  ReferenceCandidates near(table.size());
  for (size_t g = 0; g < mergers->size(); ++g) {
    SHINGLETON_ASSIGN_OR_RETURN(std::vector<ReferenceHit> hits, (*mergers)[g]->Finish(threads));
    SHINGLETON_RETURN_IF_ERROR(AddNearHits(table, static_cast<int>(g), hits, &near));
    (*mergers)[g].reset();
  }
  ShareWithCopies(table, ingested.exact_edges, &near);
  for (size_t i = 0; i < near.size(); ++i) candidates[i].insert(candidates[i].end(), near[i].begin(), near[i].end());
  return ResolveReferences(refs, candidates, threads);
}

Status PersistDecisions(IndexStore* store, const std::vector<Decision>& decisions,
                        const std::vector<Edge>& edges) {
  BulkIndexWriter bulk(store, 32 << 20);  // the job's peak memory is here: smaller runs
  for (const Decision& d : decisions) SHINGLETON_RETURN_IF_ERROR(bulk.AddDecision(d));
  for (const Edge& e : edges) SHINGLETON_RETURN_IF_ERROR(bulk.AddEdge(e));
  return bulk.Finish();
}

// Moves the finished index into place, replacing an older one.
Status PublishIndex(const std::string& building, const std::string& final_path) {
  std::error_code ec;
  const std::string old = final_path + ".old-" + std::to_string(::getpid());
  const bool had_old = fs::exists(final_path);
  if (had_old) {
    fs::rename(final_path, old, ec);
    if (ec) return Status::IoError("cannot move aside " + final_path + ": " + ec.message());
  }
  fs::rename(building, final_path, ec);
  if (ec) {
    if (had_old) fs::rename(old, final_path);
    return Status::IoError("cannot move " + building + " to " + final_path + ": " + ec.message());
  }
  if (had_old) fs::remove_all(old, ec);
  return Status::Ok();
}

// Removes a half-built index when the job fails.
class BuildDirGuard {
 public:
  explicit BuildDirGuard(std::string path) : path_(std::move(path)) {}
  ~BuildDirGuard() {
    if (!path_.empty()) {
      std::error_code ec;
      fs::remove_all(path_, ec);
    }
  }
  void Release() { path_.clear(); }

 private:
  std::string path_;
};

}  // namespace

void CountDecisions(const std::vector<Decision>& decisions, DedupSummary* summary) {
  for (const Decision& d : decisions) {
    if (d.kept()) {
      ++summary->kept;
      if (d.cluster_size >= 2) ++summary->clusters;
    } else {
      ++summary->dropped;
    }
    summary->largest_cluster = std::max<uint64_t>(summary->largest_cluster, d.cluster_size);
  }
}

uint64_t DedupSummary::skipped_total() const {
  uint64_t n = 0;
  for (uint64_t c : skipped) n += c;
  return n;
}

StatusOr<SketchScheme> SchemeFromOptions(const DedupOptions& o) {
  if (!(o.threshold > 0 && o.threshold < 1)) {
    return Status::InvalidArgument("threshold must be strictly between 0 and 1");
  }
  if (!(o.fn_weight >= 0 && o.fn_weight <= 1)) {
    return Status::InvalidArgument("false-negative weight must be in [0, 1]");
  }
  SketchScheme s = SketchScheme::Default();
  s.shingle_kind = o.shingle_kind;
  s.shingle_size = o.shingle_size > 0 ? o.shingle_size : 5;
  s.seed = o.seed;
  s.num_hashes = o.num_hashes;
  SHINGLETON_ASSIGN_OR_RETURN(s.signature_method, SignatureMethodForSketch(o.sketch, o.num_hashes));
  if ((o.bands > 0) != (o.rows > 0)) {
    return Status::InvalidArgument("give both bands and rows, or neither");
  }
  if (o.bands > 0) {
    s.bands = o.bands;
    s.rows = o.rows;
  } else if (o.num_hashes >= 1) {
    Banding chosen = ChooseBanding(o.threshold, o.num_hashes, o.fn_weight);
    s.bands = chosen.bands;
    s.rows = chosen.rows;
  }
  SHINGLETON_RETURN_IF_ERROR(s.Validate());
  return s;
}

StatusOr<DedupSummary> RunDedupJob(const DedupOptions& o) {
  const Clock::time_point start = Clock::now();
  if (o.ingest.inputs.empty()) return Status::InvalidArgument("no input files");
  if (o.out_dir.empty()) return Status::InvalidArgument("no output directory");
  DedupSummary summary;
  SHINGLETON_ASSIGN_OR_RETURN(summary.scheme, SchemeFromOptions(o));
  SHINGLETON_ASSIGN_OR_RETURN(uint64_t input_bytes, InputBytes(o.ingest.inputs));
  SHINGLETON_RETURN_IF_ERROR(CheckOutputs(o, summary.scheme));
  std::unique_ptr<ReferenceSet> refs;
  if (!o.references.empty()) {
    SHINGLETON_ASSIGN_OR_RETURN(refs, ReferenceSet::Open(o.references, summary.scheme));
    for (size_t g = 0; g < refs->size(); ++g) summary.reference_names.push_back(refs->record(g).name);
  }

  const std::string index_path = IndexPath(o);
  const std::string building = index_path + ".building-" + std::to_string(::getpid());
  std::error_code ec;
  fs::remove_all(building, ec);
  BuildDirGuard guard(building);
  StoreOptions so;
  so.bulk_load = true;
  SHINGLETON_ASSIGN_OR_RETURN(auto store, IndexStore::Create(building, summary.scheme, so));
  DocTable table(summary.scheme.num_hashes);

  auto report = [&](const char* phase) {
    if (o.progress) {
      o.progress({summary.records_read, summary.text_bytes, summary.records_read ? input_bytes : 0, input_bytes,
                  SecondsSince(start), phase});
    }
  };
  report("reading");
  IngestOutput ingested;
  SHINGLETON_RETURN_IF_ERROR(Ingest(o, input_bytes, store.get(), &table, &summary, &ingested, start));
  SHINGLETON_RETURN_IF_ERROR(store->Flush());  // buckets are then scanned from sorted files
  summary.documents = table.size();
  summary.seconds_read = SecondsSince(start);

  report("candidates");
  Clock::time_point t = Clock::now();
  // One scan of the job's postings: its shared buckets for verification and, with
  // the reference merge, every band merged with every generation meanwhile.
  const int threads = ResolveThreads(o.ingest.threads);
  ReferenceCandidates exact_matches;  // exact copies and URL revisits in the references
  KeySet settled;
  std::vector<std::unique_ptr<ReferenceMerger>> mergers;
  if (refs) {
    exact_matches.resize(table.size());
    SHINGLETON_RETURN_IF_ERROR(AddExactCandidates(
        *refs, table, ingested.normalized_urls, {o.threshold, o.url_revisits, threads, o.reference_lookup},
        &exact_matches));
    settled = SettledDocuments(table, exact_matches);
  }
  if (refs && o.reference_lookup == ReferenceLookup::kMerge) {
    for (size_t g = 0; g < refs->size(); ++g) {
      mergers.push_back(std::make_unique<ReferenceMerger>(refs->store(g), *store, o.threshold, &settled));
    }
  }
  BandVisitor visit;
  if (!mergers.empty()) {
    visit = [&mergers](int band, const BandPostings& postings) -> Status {
      for (auto& m : mergers) SHINGLETON_RETURN_IF_ERROR(m->AddBand(band, postings));
      return Status::Ok();
    };
  }
  SHINGLETON_ASSIGN_OR_RETURN(SharedBuckets shared, ScanBands(*store, threads, visit));
  // Point lookups in references look up every document's signature; otherwise
  // only the verified ones are held.
  const bool all_signatures = refs != nullptr && o.reference_lookup == ReferenceLookup::kPoint;
  SHINGLETON_RETURN_IF_ERROR(LoadSignatures(*store, all_signatures, shared.Keys(), ingested.exact_edges, threads, &table));
  SHINGLETON_ASSIGN_OR_RETURN(std::vector<Edge> edges, FindEdges(o, shared, table, &summary));
  shared = SharedBuckets();
  edges.insert(edges.end(), ingested.exact_edges.begin(), ingested.exact_edges.end());
  DeduplicateEdges(&edges);
  std::vector<ReferenceMatch> matches;
  if (refs) {
    report("references");
    const Clock::time_point r = Clock::now();
    SHINGLETON_ASSIGN_OR_RETURN(matches,
                                MatchReferences(o, *refs, table, ingested, &mergers, std::move(exact_matches)));
    DropEdgesOfMatched(table, matches, &edges);
    summary.seconds_references = SecondsSince(r);
  }
  summary.seconds_candidates = SecondsSince(t);

  report("clusters");
  t = Clock::now();
  std::vector<Decision> decisions = ResolveClusters(table, edges, o.policy);
  if (o.chain_guard) {
    summary.chain_guard =
        GuardChains(table, o.policy, o.chain_bound > 0 ? o.chain_bound : o.threshold, &decisions);
  }
  table.ReleaseSignatures();  // verified and clustered: the rest needs no signature
  std::vector<ManifestRow> rows = ManifestRows(table, decisions);
  if (refs) ApplyReferenceMatches(*refs, matches, &decisions, &rows);
  CountDecisions(decisions, &summary);
  for (const ManifestRow& r : rows) ++summary.dropped_by_reason[static_cast<size_t>(r.reason)];
  summary.seconds_clusters = SecondsSince(t);

  report("writing");
  t = Clock::now();
  // The index's decisions and the manifests read the same results: written side by
  // side on 2 or more threads.
  ManifestWriter manifests;
  SHINGLETON_RETURN_IF_ERROR(ParallelFor(2, threads, [&](size_t part) {
    return part == 0 ? manifests.Prepare(o.out_dir, rows) : PersistDecisions(store.get(), decisions, edges);
  }));
  summary.seconds_write = SecondsSince(t);
  summary.seconds_total = SecondsSince(start);
  const std::string summary_json = SummaryJson(o, summary);
  SHINGLETON_RETURN_IF_ERROR(store->PutJobRecord(summary_json));
  SHINGLETON_RETURN_IF_ERROR(store->Flush());
  store.reset();

  AtomicFile summary_file(o.out_dir + "/summary.json");
  SHINGLETON_RETURN_IF_ERROR(summary_file.Open());
  SHINGLETON_RETURN_IF_ERROR(summary_file.Append(summary_json + "\n"));
  SHINGLETON_RETURN_IF_ERROR(summary_file.Finish());
  // Publish: the index first, then the manifests, the summary last.
  SHINGLETON_RETURN_IF_ERROR(PublishIndex(building, index_path));
  guard.Release();
  SHINGLETON_RETURN_IF_ERROR(manifests.Commit());
  SHINGLETON_RETURN_IF_ERROR(summary_file.Commit());
  return summary;
}

std::string SummaryJson(const DedupOptions& o, const DedupSummary& s) {
  JsonWriter w;
  auto count = [&w](const char* key, uint64_t v) {
    w.Key(key);
    w.Uint(v);
  };
  auto seconds = [&w](const char* key, double v) {
    w.Key(key);
    w.Double(v, 3);
  };
  w.BeginObject();
  w.Key("tool");
  w.String("shingleton dedup");
  w.Key("inputs");
  w.BeginArray();
  for (const auto& in : o.ingest.inputs) w.String(in);
  w.EndArray();
  w.Key("index");
  w.String(IndexPath(o));
  w.Key("scheme");
  w.String(s.scheme.Serialize());
  w.Key("threshold");
  w.Double(o.threshold, 4);
  w.Key("keep_policy");
  w.String(o.policy.Name());
  count("records_read", s.records_read);
  count("documents", s.documents);
  count("kept", s.kept);
  count("dropped", s.dropped);
  count("clusters", s.clusters);
  count("largest_cluster", s.largest_cluster);
  count("empty_documents", s.empty_documents);
  count("exact_duplicates", s.exact_duplicates);
  count("truncated_records", s.truncated_records);
  w.Key("records_without_document");
  w.BeginObject();
  for (const auto& [reason, n] : s.records_without_document) count(reason.c_str(), n);
  w.EndObject();
  w.Key("dropped_by_reason");
  w.BeginObject();
  for (size_t r = 1; r < s.dropped_by_reason.size(); ++r) {
    count(DropReasonName(static_cast<DropReason>(r)), s.dropped_by_reason[r]);
  }
  w.EndObject();
  w.Key("references");
  w.BeginArray();
  for (const auto& name : s.reference_names) w.String(name);
  w.EndArray();
  w.Key("skipped");
  w.BeginObject();
  for (size_t i = 1; i < s.skipped.size(); ++i) count(BadRecordName(static_cast<BadRecord>(i)), s.skipped[i]);
  w.EndObject();
  w.Key("skipped_examples");
  w.BeginArray();
  for (const auto& ex : s.skipped_examples) {
    w.BeginObject();
    w.Key("kind");
    w.String(BadRecordName(ex.kind));
    w.Key("error");
    w.String(ex.where);
    w.EndObject();
  }
  w.EndArray();
  count("buckets_checked", s.buckets_checked);
  count("comparisons", s.comparisons);
  count("edges", s.edges);
  if (o.chain_guard) {
    w.Key("chain_guard");
    w.BeginObject();
    w.Key("bound");
    w.Double(o.chain_bound > 0 ? o.chain_bound : o.threshold, 4);
    count("clusters_guarded", s.chain_guard.clusters_guarded);
    count("members_kept", s.chain_guard.members_kept);
    count("members_moved", s.chain_guard.members_moved);
    w.EndObject();
  }
  count("text_bytes", s.text_bytes);
  w.Key("seconds");
  w.BeginObject();
  seconds("read_and_sign", s.seconds_read);
  seconds("candidates", s.seconds_candidates);
  if (!s.reference_names.empty()) seconds("references", s.seconds_references);
  seconds("clusters", s.seconds_clusters);
  seconds("write", s.seconds_write);
  seconds("total", s.seconds_total);
  w.EndObject();
  w.EndObject();
  return w.Take();
}

}  // namespace shingleton
