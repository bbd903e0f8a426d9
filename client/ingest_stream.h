// IngestStream: the worker's side of one Coordinator.Ingest stream, with a window
// of unacknowledged batches.
//
// Send() writes a batch without waiting for its acknowledgement as long as fewer
// than `window` batches are unacknowledged; a reader thread takes the acks (the
// coordinator sends them in batch order) and Send() and Close() hand them to the
// caller's `on_ack`, in order, on the caller's thread. So signing, the network
// and the servers' synced writes overlap instead of taking turns.
//
// Retries: when the stream breaks with UNAVAILABLE, ABORTED or CANCELLED, the
// stream is reopened and every unacknowledged batch is re-sent in order (harmless:
// the coordinator recognises documents it already holds); after `retries`
// reconnects without an ack in between the error is returned.
//
// Thread safety: Send() and Close() from one thread; the reader thread only
// touches state under mu_.
#pragma once

#include <condition_variable>
#include <cstddef>
#include <deque>
#include <functional>
#include <memory>
#include <mutex>
#include <string>
#include <thread>

#include "index/status.h"
#include "server/grpc_common.h"
#include "shingleton/v1/service.grpc.pb.h"

namespace shingleton::cli {

struct IngestStreamOptions {
  rpc::ClientSecurity security;
  double stream_deadline_s = 6 * 3600;  // of one stream. Default 6 h
  int retries = 5;                      // reconnects without progress. Default 5
  size_t window = 4;                    // unacknowledged batches. Default 4; 1 waits for each ack
};

class IngestStream {
 public:
  // Called with each ack, in batch order; a non-OK status stops the ingest.
  using AckFn = std::function<Status(const v1::IngestAck&)>;

  // REQUIRES: `stub` outlives the stream.
  IngestStream(v1::Coordinator::Stub* stub, IngestStreamOptions options, AckFn on_ack);
  ~IngestStream();
  IngestStream(const IngestStream&) = delete;
  IngestStream& operator=(const IngestStream&) = delete;

  // Sends `req` once the window has room (reconnecting as needed).
  Status Send(v1::IngestRequest req);
  // Waits for every ack, then closes the stream.
  Status Close();

 private:
  struct Attempt;  // one open stream and its reader thread
  // Opens a stream and writes every unacknowledged batch on it.
  void Open();
  // REQUIRES: the current stream broke. Joins it, backs off, reopens.
  Status Reconnect();
  // Hands the acks received so far to on_ack_.
  Status DeliverAcks();
  void ReadAcks(Attempt* attempt);

  v1::Coordinator::Stub* stub_;
  const IngestStreamOptions options_;
  AckFn on_ack_;
  std::unique_ptr<Attempt> attempt_;
  int failures_ = 0;  // reconnects since the last ack

  std::mutex mu_;
  std::condition_variable cv_;
  std::deque<std::shared_ptr<const v1::IngestRequest>> unacked_;  // GUARDED_BY(mu_): sent, in order
  std::deque<v1::IngestAck> acks_;  // GUARDED_BY(mu_): received, not yet delivered
  bool broken_ = false;             // GUARDED_BY(mu_): the current stream ended
  std::string protocol_error_;      // GUARDED_BY(mu_): an ack out of order
};

}  // namespace shingleton::cli
