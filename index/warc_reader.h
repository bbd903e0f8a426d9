// WarcReader: the records of a WARC file (ISO 28500, WARC 1.0 and 1.1), one at a time.
//
// The file may be plain, gzip (record-at-a-time .warc.gz, WARC 1.1 annex D: one
// gzip member per record, concatenated) or Zstandard (one or more frames); the
// bytes come from a ByteStream, so the compression is detected from the magic
// bytes and the record framing is read from the uncompressed stream.
//
// Framing (WARC 1.1 §4-5):
//   version line ("WARC/1.0" or "WARC/1.1") CRLF
//   named fields "Name: value" CRLF, a line starting with SP or HT continues the
//     previous field's value (joined with one space)
//   CRLF                                    -- end of the header
//   block of exactly Content-Length bytes
//   CRLF CRLF                               -- end of the record
// The reader is strict about this framing: every line of the header ends with
// CRLF, a field name is a token, Content-Length is present and is 1*DIGIT, the
// block is whole, and CRLF CRLF follows it. Anything else is BadInput naming the
// file, the byte offset of the problem (uncompressed; for compressed input also
// the compressed offset reached), and the record (its WARC-Record-ID once read,
// and its start offset). Errors of the compressed stream (a truncated or corrupt
// gzip member) are the ByteStream's, with the record named after them. After an
// error Next() returns false.
//
// Memory: one record at a time. A header is at most 1 MiB. A block longer than
// Options::max_block_bytes is skipped over without being held (the record is
// still returned, with block_omitted set), so one huge record cannot exhaust
// memory. The file is never read whole.
//
// Thread safety: one reader per thread; WarcRecord is a plain value.
#pragma once

#include <cstdint>
#include <memory>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "index/byte_stream.h"
#include "index/status.h"

namespace shingleton {

struct WarcRecord {
  std::string version;  // "WARC/1.0" or "WARC/1.1"
  // Named fields in the order written, names as written, values with the
  // surrounding whitespace removed and continuation lines joined.
  std::vector<std::pair<std::string, std::string>> headers;
  std::string block;             // exactly Content-Length bytes (empty if block_omitted)
  uint64_t offset = 0;           // uncompressed offset of the version line
  uint64_t content_length = 0;   // the Content-Length field
  bool block_omitted = false;    // content_length > Options::max_block_bytes: block not kept

  // Value of the first field named `name` (ASCII case-insensitive), "" if absent.
  std::string Header(std::string_view name) const;
  // As Header(), but nullptr if absent (tells an empty value from a missing field).
  const std::string* FindHeader(std::string_view name) const;
};

class WarcReader {
 public:
  struct Options {
    // Blocks longer than this are skipped, not held. Default 64 MiB.
    uint64_t max_block_bytes = uint64_t{64} << 20;
  };

  WarcReader();
  explicit WarcReader(Options options);
  ~WarcReader();
  WarcReader(const WarcReader&) = delete;
  WarcReader& operator=(const WarcReader&) = delete;

  // Opens `path` (IoError if it cannot be opened).
  Status Open(const std::string& path);
  // Reads the next record into *rec and returns true; at the end of the file or
  // on error returns false — then check status(). The end of the file is only
  // valid between records.
  bool Next(WarcRecord* rec);
  const Status& status() const { return status_; }
  // Bytes consumed from the file on disk (compressed bytes), including read-ahead
  // of up to one buffer; for progress reporting.
  uint64_t raw_offset() const;
  // Uncompressed offset of the start of the record last returned (or of the one
  // that failed).
  uint64_t record_offset() const { return record_offset_; }
  Compression compression() const;
  const std::string& path() const { return path_; }

 private:
  enum class LineResult { kLine, kEnd, kError };
  size_t ReadMore();
  bool Ensure(size_t n);
  LineResult ReadLine(std::string_view* line, uint64_t* line_offset, bool version_line);
  bool ReadBlock(WarcRecord* rec);
  bool Fail(uint64_t at, const std::string& what);
  bool FailStream();

  Options options_;
  std::string path_;
  std::unique_ptr<ByteStream> stream_;
  std::string buf_;    // capacity; the data is [pos_, end_)
  size_t pos_ = 0;
  size_t end_ = 0;
  uint64_t base_ = 0;  // uncompressed offset of buf_[0]
  uint64_t record_offset_ = 0;
  std::string record_id_;  // WARC-Record-ID of the record being read, for errors
  bool done_ = false;
  Status status_;
};

// True if `first_bytes` (the first decompressed bytes of a file) start like a
// WARC 1.x record: "WARC/1.".
bool LooksLikeWarc(std::string_view first_bytes);

// Opens `path` through a ByteStream and applies LooksLikeWarc to its first
// decompressed bytes. Errors are those of ByteStream (I/O, corrupt compression).
StatusOr<bool> FileLooksLikeWarc(const std::string& path);

}  // namespace shingleton
