#include "server/coordinator_service.h"

#include <spdlog/spdlog.h>

#include <chrono>
#include <cmath>
#include <filesystem>
#include <future>
#include <map>
#include <set>

#include "index/signature_codec.h"
#include "index/chain_guard.h"
#include "index/clusters.h"
#include "index/dedup_job.h"
#include "index/doc_table.h"
#include "index/inspect_report.h"
#include "index/manifest.h"
#include "index/minhash.h"
#include "index/partition.h"
#include "index/ingest_pipeline.h"
#include "index/reference_resolution.h"
#include "index/signer.h"
#include "index/url_normalizer.h"
#include "server/chunked_writer.h"

namespace shingleton::rpc {
namespace {

namespace fs = std::filesystem;
using Clock = std::chrono::steady_clock;




DocumentMeta MetaOf(const v1::SignedDocument& d) {
  DocumentMeta m;
  m.key = d.key();
  m.id = d.id();
  m.url = d.url();
  m.text_bytes = d.text_bytes();
  m.tokens = d.tokens();
  m.rank = d.has_rank() ? d.rank() : NAN;
  m.source = d.source();
  m.excerpt = d.excerpt();
  m.ordinal = d.ordinal();
  m.content_hi = d.content_hi();
  m.content_lo = d.content_lo();
  m.date = d.date();
  return m;
}

std::string ShardMapText(const std::vector<std::string>& shards) {
  std::string s;
  for (const auto& a : shards) s += (s.empty() ? "" : ",") + a;
  return s;
}

// Runs fn(i) for every shard at once and returns the first error.
template <typename Fn>
Status ForEachShardParallel(size_t n, Fn fn) {
  std::vector<std::future<Status>> futures;
  for (size_t i = 0; i < n; ++i) futures.push_back(std::async(std::launch::async, fn, i));
  Status first;
  for (auto& f : futures) {
    Status s = f.get();
    if (first.ok() && !s.ok()) first = s;
  }
  return first;
}

}  // namespace

StatusOr<v1::JobParams> NormalizeParams(const v1::JobParams& in) {
  v1::JobParams p = in;
  SHINGLETON_ASSIGN_OR_RETURN(SketchScheme scheme, SketchScheme::Parse(p.scheme()));
  SHINGLETON_RETURN_IF_ERROR(scheme.Validate());
  p.set_scheme(scheme.Serialize());
  if (!(p.threshold() > 0 && p.threshold() < 1)) {
    return Status::InvalidArgument("threshold must be strictly between 0 and 1");
  }
  SHINGLETON_ASSIGN_OR_RETURN(KeepPolicy policy, KeepPolicy::Parse(p.keep_policy()));
  if (policy.DependsOnInputOrder()) {
    return Status::InvalidArgument(
        "keep policy 'first' depends on arrival order, which concurrent workers do not have; "
        "use longest or field:NAME with the service");
  }
  if (!(p.chain_bound() >= 0 && p.chain_bound() < 1)) {
    return Status::InvalidArgument("chain bound must be in [0, 1)");
  }
  if (p.all_pairs_limit() == 0) p.set_all_pairs_limit(64);
  if (p.max_leaders() == 0) p.set_max_leaders(16);
  return p;
}

CoordinatorService::CoordinatorService(CoordinatorOptions options)
    : options_(std::move(options)),
      pool_(std::make_unique<ThreadPool>(std::max(4u, 2 * std::thread::hardware_concurrency()))) {}

CoordinatorService::~CoordinatorService() { pool_.reset(); }

StatusOr<std::unique_ptr<CoordinatorService>> CoordinatorService::Create(CoordinatorOptions options) {
  if (options.shards.empty()) return Status::InvalidArgument("no shards given (--shards)");
  std::unique_ptr<CoordinatorService> svc(new CoordinatorService(std::move(options)));
  for (const auto& address : svc->options_.shards) {
    SHINGLETON_ASSIGN_OR_RETURN(auto channel, MakeChannel(address, svc->options_.shard_security,
                                                          svc->options_.max_message_mb));
    svc->shards_.push_back(v1::IndexShard::NewStub(channel));
  }
  SHINGLETON_RETURN_IF_ERROR(svc->LoadJobs());
  return svc;
}

Status CoordinatorService::LoadJobs() {
  const fs::path dir = fs::path(options_.state_dir) / "jobs";
  std::error_code ec;
  fs::create_directories(dir, ec);
  if (ec) return Status::IoError("cannot create " + dir.string() + ": " + ec.message());
  StoreOptions so;
  so.sync_writes = true;
  for (const auto& entry : fs::directory_iterator(dir)) {
    auto job = std::make_unique<Job>();
    job->name = entry.path().filename().string();
    SHINGLETON_ASSIGN_OR_RETURN(job->store, IndexStore::Open(entry.path().string(), nullptr, so));
    SHINGLETON_ASSIGN_OR_RETURN(std::string params, job->store->GetMeta("params"));
    if (!job->params.ParseFromString(params)) return Status::Corruption("bad params of job " + job->name);
    job->scheme = job->store->scheme();
    job->policy = KeepPolicy::Parse(job->params.keep_policy()).value();
    SHINGLETON_RETURN_IF_ERROR(job->store->ForEachDocument([&](DocumentMeta) {
      ++job->documents;
      return Status::Ok();
    }));
    spdlog::info("coordinator: job {} loaded ({} documents)", job->name, job->documents);
    jobs_.emplace(job->name, std::move(job));
  }
  return Status::Ok();
}

StatusOr<CoordinatorService::Job*> CoordinatorService::GetJob(const std::string& name) {
  std::lock_guard<std::mutex> lock(mu_);
  auto it = jobs_.find(name);
  if (it == jobs_.end()) return Status::NotFound("no job named '" + name + "'");
  SHINGLETON_ASSIGN_OR_RETURN(std::string shards, it->second->store->GetMeta("shards"));
  if (shards != ShardMapText(options_.shards)) {
    return Status::Mismatch("job " + name + " was created with shards " + shards +
                            "; this coordinator has " + ShardMapText(options_.shards));
  }
  return it->second.get();
}

StatusOr<CoordinatorService::Job*> CoordinatorService::GetOrCreateJob(const std::string& name,
                                                                      const v1::JobParams& given) {
  if (!ValidJobName(name)) {
    return Status::InvalidArgument("bad job name '" + name + "' (letters, digits, - _ .)");
  }
  SHINGLETON_ASSIGN_OR_RETURN(v1::JobParams params, NormalizeParams(given));
  {
    std::lock_guard<std::mutex> lock(mu_);
    if (!jobs_.count(name)) {
      auto job = std::make_unique<Job>();
      job->name = name;
      job->params = params;
      job->scheme = SketchScheme::Parse(params.scheme()).value();
      job->policy = KeepPolicy::Parse(params.keep_policy()).value();
      StoreOptions so;
      so.sync_writes = true;
      SHINGLETON_ASSIGN_OR_RETURN(
          job->store, IndexStore::Create(options_.state_dir + "/jobs/" + name, job->scheme, so));
      SHINGLETON_RETURN_IF_ERROR(job->store->PutMeta("params", params.SerializeAsString()));
      SHINGLETON_RETURN_IF_ERROR(job->store->PutMeta("shards", ShardMapText(options_.shards)));
      spdlog::info("coordinator: job {} created: {}", name, params.scheme());
      jobs_.emplace(name, std::move(job));
    }
  }
  SHINGLETON_ASSIGN_OR_RETURN(Job * job, GetJob(name));
  if (job->params.SerializeAsString() != params.SerializeAsString()) {
    std::string diff = job->scheme.DescribeDifference(SketchScheme::Parse(params.scheme()).value());
    auto add = [&diff](const std::string& what, const std::string& a, const std::string& b) {
      if (a != b) diff += (diff.empty() ? "" : ", ") + what + " " + a + " vs " + b;
    };
    add("threshold", std::to_string(job->params.threshold()), std::to_string(params.threshold()));
    add("keep policy", job->params.keep_policy(), params.keep_policy());
    add("all-pairs limit", std::to_string(job->params.all_pairs_limit()),
        std::to_string(params.all_pairs_limit()));
    add("max leaders", std::to_string(job->params.max_leaders()), std::to_string(params.max_leaders()));
    add("chain guard", job->params.chain_guard() ? "on" : "off", params.chain_guard() ? "on" : "off");
    add("chain bound", std::to_string(job->params.chain_bound()), std::to_string(params.chain_bound()));
    return Status::Mismatch("job " + name + " exists with other parameters (" + diff +
                            "; job vs this request)");
  }
  return job;
}

Status CoordinatorService::WriteToShards(Job* job, const std::vector<const v1::SignedDocument*>& docs) {
  const size_t n = shards_.size();
  google::protobuf::Arena arena;  // thousands of Posting messages per request: one free
  std::vector<v1::WriteRequest*> requests(n);
  for (auto& r : requests) {
    r = google::protobuf::Arena::CreateMessage<v1::WriteRequest>(&arena);
    r->set_job(job->name);
    r->set_scheme(job->params.scheme());
  }
  std::vector<bool> touched(n);
  for (const v1::SignedDocument* d : docs) {
    std::fill(touched.begin(), touched.end(), false);
    for (int band = 0; band < d->buckets_size(); ++band) {
      const uint32_t shard = ShardOf(band, d->buckets(band), static_cast<uint32_t>(n));
      v1::Posting* p = requests[shard]->add_postings();
      p->set_band(band);
      p->set_bucket(d->buckets(band));
      p->set_doc(d->key());
      touched[shard] = true;
    }
    for (size_t i = 0; i < n; ++i) {
      if (touched[i]) (*requests[i]->mutable_signatures())[d->key()] = d->signature();
    }
  }
  return ForEachShardParallel(n, [&](size_t i) -> Status {
    if (requests[i]->postings_size() == 0) return Status::Ok();
    grpc::ClientContext ctx;
    PrepareContext(&ctx, options_.shard_security, options_.shard_deadline_s);
    v1::WriteResponse resp;
    return FromGrpcStatus(shards_[i]->Write(&ctx, *requests[i], &resp),
                          "writing to shard " + options_.shards[i]);
  });
}

Status CoordinatorService::ProcessBatch(const v1::IngestRequest& req, v1::IngestAck* ack, BatchOrder* order,
                                        uint64_t index) {
  ack->set_batch_seq(req.batch_seq());
  StatusOr<std::vector<const v1::SignedDocument*>> fresh = Status::Ok();
  Job* job = nullptr;
  {
    if (order) order->Wait(index);
    StatusOr<Job*> found = GetOrCreateJob(req.job(), req.params());
    if (found.ok()) {
      job = found.value();
      fresh = CheckBatch(job, req, ack);
    }
    if (order) order->Done();
    if (!found.ok()) return found.status();
  }
  if (!fresh.ok()) return fresh.status();
  SHINGLETON_RETURN_IF_ERROR(StoreBatch(job, std::move(fresh).value(), ack));
  if (order && index == 0) {
    spdlog::info("coordinator: job {}: first batch of worker '{}' stored", job->name, req.worker());
  }
  return Status::Ok();
}

StatusOr<std::vector<const v1::SignedDocument*>> CoordinatorService::CheckBatch(Job* job,
                                                                                const v1::IngestRequest& req,
                                                                                v1::IngestAck* ack) {
  const int k = job->scheme.num_hashes;
  std::unique_lock<std::mutex> lock(job->mu);
  // A document another batch is still writing: wait until that batch is stored
  // (or failed), then check against the store as if the batches ran one by one.
  job->settled.wait(lock, [&] {
    for (const v1::SignedDocument& d : req.documents()) {
      if (job->pending.count(d.key())) return false;
    }
    return true;
  });
  std::vector<const v1::SignedDocument*> fresh;
  std::set<uint64_t> in_batch;
  uint32_t repeated = 0;
  for (const v1::SignedDocument& d : req.documents()) {
    const std::string where = d.source().empty() ? d.id() : d.source();
    if (d.signature().size() != 4 * static_cast<size_t>(k) || d.buckets_size() != job->scheme.bands) {
      return Status::InvalidArgument(where + ": signature or bands do not match the job's scheme");
    }
    if (d.id().empty() || d.key() != DocKey(d.id())) {
      return Status::InvalidArgument(where + ": key is not XXH3-64 of the id");
    }
    if (!in_batch.insert(d.key()).second) {
      ack->add_rejected(where + ": duplicate id \"" + d.id() + "\" within one batch");
      continue;
    }
    auto existing = job->store->GetDocument(d.key());
    if (!existing.ok() && existing.status().code() != Status::Code::kNotFound) return existing.status();
    if (!existing.ok()) {
      fresh.push_back(&d);
      continue;
    }
    if (existing->id != d.id()) {
      ack->add_rejected(where + ": ids \"" + d.id() + "\" and \"" + existing->id +
                        "\" have the same 64-bit key");
      continue;
    }
    SHINGLETON_ASSIGN_OR_RETURN(std::vector<uint32_t> sig, job->store->GetSignature(d.key()));
    if (PackSignature(sig.data(), k) == d.signature() && existing->text_bytes == d.text_bytes()) {
      ++repeated;  // a re-sent batch: nothing to do
    } else {
      ack->add_rejected(where + ": duplicate id \"" + d.id() + "\" (first seen at " +
                        existing->source + ")");
    }
  }
  ack->set_repeated_documents(repeated);
  for (const v1::SignedDocument* d : fresh) job->pending.insert(d->key());
  return fresh;
}

Status CoordinatorService::StoreBatch(Job* job, std::vector<const v1::SignedDocument*> fresh, v1::IngestAck* ack) {
  // Key order: consecutive inserts land next to each other in the memtables.
  std::sort(fresh.begin(), fresh.end(),
            [](const v1::SignedDocument* a, const v1::SignedDocument* b) { return a->key() < b->key(); });
  Status s = WriteToShards(job, fresh);
  if (s.ok()) {
    WriteBatchBuilder batch(job->store.get());
    for (const v1::SignedDocument* d : fresh) {
      batch.AddMeta(MetaOf(*d));
      batch.AddPackedSignature(d->key(), d->signature());
    }
    s = job->store->Write(&batch);
  }
  {
    std::lock_guard<std::mutex> lock(job->mu);
    for (const v1::SignedDocument* d : fresh) job->pending.erase(d->key());
    if (s.ok()) {
      job->documents += fresh.size();
      ++job->batches;
    }
  }
  job->settled.notify_all();
  SHINGLETON_RETURN_IF_ERROR(s);
  ack->set_accepted(static_cast<uint32_t>(fresh.size()));
  return Status::Ok();
}

Status CoordinatorService::DoQuery(const v1::QueryRequest& req, v1::QueryResponse* resp) {
  SHINGLETON_ASSIGN_OR_RETURN(Job * job, GetJob(req.job()));
  const SketchScheme& scheme = job->scheme;
  std::vector<uint32_t> sig(scheme.num_hashes);
  std::vector<uint64_t> buckets(scheme.bands);
  if (!req.text().empty()) {
    SHINGLETON_RETURN_IF_ERROR(ValidateUtf8(req.text()));
    Signer signer(scheme);
    signer.Sign(req.text(), sig.data(), buckets.data());
  } else {
    if (req.signature().size() != 4 * sig.size() || req.buckets_size() != scheme.bands) {
      return Status::InvalidArgument("give text, or a signature and buckets of the job's scheme");
    }
    sig = UnpackSignature(req.signature());
    buckets.assign(req.buckets().begin(), req.buckets().end());
  }
  const double min_sim = req.min_similarity() > 0 ? req.min_similarity() : job->params.threshold();
  const size_t n = shards_.size();
  std::vector<v1::LookupRequest> lookups(n);
  for (int band = 0; band < scheme.bands; ++band) {
    v1::LookupRequest& l = lookups[ShardOf(band, buckets[band], static_cast<uint32_t>(n))];
    v1::Posting* p = l.add_probes();
    p->set_band(band);
    p->set_bucket(buckets[band]);
  }
  std::vector<v1::LookupResponse> answers(n);
  SHINGLETON_RETURN_IF_ERROR(ForEachShardParallel(n, [&](size_t i) -> Status {
    if (lookups[i].probes_size() == 0) return Status::Ok();
    lookups[i].set_job(job->name);
    lookups[i].set_signature(PackSignature(sig.data(), scheme.num_hashes));
    lookups[i].set_min_similarity(min_sim);
    grpc::ClientContext ctx;
    PrepareContext(&ctx, options_.shard_security, options_.shard_deadline_s);
    return FromGrpcStatus(shards_[i]->Lookup(&ctx, lookups[i], &answers[i]),
                          "querying shard " + options_.shards[i]);
  }));
  std::map<uint64_t, double> hits;
  for (const auto& a : answers) {
    for (const auto& h : a.hits()) hits[h.doc()] = std::max(hits[h.doc()], h.similarity());
  }
  std::vector<v1::Candidate> out;
  for (const auto& [key, sim] : hits) {
    auto doc = job->store->GetDocument(key);
    if (!doc.ok()) continue;  // written to a shard by a batch that was never acknowledged
    v1::Candidate c;
    c.set_id(doc->id);
    c.set_url(doc->url);
    c.set_similarity(sim);
    out.push_back(std::move(c));
  }
  std::sort(out.begin(), out.end(), [](const v1::Candidate& a, const v1::Candidate& b) {
    return a.similarity() != b.similarity() ? a.similarity() > b.similarity() : a.id() < b.id();
  });
  const size_t limit = req.limit() ? req.limit() : 100;
  for (size_t i = 0; i < out.size() && i < limit; ++i) *resp->add_candidates() = out[i];
  return Status::Ok();
}

StatusOr<ReferenceCandidates> CoordinatorService::ShardNearHits(const Job& job, const ReferenceSet& refs,
                                                                const DocTable& table) {
  const size_t n = shards_.size();
  ReferenceCandidates near(table.size());
  for (int g = 0; g < static_cast<int>(refs.size()); ++g) {
    std::vector<std::vector<ReferenceHit>> shard_hits(n);
    SHINGLETON_RETURN_IF_ERROR(ForEachShardParallel(n, [&](size_t i) -> Status {
      v1::MatchReferenceRequest mr;
      mr.set_job(job.name);
      mr.set_generation_checksum(refs.record(g).checksum);
      mr.set_part(static_cast<uint32_t>(i));
      mr.set_parts(static_cast<uint32_t>(n));
      mr.set_threshold(job.params.threshold());
      grpc::ClientContext ctx;
      PrepareContext(&ctx, options_.shard_security, 3600);
      auto reader = shards_[i]->MatchReference(&ctx, mr);
      v1::MatchReferenceResponse chunk;
      while (reader->Read(&chunk)) {
        for (const v1::ReferenceHit& h : chunk.hits()) {
          // A posting written by a batch that was never acknowledged names no document here.
          if (table.IndexOf(h.doc()) < 0) continue;
          shard_hits[i].push_back({h.doc(), h.ref(), h.similarity()});
        }
      }
      return FromGrpcStatus(reader->Finish(), "matching reference generation " + refs.record(g).name +
                                                  " on shard " + options_.shards[i]);
    }));
    for (const auto& hits : shard_hits) SHINGLETON_RETURN_IF_ERROR(AddNearHits(table, g, hits, &near));
  }
  return near;
}

StatusOr<std::vector<Edge>> CoordinatorService::VerifyOnShards(const Job& job,
                                                               DedupSummary* summary) {
  const size_t n = shards_.size();
  std::vector<std::vector<Edge>> shard_edges(n);
  std::vector<uint64_t> buckets(n), comparisons(n);
  SHINGLETON_RETURN_IF_ERROR(ForEachShardParallel(n, [&](size_t i) -> Status {
    v1::VerifyRequest vr;
    vr.set_job(job.name);
    vr.set_threshold(job.params.threshold());
    vr.set_all_pairs_limit(job.params.all_pairs_limit());
    vr.set_max_leaders(job.params.max_leaders());
    grpc::ClientContext ctx;
    PrepareContext(&ctx, options_.shard_security, 3600);
    auto reader = shards_[i]->Verify(&ctx, vr);
    v1::VerifyResponse chunk;
    while (reader->Read(&chunk)) {
      for (const v1::Edge& e : chunk.edges()) {
        Edge edge;
        edge.a = e.a();
        edge.b = e.b();
        edge.similarity = e.similarity();
        edge.band = static_cast<uint16_t>(e.band());
        shard_edges[i].push_back(edge);
      }
      buckets[i] += chunk.buckets_checked();
      comparisons[i] += chunk.comparisons();
    }
    grpc::Status s = reader->Finish();
    if (s.error_code() == grpc::StatusCode::NOT_FOUND) return Status::Ok();  // shard got no posting
    return FromGrpcStatus(s, "verifying on shard " + options_.shards[i]);
  }));
  std::vector<Edge> edges;
  for (size_t i = 0; i < n; ++i) {
    edges.insert(edges.end(), shard_edges[i].begin(), shard_edges[i].end());
    summary->buckets_checked += buckets[i];
    summary->comparisons += comparisons[i];
  }
  DeduplicateEdges(&edges);
  summary->edges = edges.size();
  return edges;
}

Status CoordinatorService::LoadDocTable(const Job& job, DocTable* table,
                                        std::vector<std::string>* normalized_urls,
                                        uint64_t* empty_documents) const {
  // One key-order scan of documents and signatures (no point lookups).
  return job.store->ForEachDocumentRecord([&](const DocumentMeta& meta, const Decision*,
                                              const std::vector<uint32_t>& sig) -> Status {
    if (sig.empty()) return Status::Corruption("document " + meta.id + " of job " + job.name + " has no signature");
    if (meta.tokens == 0) ++*empty_documents;
    if (options_.url_revisits) {
      auto url = meta.url.empty() ? StatusOr<std::string>(std::string()) : NormalizeUrl(meta.url);
      normalized_urls->push_back(url.ok() ? url.value() : std::string());
    }
    return table->Add(meta, sig.data());
  });
}

StatusOr<std::vector<v1::FinalizeResponse>> CoordinatorService::DoFinalize(
    const v1::FinalizeRequest& req) {
  const Clock::time_point start = Clock::now();
  SHINGLETON_ASSIGN_OR_RETURN(Job * job, GetJob(req.job()));
  std::unique_lock<std::mutex> lock(job->mu);
  job->settled.wait(lock, [job] { return job->pending.empty(); });  // batches still being written
  DedupSummary summary;
  summary.scheme = job->scheme;

  // 1. Every shard verifies its own buckets while 2. the documents are read here:
  // independent halves, so the coordinator's scan fills the CPU the shards leave.
  DocTable table(job->scheme.num_hashes);
  std::vector<std::string> normalized_urls;
  std::future<Status> loaded = std::async(std::launch::async, [&] {
    return LoadDocTable(*job, &table, &normalized_urls, &summary.empty_documents);
  });
  StatusOr<std::vector<Edge>> verified = VerifyOnShards(*job, &summary);
  summary.seconds_candidates = std::chrono::duration<double>(Clock::now() - start).count();
  SHINGLETON_RETURN_IF_ERROR(loaded.get());
  SHINGLETON_RETURN_IF_ERROR(verified.status());
  std::vector<Edge> edges = std::move(verified).value();
  summary.records_read = summary.documents = table.size();

  // 3. Frozen references win over the crawl: the same steps as the embedded job.
  std::unique_ptr<ReferenceSet> refs;
  std::vector<ReferenceMatch> matches;
  if (!options_.references.empty()) {
    SHINGLETON_ASSIGN_OR_RETURN(refs, ReferenceSet::Open(options_.references, job->scheme));
    for (size_t g = 0; g < refs->size(); ++g) summary.reference_names.push_back(refs->record(g).name);
    SHINGLETON_ASSIGN_OR_RETURN(ReferenceCandidates candidates, ShardNearHits(*job, *refs, table));
    ReferenceMatchOptions mo;
    mo.threshold = job->params.threshold();
    mo.url_revisits = options_.url_revisits;
    mo.threads = ResolveThreads(0);
    SHINGLETON_RETURN_IF_ERROR(AddExactCandidates(*refs, table, normalized_urls, mo, &candidates));
    SHINGLETON_ASSIGN_OR_RETURN(matches, ResolveReferences(*refs, candidates, mo.threads));
    DropEdgesOfMatched(table, matches, &edges);
  }
  std::vector<Decision> decisions = ResolveClusters(table, edges, job->policy);
  const double chain_bound =
      job->params.chain_bound() > 0 ? job->params.chain_bound() : job->params.threshold();
  if (job->params.chain_guard()) {
    summary.chain_guard = GuardChains(table, job->policy, chain_bound, &decisions);
  }
  std::vector<ManifestRow> rows = ManifestRows(table, decisions);
  if (refs) ApplyReferenceMatches(*refs, matches, &decisions, &rows);
  CountDecisions(decisions, &summary);
  for (const ManifestRow& r : rows) ++summary.dropped_by_reason[static_cast<size_t>(r.reason)];
  WriteBatchBuilder batch(job->store.get());
  batch.AddDecisions(decisions);
  batch.AddEdges(edges);
  SHINGLETON_RETURN_IF_ERROR(job->store->Write(&batch));
  summary.seconds_total = std::chrono::duration<double>(Clock::now() - start).count();

  // 4. The answer, in chunks that stay far below the message limit.
  DedupOptions described;
  described.ingest.inputs = {"service job " + job->name + " (" + std::to_string(job->batches) +
                             " batches since the coordinator started)"};
  described.index_path = job->store->path();
  described.threshold = job->params.threshold();
  described.policy = job->policy;
  described.chain_guard = job->params.chain_guard();
  described.chain_bound = job->params.chain_bound();
  const std::string summary_json = SummaryJson(described, summary);
  SHINGLETON_RETURN_IF_ERROR(job->store->PutJobRecord(summary_json));
  std::vector<v1::FinalizeResponse> chunks(1);
  for (const ManifestRow& r : rows) {
    if (chunks.back().lines_size() >= 5000) chunks.emplace_back();
    v1::ManifestLine* line = chunks.back().add_lines();
    line->set_id(r.id);
    line->set_kept(r.kept());
    line->set_duplicate_of(r.duplicate_of);
    line->set_cluster(ClusterLabel(r.cluster));
    line->set_cluster_size(r.cluster_size);
    line->set_similarity(r.similarity);
    line->set_reason(DropReasonName(r.reason));
    line->set_reference(r.reference);
  }
  chunks.back().set_summary_json(summary_json);
  spdlog::info("coordinator: job {} finalized: {} documents, {} kept, {} edges", job->name,
               summary.documents, summary.kept, summary.edges);
  return chunks;
}

Status CoordinatorService::DoJobStats(const v1::JobStatsRequest& req, v1::JobStats* resp) {
  SHINGLETON_ASSIGN_OR_RETURN(Job * job, GetJob(req.job()));
  {
    std::lock_guard<std::mutex> lock(job->mu);
    resp->set_job(job->name);
    resp->set_scheme(job->params.scheme());
    resp->set_documents(job->documents);
    resp->set_batches(job->batches);
    resp->set_finalized(job->store->GetJobRecord().ok());
  }
  std::vector<v1::ShardStats> stats(shards_.size());
  SHINGLETON_RETURN_IF_ERROR(ForEachShardParallel(shards_.size(), [&](size_t i) -> Status {
    v1::ShardStatsRequest sr;
    sr.set_job(job->name);
    grpc::ClientContext ctx;
    PrepareContext(&ctx, options_.shard_security, 10);
    return FromGrpcStatus(shards_[i]->GetStats(&ctx, sr, &stats[i]), "shard " + options_.shards[i]);
  }));
  for (auto& s : stats) *resp->add_shards() = s;
  return Status::Ok();
}

grpc::ServerBidiReactor<v1::IngestRequest, v1::IngestAck>* CoordinatorService::Ingest(
    grpc::CallbackServerContext* ctx) {
  return new IngestReactor(
      pool_.get(),
      [this](const v1::IngestRequest& req, v1::IngestAck* ack, BatchOrder* order, uint64_t index) {
        return ProcessBatch(req, ack, order, index);
      },
      CheckToken(ctx, options_.token));
}

grpc::ServerUnaryReactor* CoordinatorService::Query(grpc::CallbackServerContext* ctx,
                                                    const v1::QueryRequest* req,
                                                    v1::QueryResponse* resp) {
  auto* reactor = ctx->DefaultReactor();
  grpc::Status auth = CheckToken(ctx, options_.token);
  if (!auth.ok()) {
    reactor->Finish(auth);
    return reactor;
  }
  pool_->Submit([this, req, resp, reactor] { reactor->Finish(ToGrpcStatus(DoQuery(*req, resp))); });
  return reactor;
}

grpc::ServerWriteReactor<v1::FinalizeResponse>* CoordinatorService::Finalize(
    grpc::CallbackServerContext* ctx, const v1::FinalizeRequest* req) {
  v1::FinalizeRequest copy = *req;
  return new ChunkedWriteReactor<v1::FinalizeResponse>(
      pool_.get(), CheckToken(ctx, options_.token), [this, copy] { return DoFinalize(copy); });
}

grpc::ServerUnaryReactor* CoordinatorService::GetJobStats(grpc::CallbackServerContext* ctx,
                                                          const v1::JobStatsRequest* req,
                                                          v1::JobStats* resp) {
  auto* reactor = ctx->DefaultReactor();
  grpc::Status auth = CheckToken(ctx, options_.token);
  if (!auth.ok()) {
    reactor->Finish(auth);
    return reactor;
  }
  pool_->Submit([this, req, resp, reactor] { reactor->Finish(ToGrpcStatus(DoJobStats(*req, resp))); });
  return reactor;
}

Status CoordinatorService::DoInspect(const v1::InspectRequest& req, v1::InspectResponse* resp) {
  SHINGLETON_ASSIGN_OR_RETURN(Job * job, GetJob(req.job()));
  if (!job->store->GetJobRecord().ok()) {
    return Status::NotFound("job " + job->name + " is not finalized; nothing to inspect yet");
  }
  InspectCommand c;
  c.command = req.command();
  if (c.command == "query") return Status::InvalidArgument("text queries use the Query RPC");
  c.args.assign(req.args().begin(), req.args().end());
  if (req.min_size() > 0) c.clusters.min_size = req.min_size();
  c.clusters.sort_by_spread = req.sort_by_spread();
  if (req.spread_below() > 0) c.clusters.spread_below = req.spread_below();
  c.clusters.chains_only = req.chains_only();
  c.clusters.limit = req.limit();
  if (c.command == "explain" && req.limit() > 0) c.max_candidates = req.limit();
  ReportStyle style;
  if (req.width() > 0) style.width = static_cast<int>(req.width());
  style.side_by_side = req.side_by_side();
  const Inspector inspector(job->store.get());
  SHINGLETON_ASSIGN_OR_RETURN(std::string report, RunInspection(inspector, c, style, req.json()));
  resp->set_report(std::move(report));
  return Status::Ok();
}

grpc::ServerUnaryReactor* CoordinatorService::Inspect(grpc::CallbackServerContext* ctx,
                                                      const v1::InspectRequest* req,
                                                      v1::InspectResponse* resp) {
  auto* reactor = ctx->DefaultReactor();
  grpc::Status auth = CheckToken(ctx, options_.token);
  if (!auth.ok()) {
    reactor->Finish(auth);
    return reactor;
  }
  pool_->Submit([this, req, resp, reactor] { reactor->Finish(ToGrpcStatus(DoInspect(*req, resp))); });
  return reactor;
}

void CoordinatorService::FlushAll() {
  std::lock_guard<std::mutex> lock(mu_);
  for (auto& [name, job] : jobs_) (void)job->store->Flush();
}

}  // namespace shingleton::rpc
