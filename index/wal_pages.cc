#include "index/wal_pages.h"

#include <fcntl.h>
#include <unistd.h>

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
    written_ += data.size();
    return target()->Append(data, options, dbg);
  }
  rocksdb::IOStatus Append(const rocksdb::Slice& data, const rocksdb::IOOptions& options,
                           const rocksdb::DataVerificationInfo& info, rocksdb::IODebugContext* dbg) override {
    written_ += data.size();
    return target()->Append(data, options, info, dbg);
  }
  rocksdb::IOStatus Sync(const rocksdb::IOOptions& options, rocksdb::IODebugContext* dbg) override {
    return Dropped(target()->Sync(options, dbg));
  }
  rocksdb::IOStatus Fsync(const rocksdb::IOOptions& options, rocksdb::IODebugContext* dbg) override {
    return Dropped(target()->Fsync(options, dbg));
  }

 private:
  static constexpr uint64_t kStep = 1 << 20;
  static constexpr uint64_t kPage = 4096;

  // Everything appended before a successful sync is on disk, so its pages are clean.
  rocksdb::IOStatus Dropped(rocksdb::IOStatus synced) {
    if (synced.ok() && fd_ >= 0 && written_ >= dropped_ + kStep) {
      const uint64_t end = written_ / kPage * kPage;  // the last partial page stays
      (void)::posix_fadvise(fd_, 0, static_cast<off_t>(end), POSIX_FADV_DONTNEED);  // advice only
      dropped_ = end;
    }
    return synced;
  }

  int fd_;
  uint64_t written_ = 0, dropped_ = 0;
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
  static const std::unique_ptr<rocksdb::Env> env =
      rocksdb::NewCompositeEnv(std::make_shared<WalPageDroppingFileSystem>());
  return env.get();
}

}  // namespace shingleton
