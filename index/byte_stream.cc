#include "index/byte_stream.h"

#include <fcntl.h>
#include <unistd.h>
#include <zlib.h>
#include <zstd.h>

#include <cerrno>
#include <cstring>
#include <vector>

namespace shingleton {
namespace {

constexpr size_t kInputChunk = 256 * 1024;

// The file on disk and an input buffer. `consumed` is advanced by the decoder.
class RawFile {
 public:
  RawFile() = default;
  ~RawFile() {
    if (fd_ >= 0) ::close(fd_);
  }
  RawFile(const RawFile&) = delete;
  RawFile& operator=(const RawFile&) = delete;

  Status Open(const std::string& path) {
    path_ = path;
    fd_ = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
    if (fd_ < 0) return Status::IoError("cannot open " + path + ": " + std::strerror(errno));
    buf_.resize(kInputChunk);
    return Status::Ok();
  }

  // Reads more bytes once the buffer is used up. Returns false on a read error
  // (then *status is set); at the end of the file sets eof().
  bool Refill(Status* status) {
    if (eof_ || pos_ < end_) return true;
    pos_ = end_ = 0;
    for (;;) {
      ssize_t n = ::read(fd_, buf_.data(), buf_.size());
      if (n < 0 && errno == EINTR) continue;
      if (n < 0) {
        *status = Status::IoError(path_ + ": read error at byte " + std::to_string(file_pos_) +
                                  ": " + std::strerror(errno));
        return false;
      }
      if (n == 0) eof_ = true;
      end_ = static_cast<size_t>(n);
      file_pos_ += end_;
      return true;
    }
  }

  // Reads until at least `want` bytes are buffered or the file ends (for magic
  // number detection at the start). Returns false on a read error.
  bool Peek(size_t want, Status* status) {
    while (!eof_ && end_ - pos_ < want) {
      if (pos_ > 0) {
        std::memmove(buf_.data(), buf_.data() + pos_, end_ - pos_);
        end_ -= pos_;
        pos_ = 0;
      }
      ssize_t n = ::read(fd_, buf_.data() + end_, buf_.size() - end_);
      if (n < 0 && errno == EINTR) continue;
      if (n < 0) {
        *status = Status::IoError(path_ + ": read error at byte " + std::to_string(file_pos_) +
                                  ": " + std::strerror(errno));
        return false;
      }
      if (n == 0) eof_ = true;
      end_ += static_cast<size_t>(n);
      file_pos_ += static_cast<size_t>(n);
    }
    return true;
  }

  const unsigned char* data() const { return buf_.data() + pos_; }
  size_t available() const { return end_ - pos_; }
  void Consume(size_t n) { pos_ += n; }
  bool eof() const { return eof_; }
  // Offset in the file of the first unconsumed byte.
  uint64_t consumed() const { return file_pos_ - (end_ - pos_); }
  const std::string& path() const { return path_; }

 private:
  std::string path_;
  int fd_ = -1;
  std::vector<unsigned char> buf_;
  size_t pos_ = 0, end_ = 0;
  uint64_t file_pos_ = 0;  // bytes read from the file into buf_ so far
  bool eof_ = false;
};

class StreamBase : public ByteStream {
 public:
  explicit StreamBase(std::unique_ptr<RawFile> file) : file_(std::move(file)) {}
  const Status& status() const override { return status_; }
  uint64_t raw_offset() const override { return file_->consumed(); }
  const std::string& path() const override { return file_->path(); }

 protected:
  std::unique_ptr<RawFile> file_;
  Status status_;
  bool done_ = false;
};

class PlainStream : public StreamBase {
 public:
  using StreamBase::StreamBase;
  Compression compression() const override { return Compression::kNone; }

  size_t Read(char* buf, size_t n) override {
    if (!status_.ok() || done_ || n == 0) return 0;
    if (file_->available() == 0 && !file_->Refill(&status_)) return 0;
    const size_t k = std::min(n, file_->available());
    if (k == 0) {
      done_ = true;
      return 0;
    }
    std::memcpy(buf, file_->data(), k);
    file_->Consume(k);
    return k;
  }
};

// gzip members (RFC 1952) one after another, decoded with zlib's inflate.
class GzipStream : public StreamBase {
 public:
  using StreamBase::StreamBase;
  ~GzipStream() override {
    if (initialized_) inflateEnd(&zs_);
  }
  Compression compression() const override { return Compression::kGzip; }

  Status Init() {
    std::memset(&zs_, 0, sizeof(zs_));
    // 15 + 16: a gzip wrapper only (zlib manual, inflateInit2), maximum window.
    if (inflateInit2(&zs_, 15 + 16) != Z_OK) {
      return Status::Internal(path() + ": cannot initialise zlib");
    }
    initialized_ = true;
    return Status::Ok();
  }

