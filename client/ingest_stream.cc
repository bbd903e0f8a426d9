#include "client/ingest_stream.h"

#include <algorithm>
#include <chrono>
#include <iostream>

namespace shingleton::cli {
namespace {

bool Retryable(const grpc::Status& s) {
  return s.error_code() == grpc::StatusCode::UNAVAILABLE || s.error_code() == grpc::StatusCode::ABORTED ||
         s.error_code() == grpc::StatusCode::CANCELLED;
}

}  // namespace

struct IngestStream::Attempt {
  grpc::ClientContext ctx;
  std::unique_ptr<grpc::ClientReaderWriter<v1::IngestRequest, v1::IngestAck>> stream;
  std::thread reader;
};

IngestStream::IngestStream(v1::Coordinator::Stub* stub, IngestStreamOptions options, AckFn on_ack)
    : stub_(stub), options_(std::move(options)), on_ack_(std::move(on_ack)) {}

IngestStream::~IngestStream() {
  if (!attempt_) return;  // closed, or never opened
  attempt_->ctx.TryCancel();
  if (attempt_->reader.joinable()) attempt_->reader.join();
  (void)attempt_->stream->Finish();  // an error path already reported its status
}

void IngestStream::Open() {
  attempt_ = std::make_unique<Attempt>();
  rpc::PrepareContext(&attempt_->ctx, options_.security, options_.stream_deadline_s);
  attempt_->stream = stub_->Ingest(&attempt_->ctx);
  std::vector<std::shared_ptr<const v1::IngestRequest>> resend;
  {
    std::lock_guard<std::mutex> lock(mu_);
    broken_ = false;
    resend.assign(unacked_.begin(), unacked_.end());
  }
  attempt_->reader = std::thread([this, a = attempt_.get()] { ReadAcks(a); });
  for (const auto& req : resend) {
    if (!attempt_->stream->Write(*req)) break;  // the reader sees the break too
  }
}

void IngestStream::ReadAcks(Attempt* a) {
  v1::IngestAck ack;
  while (a->stream->Read(&ack)) {
    std::lock_guard<std::mutex> lock(mu_);
    if (unacked_.empty() || unacked_.front()->batch_seq() != ack.batch_seq()) {
      protocol_error_ = "the coordinator acknowledged batch " + std::to_string(ack.batch_seq()) +
                        (unacked_.empty() ? std::string(" which was not sent")
                                          : ", expected " + std::to_string(unacked_.front()->batch_seq()));
      a->ctx.TryCancel();
      break;
    }
    unacked_.pop_front();
    acks_.push_back(std::move(ack));
    cv_.notify_all();
  }
  std::lock_guard<std::mutex> lock(mu_);
  broken_ = true;
  cv_.notify_all();
}

Status IngestStream::DeliverAcks() {
  for (;;) {
    v1::IngestAck ack;
    {
      std::lock_guard<std::mutex> lock(mu_);
      if (acks_.empty()) return Status::Ok();
      ack = std::move(acks_.front());
      acks_.pop_front();
    }
    failures_ = 0;
    SHINGLETON_RETURN_IF_ERROR(on_ack_(ack));
  }
}

Status IngestStream::Reconnect() {
  attempt_->reader.join();
  const grpc::Status s = attempt_->stream->Finish();
  attempt_.reset();
  size_t pending = 0;
  std::string job;
  {
    std::lock_guard<std::mutex> lock(mu_);
    if (!protocol_error_.empty()) return Status::Internal(protocol_error_);
    pending = unacked_.size();
    if (!unacked_.empty()) job = unacked_.front()->job();
  }
  // OK with batches unacknowledged: the coordinator ended the stream early (drain).
  if ((!s.ok() && !Retryable(s)) || ++failures_ > options_.retries) {
    return rpc::FromGrpcStatus(s.ok() ? grpc::Status(grpc::StatusCode::UNAVAILABLE, "stream ended early") : s,
                               "ingest into job " + job);
  }
  std::cerr << "shingleton ingest: stream broke (" << (s.ok() ? "ended early" : s.error_message())
            << "), retrying; re-sending " << pending << " unacknowledged batches\n";
  std::this_thread::sleep_for(std::chrono::milliseconds(250 << std::min(failures_, 5)));
  Open();
  return Status::Ok();
}

Status IngestStream::Send(v1::IngestRequest req) {
  auto shared = std::make_shared<const v1::IngestRequest>(std::move(req));
  if (!attempt_) Open();
  for (;;) {
    SHINGLETON_RETURN_IF_ERROR(DeliverAcks());
    std::unique_lock<std::mutex> lock(mu_);
    cv_.wait(lock, [&] { return broken_ || !acks_.empty() || unacked_.size() < options_.window; });
    if (!acks_.empty()) continue;
    if (broken_) {
      lock.unlock();
      SHINGLETON_RETURN_IF_ERROR(Reconnect());
      continue;
    }
    unacked_.push_back(shared);
    lock.unlock();
    // A failed write leaves the batch unacknowledged: the reader sees the break,
    // and the next Send or Close reconnects and re-sends it.
    (void)attempt_->stream->Write(*shared);
    return Status::Ok();
  }
}

Status IngestStream::Close() {
  if (!attempt_) return Status::Ok();
  for (;;) {
    SHINGLETON_RETURN_IF_ERROR(DeliverAcks());
    std::unique_lock<std::mutex> lock(mu_);
    cv_.wait(lock, [&] { return broken_ || !acks_.empty() || unacked_.empty(); });
    if (!acks_.empty()) continue;
    if (unacked_.empty()) break;
    lock.unlock();
    SHINGLETON_RETURN_IF_ERROR(Reconnect());
  }
  bool broken = false;
  {
    std::lock_guard<std::mutex> lock(mu_);
    broken = broken_;
  }
  if (!broken) attempt_->stream->WritesDone();
  attempt_->reader.join();
  const grpc::Status s = attempt_->stream->Finish();
  attempt_.reset();
  SHINGLETON_RETURN_IF_ERROR(DeliverAcks());
  // A stream that broke after its last ack lost nothing: every batch is durable.
  if (broken) return Status::Ok();
  return rpc::FromGrpcStatus(s, "closing the ingest stream");
}

}  // namespace shingleton::cli
