// LineReader: a stream of lines from a plain or gzip-compressed file.
//
// zlib's gz* functions read both (a gzip stream is detected by its magic bytes,
// and multi-member files are read through). Lines end with '\n'; a trailing '\r'
// is removed; the last line need not end with '\n'. Read errors — including a
// truncated or corrupt gzip stream — are reported with the file name and the
// compressed byte offset.
//
// Thread safety: one reader per thread.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>

#include "index/status.h"

struct gzFile_s;

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
  // Bytes consumed from the file on disk (compressed bytes for gzip).
  uint64_t raw_offset() const;
  const std::string& path() const { return path_; }

 private:
  bool Fill();

  std::string path_;
  gzFile_s* file_ = nullptr;
  std::string buffer_;
  size_t pos_ = 0;     // start of unread data in buffer_
  bool eof_ = false;
  uint64_t line_number_ = 0;
  Status status_;
};

}  // namespace shingleton
