#include "index/wal_pages.h"

#include <fcntl.h>
#include <unistd.h>

#include <atomic>
#include <memory>
#include <string>

#include <rocksdb/file_system.h>

namespace shingleton {
namespace {

// A WAL file that, after each successful sync, drops its synced whole pages from
// the page cache once another MiB has been written.
class PageDroppingWal : public rocksdb::FSWritableFileOwnerWrapper {
 public:
  PageDroppingWal(std::unique_ptr<rocksdb::FSWritableFile> file, const std::string& name)
      : FSWritableFileOwnerWrapper(std::move(file)), fd_(::open(name.c_str(), O_RDONLY | O_CLOEXEC)) {}
  ~PageDroppingWal() override {
    if (fd_ >= 0) ::close(fd_);
  }

  rocksdb::IOStatus Append(const rocksdb::Slice& data, const rocksdb::IOOptions& options,
                           rocksdb::IODebugContext* dbg) override {
    return Counted(target()->Append(data, options, dbg), data.size());
  }
  rocksdb::IOStatus Append(const rocksdb::Slice& data, const rocksdb::IOOptions& options,
                           const rocksdb::DataVerificationInfo& info, rocksdb::IODebugContext* dbg) override {
    return Counted(target()->Append(data, options, info, dbg), data.size());
  }
  rocksdb::IOStatus Sync(const rocksdb::IOOptions& options, rocksdb::IODebugContext* dbg) override {
    return Dropped(target()->Sync(options, dbg));
  }
  rocksdb::IOStatus Fsync(const rocksdb::IOOptions& options, rocksdb::IODebugContext* dbg) override {
    return Dropped(target()->Fsync(options, dbg));
  }
  rocksdb::IOStatus Close(const rocksdb::IOOptions& options, rocksdb::IODebugContext* dbg) override {
    if (fd_ >= 0) ::close(fd_);  // a deleted WAL's inode is not held open
    fd_ = -1;
    return target()->Close(options, dbg);
  }

 private:
  static constexpr uint64_t kStep = 1 << 20;
  static constexpr uint64_t kPage = 4096;

  rocksdb::IOStatus Counted(rocksdb::IOStatus appended, size_t bytes) {
    if (appended.ok()) written_.fetch_add(bytes, std::memory_order_relaxed);
    return appended;
  }

  // Everything appended before a successful sync is on disk, so its pages are clean.
  // Appends may run beside a sync (DB::SyncWAL): written_ is atomic, and pages
  // appended meanwhile may fall in the range unsynced; DONTNEED leaves dirty pages.
  rocksdb::IOStatus Dropped(rocksdb::IOStatus synced) {
    const uint64_t written = written_.load(std::memory_order_relaxed);
    if (synced.ok() && fd_ >= 0 && written >= dropped_ + kStep) {
      const uint64_t end = written / kPage * kPage;  // the last partial page stays
      (void)::posix_fadvise(fd_, static_cast<off_t>(dropped_), static_cast<off_t>(end - dropped_),
                            POSIX_FADV_DONTNEED);  // advice only: its result changes nothing
      dropped_ = end;
    }
    return synced;
  }

  int fd_;
  std::atomic<uint64_t> written_{0};
  uint64_t dropped_ = 0;  // whole pages, touched by syncs only (one at a time)
};

bool IsWal(const std::string& name) { return name.size() > 4 && name.compare(name.size() - 4, 4, ".log") == 0; }

class WalPageDroppingFileSystem : public rocksdb::FileSystemWrapper {
 public:
  WalPageDroppingFileSystem() : FileSystemWrapper(rocksdb::FileSystem::Default()) {}
  const char* Name() const override { return "WalPageDroppingFileSystem"; }

  rocksdb::IOStatus NewWritableFile(const std::string& name, const rocksdb::FileOptions& options,
                                    std::unique_ptr<rocksdb::FSWritableFile>* result,
                                    rocksdb::IODebugContext* dbg) override {
    return Wrapped(name, target()->NewWritableFile(name, options, result, dbg), result);
  }
  rocksdb::IOStatus ReuseWritableFile(const std::string& name, const std::string& old_name,
                                      const rocksdb::FileOptions& options,
                                      std::unique_ptr<rocksdb::FSWritableFile>* result,
                                      rocksdb::IODebugContext* dbg) override {
    return Wrapped(name, target()->ReuseWritableFile(name, old_name, options, result, dbg), result);
  }

 private:
  static rocksdb::IOStatus Wrapped(const std::string& name, rocksdb::IOStatus opened,
                                   std::unique_ptr<rocksdb::FSWritableFile>* result) {
    if (opened.ok() && IsWal(name)) *result = std::make_unique<PageDroppingWal>(std::move(*result), name);
    return opened;
  }
};

}  // namespace

rocksdb::Env* WalPageDroppingEnv() {
  // Never destroyed: a store still open while statics are destroyed keeps using it.
  static rocksdb::Env* const env = rocksdb::NewCompositeEnv(std::make_shared<WalPageDroppingFileSystem>()).release();
  return env;
}

}  // namespace shingleton
