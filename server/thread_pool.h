// ThreadPool: a fixed set of threads running queued tasks in FIFO order. The
// coordinator's RPC handlers hand blocking work (RocksDB, calls to shards) to it
// so that gRPC's callback threads never block.
//
// Thread safety: Submit() may be called from any thread. The destructor runs the
// tasks already queued, then joins.
#pragma once

#include <condition_variable>
#include <deque>
#include <functional>
#include <mutex>
#include <thread>
#include <vector>

namespace shingleton::rpc {

class ThreadPool {
 public:
  explicit ThreadPool(size_t threads) {
    for (size_t i = 0; i < threads; ++i) workers_.emplace_back([this] { Loop(); });
  }
  ~ThreadPool() {
    {
      std::lock_guard<std::mutex> lock(mu_);
      stopping_ = true;
    }
    cv_.notify_all();
    for (auto& t : workers_) t.join();
  }
  ThreadPool(const ThreadPool&) = delete;
  ThreadPool& operator=(const ThreadPool&) = delete;

  void Submit(std::function<void()> task) {
    {
      std::lock_guard<std::mutex> lock(mu_);
      tasks_.push_back(std::move(task));
    }
    cv_.notify_one();
  }

 private:
  void Loop() {
    for (;;) {
      std::function<void()> task;
      {
        std::unique_lock<std::mutex> lock(mu_);
        cv_.wait(lock, [this] { return stopping_ || !tasks_.empty(); });
        if (tasks_.empty()) return;
        task = std::move(tasks_.front());
        tasks_.pop_front();
      }
      task();
    }
  }

  std::mutex mu_;
  std::condition_variable cv_;
  std::deque<std::function<void()>> tasks_;  // GUARDED_BY(mu_)
  bool stopping_ = false;                    // GUARDED_BY(mu_)
  std::vector<std::thread> workers_;
};

}  // namespace shingleton::rpc
