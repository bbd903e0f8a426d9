// ShardService: shingleton.v1.IndexShard over IndexStore — one RocksDB index per
// job under <db>/jobs/<job>, created by the first Write with the job's scheme and
// refused to any later Write with another scheme.
//
// A shard may also serve parts of frozen reference generations (AddReferencePart,
// read-only, checksummed on open): MatchReference merges the job's buckets on this
// shard with the part's (index/reference_merge.h).
//
// Write and Lookup run inline on gRPC's callback threads (short RocksDB calls);
// Verify, a full scan, runs on pool_.
// Thread safety: all RPCs may run concurrently. The map of open stores is guarded
// by mu_; IndexStore itself is thread-safe.
#pragma once

#include <map>
#include <memory>
#include <mutex>
#include <string>

#include "index/index_store.h"
#include "index/reference_parts.h"
#include "server/thread_pool.h"
#include "shingleton/v1/service.grpc.pb.h"

namespace shingleton::rpc {

class ShardService final : public v1::IndexShard::CallbackService {
 public:
  ShardService(std::string db_dir, std::string token, std::string address);
  ~ShardService() override;

  grpc::ServerUnaryReactor* Write(grpc::CallbackServerContext* ctx, const v1::WriteRequest* req,
                                  v1::WriteResponse* resp) override;
  grpc::ServerUnaryReactor* Lookup(grpc::CallbackServerContext* ctx, const v1::LookupRequest* req,
                                   v1::LookupResponse* resp) override;
  grpc::ServerWriteReactor<v1::VerifyResponse>* Verify(grpc::CallbackServerContext* ctx,
                                                       const v1::VerifyRequest* req) override;
  grpc::ServerWriteReactor<v1::MatchReferenceResponse>* MatchReference(
      grpc::CallbackServerContext* ctx, const v1::MatchReferenceRequest* req) override;
  grpc::ServerUnaryReactor* GetStats(grpc::CallbackServerContext* ctx,
                                     const v1::ShardStatsRequest* req,
                                     v1::ShardStats* resp) override;

  // Serves the reference part at `part_dir` (before the server starts; not
  // thread-safe). Refuses a second part of the same generation.
  Status AddReferencePart(const std::string& part_dir);

  // Flushes every open store (after draining).
  void FlushAll();

 private:
  // The store of `job`; created with `scheme_text` when absent and scheme_text is non-empty.
  StatusOr<IndexStore*> StoreFor(const std::string& job, const std::string& scheme_text);
  Status DoWrite(const v1::WriteRequest& req, v1::WriteResponse* resp);
  Status DoLookup(const v1::LookupRequest& req, v1::LookupResponse* resp);
  StatusOr<std::vector<v1::VerifyResponse>> DoVerify(const v1::VerifyRequest& req);
  StatusOr<std::vector<v1::MatchReferenceResponse>> DoMatchReference(const v1::MatchReferenceRequest& req);

  const std::string db_dir_;
  const std::string token_;
  const std::string address_;
  std::mutex mu_;
  std::map<std::string, std::unique_ptr<IndexStore>> stores_;  // GUARDED_BY(mu_)
  std::vector<ReferencePart> parts_;  // fixed once serving
  ThreadPool pool_;  // runs Verify scans off the callback threads
};

}  // namespace shingleton::rpc
