// ByteStream: the decompressed bytes of an input file, whatever its compression.
//
// The format is detected from the first bytes, not the file name: gzip (1F 8B,
// RFC 1952 §2.3.1; multi-member files such as record-at-a-time .warc.gz are read
// through, member after member), Zstandard (a frame magic 28 B5 2F FD or a
// skippable-frame magic 5? 2A 4D 18, RFC 8878 §3.1; multiple frames likewise),
// or plain (anything else, including files shorter than a magic number).
//
// Contract:
//  - Read() returns decompressed bytes in order; 0 means the end of the stream or
//    an error, and status() tells which. After an error every Read() returns 0.
//  - A compressed stream must end exactly at the end of a member / frame. A
//    truncated stream, corrupt data (including a bad gzip CRC-32 or ISIZE, or a
//    bad zstd checksum) and bytes after the last member that do not start another
//    member are BadInput, e.g.
//      "in.jsonl.gz: truncated gzip stream at byte 4096 (member starting at byte 0)"
//      "in.warc.gz: corrupt gzip stream at byte 812 (member starting at byte 790): ..."
//    where the byte offsets are offsets in the file on disk (compressed bytes).
//  - A file that cannot be opened or read is IoError naming the file.
//  - Memory is bounded (a fixed input buffer and the codec's window), whatever
//    the file size.
//
// Thread safety: one stream per thread.
#pragma once

#include <cstddef>
#include <cstdint>
#include <memory>
#include <string>

#include "index/status.h"

namespace shingleton {

enum class Compression { kNone, kGzip, kZstd };

class ByteStream {
 public:
  virtual ~ByteStream() = default;

  // Opens `path` and detects its compression.
  static StatusOr<std::unique_ptr<ByteStream>> Open(const std::string& path);

  // Reads up to n bytes into buf. Returns the number read; 0 at the end of the
  // stream or on error — then status() tells which. May return fewer than n
  // bytes before the end.
  virtual size_t Read(char* buf, size_t n) = 0;
  virtual const Status& status() const = 0;
  // Bytes consumed from the file on disk so far (compressed bytes): those the
  // decoder has used, not those read ahead into the input buffer. At the end of
  // a stream read to the end this is the file size.
  virtual uint64_t raw_offset() const = 0;
  virtual Compression compression() const = 0;
  virtual const std::string& path() const = 0;
};

}  // namespace shingleton
