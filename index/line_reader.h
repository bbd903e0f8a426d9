// LineReader: a stream of lines from a plain, gzip- or Zstandard-compressed file.
//
// The bytes come from a ByteStream (index/byte_stream.h), which detects the
// compression from the magic bytes and reads multi-member gzip and multi-frame
// zstd files through. Lines end with '\n'; a trailing '\r' is removed; the last
// line need not end with '\n'. Read errors — including a truncated or corrupt
// compressed stream — are reported with the file name and the compressed byte
// offset. Memory is one read chunk plus the longest line.
//
// Thread safety: one reader per thread.
#pragma once

#include <cstdint>
#include <memory>
#include <string>
#include <string_view>

#include "index/byte_stream.h"
#include "index/status.h"

namespace shingleton {

class LineReader {
 public:
  LineReader() = default;
  ~LineReader();
  LineReader(const LineReader&) = delete;
  LineReader& operator=(const LineReader&) = delete;

  Status Open(const std::string& path);
  // Sets *line to the next line (valid until the next call) and returns true; at
  // the end or on error returns false — then check status().
  bool Next(std::string_view* line);
  const Status& status() const { return status_; }
  // 1-based number of the line last returned.
  uint64_t line_number() const { return line_number_; }
  // Bytes consumed from the file on disk (compressed bytes for gzip and zstd).
  uint64_t raw_offset() const;
  // The compression detected by Open().
  Compression compression() const;
  const std::string& path() const { return path_; }

 private:
  bool Fill();

  std::string path_;
  std::unique_ptr<ByteStream> stream_;
  std::string buffer_;
  size_t pos_ = 0;  // start of unread data in buffer_
  size_t end_ = 0;  // end of the data in buffer_ (buffer_.size() is its capacity)
  bool eof_ = false;
  uint64_t line_number_ = 0;
  Status status_;
};

}  // namespace shingleton
