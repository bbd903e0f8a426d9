#include "index/line_reader.h"

#include <zlib.h>

#include <cerrno>
#include <cstring>

namespace shingleton {
namespace {
constexpr size_t kChunk = 1 << 20;
}

LineReader::~LineReader() {
  if (file_) gzclose(file_);
}

Status LineReader::Open(const std::string& path) {
  path_ = path;
  file_ = gzopen(path.c_str(), "rb");
  if (!file_) return Status::IoError("cannot open " + path + ": " + std::strerror(errno));
  gzbuffer(file_, 256 * 1024);
  return Status::Ok();
}

uint64_t LineReader::raw_offset() const {
  if (!file_) return 0;
  z_off_t off = gzoffset(file_);
  return off < 0 ? 0 : static_cast<uint64_t>(off);
}

bool LineReader::Fill() {
  if (eof_) return false;
  buffer_.erase(0, pos_);
  pos_ = 0;
  const size_t old = buffer_.size();
  buffer_.resize(old + kChunk);
  int n = gzread(file_, buffer_.data() + old, kChunk);
  if (n < 0) {
    int err = 0;
    const char* msg = gzerror(file_, &err);
    status_ = Status::BadInput(path_ + ": read error near byte " + std::to_string(raw_offset()) +
                               ": " + (msg ? msg : "unknown"));
    buffer_.resize(old);
    return false;
  }
  buffer_.resize(old + static_cast<size_t>(n));
  if (n == 0) {
    eof_ = true;
    int err = 0;
    const char* msg = gzerror(file_, &err);
    if (err != Z_OK && err != Z_STREAM_END) {
      status_ = Status::BadInput(path_ + ": " + (msg ? msg : "read error") + " at byte " +
                                 std::to_string(raw_offset()) + " (truncated or corrupt gzip?)");
      return false;
    }
  }
  return true;
}

bool LineReader::Next(std::string_view* line) {
  if (!status_.ok() || !file_) return false;
  for (;;) {
    const char* begin = buffer_.data() + pos_;
    const size_t avail = buffer_.size() - pos_;
    const void* nl = std::memchr(begin, '\n', avail);
    if (nl || (eof_ && avail > 0)) {
      size_t len = nl ? static_cast<size_t>(static_cast<const char*>(nl) - begin) : avail;
      pos_ += nl ? len + 1 : len;
      if (len > 0 && begin[len - 1] == '\r') --len;
      *line = std::string_view(begin, len);
      ++line_number_;
      return true;
    }
    if (eof_ || !Fill()) return false;
  }
}

}  // namespace shingleton