  size_t Read(char* buf, size_t n) override {
    if (!status_.ok() || done_ || n == 0) return 0;
    zs_.next_out = reinterpret_cast<Bytef*>(buf);
    zs_.avail_out = static_cast<uInt>(std::min<size_t>(n, 1u << 30));
    const uInt want = zs_.avail_out;
    while (zs_.avail_out == want) {
      if (file_->available() == 0 && !file_->Refill(&status_)) return 0;
      if (file_->available() == 0) {  // end of file
        if (!in_member_) {
          done_ = true;
          break;
        }
        if (!output_was_full_) {
          Fail("truncated gzip stream");
          return 0;
        }
      }
      if (!in_member_) {
        in_member_ = true;
        member_start_ = file_->consumed();
      }
      zs_.next_in = const_cast<Bytef*>(file_->data());
      zs_.avail_in = static_cast<uInt>(std::min<size_t>(file_->available(), 1u << 30));
      const uInt in_before = zs_.avail_in;
      const int rc = inflate(&zs_, Z_NO_FLUSH);
      file_->Consume(in_before - zs_.avail_in);
      output_was_full_ = zs_.avail_out == 0;
      if (rc == Z_STREAM_END) {
        in_member_ = false;
        output_was_full_ = false;
        inflateReset(&zs_);
      } else if (rc == Z_BUF_ERROR) {
        // No progress was possible: more input is needed (handled above).
        if (file_->available() > 0 && zs_.avail_out > 0) {
          Fail("gzip decoder made no progress");
          return 0;
        }
      } else if (rc != Z_OK) {
        Fail("corrupt gzip stream", zs_.msg ? std::string(": ") + zs_.msg : std::string());
        return 0;
      }
    }
    return want - zs_.avail_out;
  }

 private:
  void Fail(const std::string& what, const std::string& detail = "") {
    status_ = Status::BadInput(path() + ": " + what + " at byte " +
                               std::to_string(file_->consumed()) + " (member starting at byte " +
                               std::to_string(member_start_) + ")" + detail);
  }

  z_stream zs_;
  bool initialized_ = false;
  bool in_member_ = false;
  bool output_was_full_ = false;
  uint64_t member_start_ = 0;
};

// Zstandard frames (RFC 8878) one after another, decoded with ZSTD_decompressStream.
class ZstdStream : public StreamBase {
 public:
  using StreamBase::StreamBase;
  ~ZstdStream() override { ZSTD_freeDStream(ds_); }
  Compression compression() const override { return Compression::kZstd; }

  Status Init() {
    ds_ = ZSTD_createDStream();
    if (!ds_) return Status::Internal(path() + ": cannot create a zstd decoder");
    ZSTD_initDStream(ds_);
    return Status::Ok();
  }

  size_t Read(char* buf, size_t n) override {
    if (!status_.ok() || done_ || n == 0) return 0;
    ZSTD_outBuffer out{buf, n, 0};
    while (out.pos == 0) {
      if (file_->available() == 0 && !file_->Refill(&status_)) return 0;
      if (file_->available() == 0) {  // end of file
        if (frame_done_) {
          done_ = true;
          break;
        }
        if (!output_was_full_) {
          Fail("truncated zstd stream", "");
          return 0;
        }
      }
      if (frame_done_) {
        frame_done_ = false;
        frame_start_ = file_->consumed();
      }
      ZSTD_inBuffer in{file_->data(), file_->available(), 0};
      const size_t rc = ZSTD_decompressStream(ds_, &out, &in);
      file_->Consume(in.pos);
      if (ZSTD_isError(rc)) {
        Fail("corrupt zstd stream", std::string(": ") + ZSTD_getErrorName(rc));
        return 0;
      }
      // rc == 0: a frame is completely decoded and flushed (zstd.h).
      frame_done_ = rc == 0;
      output_was_full_ = out.pos == out.size;
    }
    return out.pos;
  }

 private:
  void Fail(const std::string& what, const std::string& detail) {
    status_ = Status::BadInput(path() + ": " + what + " at byte " +
                               std::to_string(file_->consumed()) + " (frame starting at byte " +
                               std::to_string(frame_start_) + ")" + detail);
  }

  ZSTD_DStream* ds_ = nullptr;
  bool frame_done_ = true;  // between frames (also before the first)
  bool output_was_full_ = false;
  uint64_t frame_start_ = 0;
};

}  // namespace

StatusOr<std::unique_ptr<ByteStream>> ByteStream::Open(const std::string& path) {
  auto file = std::make_unique<RawFile>();
  SHINGLETON_RETURN_IF_ERROR(file->Open(path));
  Status st;
  if (!file->Peek(4, &st)) return st;
  const unsigned char* p = file->data();
  const size_t n = file->available();
  // RFC 1952 §2.3.1: ID1 = 31 (0x1f), ID2 = 139 (0x8b).
  if (n >= 2 && p[0] == 0x1F && p[1] == 0x8B) {
    auto s = std::make_unique<GzipStream>(std::move(file));
    SHINGLETON_RETURN_IF_ERROR(s->Init());
    return std::unique_ptr<ByteStream>(std::move(s));
  }
  // RFC 8878 §3.1.1: frame magic 0xFD2FB528 little-endian; §3.1.2: skippable
  // frames 0x184D2A5? little-endian.
  const bool zstd_frame = n >= 4 && p[0] == 0x28 && p[1] == 0xB5 && p[2] == 0x2F && p[3] == 0xFD;
  const bool skippable = n >= 4 && (p[0] & 0xF0) == 0x50 && p[1] == 0x2A && p[2] == 0x4D &&
                         p[3] == 0x18;
  if (zstd_frame || skippable) {
    auto s = std::make_unique<ZstdStream>(std::move(file));
    SHINGLETON_RETURN_IF_ERROR(s->Init());
    return std::unique_ptr<ByteStream>(std::move(s));
  }
  return std::unique_ptr<ByteStream>(std::make_unique<PlainStream>(std::move(file)));
}

}  // namespace shingleton
