// IngestReactor: the server side of one Coordinator.Ingest stream, with several
// batches in flight.
//
// The reactor reads ahead up to `window` unacknowledged batches and hands each to
// the pool at once (`process(request, ack, order, index)`); the acknowledgements go
// out strictly in the order the batches arrived, each only after its batch is
// durable. The first failing batch ends the stream with its status; batches after
// it are not acknowledged (the worker re-sends them, which is harmless).
// `order` lets the batches of this stream be checked in arrival order
// (BatchOrder), so which of two copies of an id counts as first does not depend on
// thread scheduling.
//
// Lifetime: gRPC owns the reactor; it deletes itself when the stream is done and
// no pool task still refers to it.
// Thread safety: reactions and pool tasks synchronise on mu_.
#pragma once

#include <condition_variable>
#include <cstdint>
#include <deque>
#include <functional>
#include <memory>
#include <mutex>

#include <google/protobuf/arena.h>

#include "index/status.h"
#include "server/thread_pool.h"
#include "shingleton/v1/service.grpc.pb.h"

namespace shingleton::rpc {

// Turns for the batches of one stream: batch i may pass Wait(i) only after
// batch i-1 called Done(). Thread-safe.
class BatchOrder {
 public:
  void Wait(uint64_t index) {
    std::unique_lock<std::mutex> lock(mu_);
    cv_.wait(lock, [&] { return next_ == index; });
  }
  void Done() {
    {
      std::lock_guard<std::mutex> lock(mu_);
      ++next_;
    }
    cv_.notify_all();
  }

 private:
  std::mutex mu_;
  std::condition_variable cv_;
  uint64_t next_ = 0;  // GUARDED_BY(mu_)
};

// Processes one batch: must call order->Wait(index) before its checks and
// order->Done() after them (also on failure), then make the batch durable.
using BatchProcessor =
    std::function<Status(const v1::IngestRequest&, v1::IngestAck*, BatchOrder* order, uint64_t index)>;

class IngestReactor : public grpc::ServerBidiReactor<v1::IngestRequest, v1::IngestAck> {
 public:
  // Batches read ahead per stream. Default 8 (a worker's window is smaller).
  static constexpr size_t kDefaultWindow = 8;

  // REQUIRES: pool outlives every stream. A non-OK `auth` ends the stream at once.
  IngestReactor(ThreadPool* pool, BatchProcessor process, grpc::Status auth, size_t window = kDefaultWindow);

  void OnReadDone(bool ok) override;
  void OnWriteDone(bool ok) override;
  void OnDone() override;

 private:
  struct Slot {
    // The request's thousands of small messages live in one arena: one free.
    google::protobuf::Arena arena;
    v1::IngestRequest* request = google::protobuf::Arena::CreateMessage<v1::IngestRequest>(&arena);
    v1::IngestAck ack;
    bool processed = false;
    Status status;
  };
  // What a reaction decided under mu_, done after releasing it.
  struct Actions {
    v1::IngestRequest* read = nullptr;
    const v1::IngestAck* write = nullptr;
    bool finish = false;
    grpc::Status finish_status;
  };
  void Run(Slot* slot, uint64_t index);
  // REQUIRES: mu_ held. Starts the next read, the next ack or the end of the stream.
  void Advance(Actions* a);
  void Apply(const Actions& a);
  // REQUIRES: mu_ held.
  void FinishOnce(Actions* a, grpc::Status status);

  ThreadPool* pool_;
  BatchProcessor process_;
  const size_t window_;
  BatchOrder order_;
  std::mutex mu_;
  std::unique_ptr<Slot> reading_;             // GUARDED_BY(mu_): the read in progress
  std::deque<std::unique_ptr<Slot>> slots_;  // GUARDED_BY(mu_): unacknowledged, in arrival order
  uint64_t next_index_ = 0;                     // GUARDED_BY(mu_)
  bool writing_ = false;                        // GUARDED_BY(mu_)
  bool reads_closed_ = false;                   // GUARDED_BY(mu_)
  bool finished_ = false;                       // GUARDED_BY(mu_)
  bool done_ = false;                           // GUARDED_BY(mu_)
  int tasks_ = 0;                               // GUARDED_BY(mu_): pool tasks running
};

}  // namespace shingleton::rpc
