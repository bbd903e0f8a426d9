#include "server/ingest_reactor.h"

#include <utility>

#include "server/grpc_common.h"

namespace shingleton::rpc {

IngestReactor::IngestReactor(ThreadPool* pool, BatchProcessor process, grpc::Status auth, size_t window)
    : pool_(pool), process_(std::move(process)), window_(window < 1 ? 1 : window) {
  Actions a;
  {
    std::lock_guard<std::mutex> lock(mu_);
    if (!auth.ok()) {
      FinishOnce(&a, auth);
    } else {
      Advance(&a);
    }
  }
  Apply(a);
}

void IngestReactor::OnReadDone(bool ok) {
  Actions a;
  {
    std::lock_guard<std::mutex> lock(mu_);
    std::unique_ptr<Slot> slot = std::move(reading_);
    if (!ok) {
      reads_closed_ = true;  // the client half-closed the stream (or it broke)
    } else if (!finished_) {
      Slot* s = slot.get();
      const uint64_t index = next_index_++;
      slots_.push_back(std::move(slot));
      ++tasks_;
      pool_->Submit([this, s, index] { Run(s, index); });
    }
    Advance(&a);
  }
  Apply(a);
}

void IngestReactor::Run(Slot* slot, uint64_t index) {
  Status s = process_(*slot->request, &slot->ack, &order_, index);
  Actions a;
  bool last = false;
  {
    std::lock_guard<std::mutex> lock(mu_);
    slot->processed = true;
    slot->status = std::move(s);
    Advance(&a);
    last = --tasks_ == 0 && done_;
  }
  Apply(a);
  if (last) delete this;
}

void IngestReactor::OnWriteDone(bool ok) {
  Actions a;
  {
    std::lock_guard<std::mutex> lock(mu_);
    writing_ = false;
    if (!ok) {
      FinishOnce(&a, grpc::Status(grpc::StatusCode::CANCELLED, "the ingest stream was closed"));
    } else {
      slots_.pop_front();
      Advance(&a);
    }
  }
  Apply(a);
}

void IngestReactor::OnDone() {
  bool last = false;
  {
    std::lock_guard<std::mutex> lock(mu_);
    done_ = true;
    last = tasks_ == 0;
  }
  if (last) delete this;
}

void IngestReactor::Advance(Actions* a) {
  if (finished_) return;
  if (!writing_ && !slots_.empty() && slots_.front()->processed) {
    Slot* front = slots_.front().get();
    if (!front->status.ok()) {
      FinishOnce(a, ToGrpcStatus(front->status));
      return;
    }
    writing_ = true;
    a->write = &front->ack;
  }
  if (!reading_ && !reads_closed_ && slots_.size() < window_) {
    reading_ = std::make_unique<Slot>();
    a->read = reading_->request;
  }
  if (reads_closed_ && slots_.empty() && !writing_) FinishOnce(a, grpc::Status::OK);
}

void IngestReactor::FinishOnce(Actions* a, grpc::Status status) {
  if (finished_) return;
  finished_ = true;
  a->finish = true;
  a->finish_status = std::move(status);
}

void IngestReactor::Apply(const Actions& a) {
  // The read buffer and the acked slot stay alive until their reactions run:
  // reading_ is only released in OnReadDone, a slot only popped in OnWriteDone.
  if (a.read) StartRead(a.read);
  if (a.write) StartWrite(a.write);
  if (a.finish) Finish(a.finish_status);
}

}  // namespace shingleton::rpc
