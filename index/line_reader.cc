#include "index/line_reader.h"

#include <cstring>

namespace shingleton {
namespace {
constexpr size_t kChunk = 1 << 20;
}

LineReader::~LineReader() = default;

Status LineReader::Open(const std::string& path) {
  path_ = path;
  auto stream = ByteStream::Open(path);
  if (!stream.ok()) return stream.status();
  stream_ = std::move(stream).value();
  return Status::Ok();
}

uint64_t LineReader::raw_offset() const { return stream_ ? stream_->raw_offset() : 0; }

Compression LineReader::compression() const {
  return stream_ ? stream_->compression() : Compression::kNone;
}

// Moves the unread bytes to the front and reads one chunk after them.
bool LineReader::Fill() {
  if (eof_) return false;
  if (pos_ > 0) {
    std::memmove(buffer_.data(), buffer_.data() + pos_, end_ - pos_);
    end_ -= pos_;
    pos_ = 0;
  }
  if (buffer_.size() < end_ + kChunk) buffer_.resize(end_ + kChunk);
  const size_t n = stream_->Read(buffer_.data() + end_, kChunk);
  end_ += n;
  if (n == 0) {
    eof_ = true;
    if (!stream_->status().ok()) {
      status_ = stream_->status();
      return false;
    }
  }
  return true;
}

bool LineReader::Next(std::string_view* line) {
  if (!status_.ok() || !stream_) return false;
  size_t scanned = 0;  // bytes after pos_ already searched for '\n'
  for (;;) {
    const char* begin = buffer_.data() + pos_;
    const size_t avail = end_ - pos_;
    const void* nl = std::memchr(begin + scanned, '\n', avail - scanned);
    if (nl || (eof_ && avail > 0)) {
      size_t len = nl ? static_cast<size_t>(static_cast<const char*>(nl) - begin) : avail;
      pos_ += nl ? len + 1 : len;
      if (len > 0 && begin[len - 1] == '\r') --len;
      *line = std::string_view(begin, len);
      ++line_number_;
      return true;
    }
    scanned = avail;
    if (eof_ || !Fill()) return false;
  }
}

}  // namespace shingleton
