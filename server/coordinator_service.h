// CoordinatorService: shingleton.v1.Coordinator — jobs, the shard map, document
// metadata, union-find and manifests; a thin adapter over the index/ library.
//
// State: <state>/jobs/<job> is an IndexStore holding the job's documents
// (metadata and signatures, no postings), its parameters (meta "params"), its
// shard map (meta "shards") and, after Finalize, decisions and edges. It survives
// restarts; the shard list given at start must equal the one each job was made with.
//
// Ingest: a batch is checked (sizes, key = DocKey(id), duplicate ids), its new
// documents' postings go to the shards owning their buckets (ShardOf), then the
// metadata is written here (fsync'd); only then is the batch acknowledged. A
// re-sent batch finds its documents present with equal signatures and changes
// nothing. Several batches of one job are written at once (from one stream's
// window or from several workers), so their synced writes on the shards and here
// share WAL syncs (RocksDB group commit): only the checks run one batch at a time
// (Job::mu), and a batch naming a document that another batch is still writing
// (Job::pending) waits for that batch before its checks, so every batch sees the
// same outcome as if the batches had been applied one after another.
//
// Thread safety: RPCs may run concurrently; blocking work runs on pool_.
#pragma once

#include <condition_variable>
#include <map>
#include <memory>
#include <mutex>
#include <string>
#include <unordered_set>
#include <vector>

#include "index/dedup_job.h"
#include "index/index_store.h"
#include "index/keep_policy.h"
#include "index/reference_resolution.h"
#include "shingleton/v1/service.grpc.pb.h"
#include "server/grpc_common.h"
#include "server/ingest_reactor.h"
#include "server/thread_pool.h"

namespace shingleton::rpc {

struct CoordinatorOptions {
  std::string state_dir;
  std::vector<std::string> shards;  // the shard map, in order
  ClientSecurity shard_security;    // how to reach the shards
  std::string token;                // required of callers when non-empty
  int max_message_mb = kDefaultMaxMessageMb;
  double shard_deadline_s = 120;    // per call to a shard
  // Frozen reference generations every job is deduplicated against at Finalize,
  // and whether URL revisits are dropped. The coordinator reads their document, URL
  // and content records; the shards serve their postings and signatures (one part
  // each, index/reference_parts.h) and send the verified near candidates.
  std::vector<std::string> references;
  bool url_revisits = false;
};

class CoordinatorService final : public v1::Coordinator::CallbackService {
 public:
  static StatusOr<std::unique_ptr<CoordinatorService>> Create(CoordinatorOptions options);
  ~CoordinatorService() override;

  grpc::ServerBidiReactor<v1::IngestRequest, v1::IngestAck>* Ingest(
      grpc::CallbackServerContext* ctx) override;
  grpc::ServerUnaryReactor* Query(grpc::CallbackServerContext* ctx, const v1::QueryRequest* req,
                                  v1::QueryResponse* resp) override;
  grpc::ServerWriteReactor<v1::FinalizeResponse>* Finalize(
      grpc::CallbackServerContext* ctx, const v1::FinalizeRequest* req) override;
  grpc::ServerUnaryReactor* GetJobStats(grpc::CallbackServerContext* ctx,
                                        const v1::JobStatsRequest* req,
                                        v1::JobStats* resp) override;
  grpc::ServerUnaryReactor* Inspect(grpc::CallbackServerContext* ctx, const v1::InspectRequest* req,
                                    v1::InspectResponse* resp) override;

  void FlushAll();
  ThreadPool& pool() { return *pool_; }
  const std::string& token() const { return options_.token; }

  // The RPC bodies (run on the pool). ProcessBatch checks the batch in its turn
  // of `order` (when given; see BatchOrder), then writes it.
  Status ProcessBatch(const v1::IngestRequest& req, v1::IngestAck* ack, BatchOrder* order = nullptr,
                      uint64_t index = 0);
  Status DoQuery(const v1::QueryRequest& req, v1::QueryResponse* resp);
  StatusOr<std::vector<v1::FinalizeResponse>> DoFinalize(const v1::FinalizeRequest& req);
  Status DoJobStats(const v1::JobStatsRequest& req, v1::JobStats* resp);
  Status DoInspect(const v1::InspectRequest& req, v1::InspectResponse* resp);

 private:
  struct Job {
    std::string name;
    v1::JobParams params;
    SketchScheme scheme;
    KeepPolicy policy;
    std::unique_ptr<IndexStore> store;
    std::mutex mu;            // one batch's checks, or finalize, at a time
    std::condition_variable settled;  // notified when a batch leaves `pending`
    std::unordered_set<uint64_t> pending;  // GUARDED_BY(mu): keys being written by batches
    uint64_t batches = 0;     // GUARDED_BY(mu)
    uint64_t documents = 0;   // GUARDED_BY(mu)
  };
  // The checks of one batch under job->mu: fills the ack's rejections and repeats
  // and returns the new documents, whose keys it adds to job->pending.
  StatusOr<std::vector<const v1::SignedDocument*>> CheckBatch(Job* job, const v1::IngestRequest& req,
                                                               v1::IngestAck* ack);
  // Writes the new documents to the shards, then here; removes them from pending.
  Status StoreBatch(Job* job, std::vector<const v1::SignedDocument*> fresh, v1::IngestAck* ack);
  explicit CoordinatorService(CoordinatorOptions options);
  Status LoadJobs();
  StatusOr<Job*> GetJob(const std::string& name);
  StatusOr<Job*> GetOrCreateJob(const std::string& name, const v1::JobParams& params);
  // Near candidates of the job's documents in every reference generation, from the
  // shards (each merges its buckets of the job with its part of the generation).
  StatusOr<ReferenceCandidates> ShardNearHits(const Job& job, const ReferenceSet& refs, const DocTable& table);
  Status WriteToShards(Job* job, const std::vector<const v1::SignedDocument*>& docs);
  // Every shard verifies its own buckets: their edges, each pair once; adds the
  // buckets checked, comparisons and edges to *summary.
  StatusOr<std::vector<Edge>> VerifyOnShards(const Job& job, DedupSummary* summary);
  // The job's documents and signatures into *table by one key-order scan, with their
  // normalised URLs when url_revisits is on; counts documents without a token.
  Status LoadDocTable(const Job& job, DocTable* table, std::vector<std::string>* normalized_urls,
                      uint64_t* empty_documents) const;

  CoordinatorOptions options_;
  std::vector<std::unique_ptr<v1::IndexShard::Stub>> shards_;
  std::mutex mu_;
  std::map<std::string, std::unique_ptr<Job>> jobs_;  // GUARDED_BY(mu_)
  std::unique_ptr<ThreadPool> pool_;
};

// Checks and fills defaults of job parameters; the canonical form is compared.
StatusOr<v1::JobParams> NormalizeParams(const v1::JobParams& params);

}  // namespace shingleton::rpc
