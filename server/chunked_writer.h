// ChunkedWriteReactor: a server-streaming RPC whose answer is computed off the
// gRPC callback threads (on a ThreadPool) and then written chunk by chunk, each
// write waiting for the previous one (flow control). Deletes itself when done.
//
// Thread safety: gRPC serialises the reactor's callbacks; the compute function runs
// once on the pool before the first write.
#pragma once

#include <grpcpp/grpcpp.h>

#include <functional>
#include <vector>

#include "index/status.h"
#include "server/grpc_common.h"
#include "server/thread_pool.h"

namespace shingleton::rpc {

template <typename Message>
class ChunkedWriteReactor : public grpc::ServerWriteReactor<Message> {
 public:
  using Compute = std::function<StatusOr<std::vector<Message>>()>;

  // When `auth` is not OK the call fails with it and `compute` never runs.
  ChunkedWriteReactor(ThreadPool* pool, grpc::Status auth, Compute compute) {
    if (!auth.ok()) {
      this->Finish(auth);
      return;
    }
    pool->Submit([this, compute = std::move(compute)] {
      auto chunks = compute();
      if (!chunks.ok()) {
        this->Finish(ToGrpcStatus(chunks.status()));
        return;
      }
      chunks_ = std::move(chunks).value();
      Next();
    });
  }
  void OnWriteDone(bool ok) override {
    if (!ok) {
      this->Finish(grpc::Status(grpc::StatusCode::CANCELLED, "the client went away"));
      return;
    }
    Next();
  }
  void OnDone() override { delete this; }

 private:
  void Next() {
    if (next_ == chunks_.size()) {
      this->Finish(grpc::Status::OK);
      return;
    }
    this->StartWrite(&chunks_[next_++]);
  }
  std::vector<Message> chunks_;
  size_t next_ = 0;
};

}  // namespace shingleton::rpc
