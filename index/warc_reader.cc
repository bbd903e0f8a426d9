#include "index/quote.h"
#include "index/warc_reader.h"

#include <cstring>

namespace shingleton {
namespace {

constexpr size_t kChunk = 256 * 1024;
constexpr uint64_t kMaxHeaderBytes = 1 << 20;

char AsciiLower(char c) { return (c >= 'A' && c <= 'Z') ? static_cast<char>(c + 32) : c; }

bool EqualsIgnoreCase(std::string_view a, std::string_view b) {
  if (a.size() != b.size()) return false;
  for (size_t i = 0; i < a.size(); ++i) {
    if (AsciiLower(a[i]) != AsciiLower(b[i])) return false;
  }
  return true;
}

// WARC 1.1 §4 (grammar borrowed from RFC 2616 §2.2): token = 1*<any US-ASCII
// character except CTLs or separators>.
bool IsTokenChar(unsigned char c) {
  if (c <= 32 || c >= 127) return false;
  return std::strchr("()<>@,;:\\\"/[]?={}", c) == nullptr;
}

std::string_view TrimLws(std::string_view s) {
  while (!s.empty() && (s.front() == ' ' || s.front() == '\t')) s.remove_prefix(1);
  while (!s.empty() && (s.back() == ' ' || s.back() == '\t')) s.remove_suffix(1);
  return s;
}


}  // namespace

const std::string* WarcRecord::FindHeader(std::string_view name) const {
  for (const auto& [n, v] : headers) {
    if (EqualsIgnoreCase(n, name)) return &v;
  }
  return nullptr;
}

std::string WarcRecord::Header(std::string_view name) const {
  const std::string* v = FindHeader(name);
  return v ? *v : std::string();
}

WarcReader::WarcReader() = default;
WarcReader::WarcReader(Options options) : options_(options) {}
WarcReader::~WarcReader() = default;

Status WarcReader::Open(const std::string& path) {
  path_ = path;
  auto stream = ByteStream::Open(path);
  if (!stream.ok()) {
    status_ = stream.status();
    return status_;
  }
  stream_ = std::move(stream).value();
  return Status::Ok();
}

uint64_t WarcReader::raw_offset() const { return stream_ ? stream_->raw_offset() : 0; }

Compression WarcReader::compression() const {
  return stream_ ? stream_->compression() : Compression::kNone;
}

bool WarcReader::Fail(uint64_t at, const std::string& what) {
  std::string where = path_ + ": ";
  if (compression() == Compression::kNone) {
    where += "byte " + std::to_string(at);
  } else {
    where += "uncompressed byte " + std::to_string(at) + " (compressed input read to byte " +
             std::to_string(raw_offset()) + ")";
  }
  std::string record = "record ";
  if (!record_id_.empty()) record += record_id_ + " ";
  record += "starting at byte " + std::to_string(record_offset_);
  status_ = Status::BadInput(where + ": " + what + "; " + record);
  return false;
}

bool WarcReader::FailStream() {
  const Status& s = stream_->status();
  // The stream's message already names the file and the compressed offset.
  std::string msg = s.message() + "; while reading the record ";
  if (!record_id_.empty()) msg += record_id_ + " ";
  msg += "starting at uncompressed byte " + std::to_string(record_offset_);
  status_ = s.code() == Status::Code::kIoError ? Status::IoError(msg) : Status::BadInput(msg);
  return false;
}

// Moves the unread bytes to the front and appends one chunk. Returns the bytes
// read: 0 at the end of the stream or on a stream error (then status_ is set).
size_t WarcReader::ReadMore() {
  if (pos_ > 0) {
    std::memmove(buf_.data(), buf_.data() + pos_, end_ - pos_);
    end_ -= pos_;
    base_ += pos_;
    pos_ = 0;
  }
  if (buf_.size() < end_ + kChunk) buf_.resize(end_ + kChunk);
  const size_t n = stream_->Read(buf_.data() + end_, kChunk);
  end_ += n;
  if (n == 0 && !stream_->status().ok()) FailStream();
  return n;
}

// True once at least n bytes are buffered; false at the end or on error.
bool WarcReader::Ensure(size_t n) {
  while (end_ - pos_ < n) {
    if (ReadMore() == 0) return false;
  }
  return true;
}

WarcReader::LineResult WarcReader::ReadLine(std::string_view* line, uint64_t* line_offset,
                                            bool version_line) {
  size_t scanned = 0;
  for (;;) {
    const char* begin = buf_.data() + pos_;
    const size_t avail = end_ - pos_;
    const void* nl = std::memchr(begin + scanned, '\n', avail - scanned);
    if (nl) {
      const size_t len = static_cast<size_t>(static_cast<const char*>(nl) - begin);
      *line_offset = base_ + pos_;
      if (len == 0 || begin[len - 1] != '\r') {
        const std::string_view text(begin, len);
        if (version_line && text.substr(0, 7) != "WARC/1.") {
          Fail(*line_offset, "expected a WARC version line (\"WARC/1.1\"), found " + QuoteForMessage(text));
        } else {
          // WARC 1.1 §4: header lines end with CRLF.
          Fail(*line_offset, "header line does not end with CRLF: " + QuoteForMessage(text));
        }
        return LineResult::kError;
      }
      *line = std::string_view(begin, len - 1);
      pos_ += len + 1;
      return LineResult::kLine;
    }
    scanned = avail;
    if (base_ + end_ - record_offset_ > kMaxHeaderBytes) {
      Fail(base_ + pos_, "WARC header longer than 1 MiB (no CRLF CRLF)");
      return LineResult::kError;
    }
    if (ReadMore() == 0) return status_.ok() ? LineResult::kEnd : LineResult::kError;
  }
}

bool WarcReader::Next(WarcRecord* rec) {
  if (!stream_ || done_ || !status_.ok()) return false;
  rec->version.clear();
  rec->headers.clear();
  rec->block.clear();
  rec->content_length = 0;
  rec->block_omitted = false;
  record_id_.clear();
  if (!Ensure(1)) {
    if (status_.ok()) done_ = true;  // the end of the file, between records
    return false;
  }
  record_offset_ = base_ + pos_;
  rec->offset = record_offset_;

  std::string_view line;
  uint64_t at = 0;
  switch (ReadLine(&line, &at, /*version_line=*/true)) {
    case LineResult::kError: return false;
    case LineResult::kEnd: return Fail(base_ + end_, "file ends inside the WARC version line");
    case LineResult::kLine: break;
  }
  // WARC 1.1 §4: version = "WARC/1.1" CRLF (WARC/1.0 in ISO 28500:2009).
  if (line != "WARC/1.1" && line != "WARC/1.0") {
    if (line.substr(0, 5) == "WARC/") {
      return Fail(at, "unsupported WARC version " + QuoteForMessage(line) +
                          " (WARC/1.0 and WARC/1.1 are read)");
    }
    return Fail(at, "expected a WARC version line (\"WARC/1.1\"), found " + QuoteForMessage(line));
  }
  rec->version = std::string(line);

  // Named fields up to the empty line.
  for (;;) {
    switch (ReadLine(&line, &at, /*version_line=*/false)) {
      case LineResult::kError: return false;
      case LineResult::kEnd:
        return Fail(base_ + end_, "file ends inside the WARC header (truncated record)");
      case LineResult::kLine: break;
    }
    if (line.empty()) break;
    if (line[0] == ' ' || line[0] == '\t') {
      // WARC 1.1 §4: LWS = [CRLF] 1*( SP | HT ) — a continuation line.
      if (rec->headers.empty()) {
        return Fail(at, "bad header line: continuation line before any field: " + QuoteForMessage(line));
      }
      std::string& value = rec->headers.back().second;
      const std::string_view more = TrimLws(line);
      if (!more.empty()) {
        if (!value.empty()) value.push_back(' ');
        value.append(more.data(), more.size());
      }
      continue;
    }
    const size_t colon = line.find(':');
    if (colon == std::string_view::npos) {
      return Fail(at, "bad header line: not a \"Name: value\" field: " + QuoteForMessage(line));
    }
    const std::string_view name = line.substr(0, colon);
    bool token = !name.empty();
    for (unsigned char c : name) token = token && IsTokenChar(c);
    if (!token) return Fail(at, "bad header line: field name is not a token: " + QuoteForMessage(line));
    rec->headers.emplace_back(std::string(name), std::string(TrimLws(line.substr(colon + 1))));
    if (record_id_.empty() && EqualsIgnoreCase(name, "WARC-Record-ID")) {
      record_id_ = rec->headers.back().second;
    }
  }

  // WARC 1.1 §5.6: Content-Length = "Content-Length" ":" 1*DIGIT (mandatory).
  const std::string* length = nullptr;
  for (const auto& [n, v] : rec->headers) {
    if (!EqualsIgnoreCase(n, "Content-Length")) continue;
    if (length && *length != v) {
      return Fail(rec->offset, "conflicting Content-Length fields " + QuoteForMessage(*length) + " and " +
                                   QuoteForMessage(v));
    }
    length = &v;
  }
  if (!length) return Fail(base_ + pos_, "missing Content-Length field");
  uint64_t cl = 0;
  bool digits = !length->empty() && length->size() <= 18;
  for (char c : *length) {
    digits = digits && c >= '0' && c <= '9';
    if (digits) cl = cl * 10 + static_cast<uint64_t>(c - '0');
  }
  if (!digits) return Fail(base_ + pos_, "invalid Content-Length " + QuoteForMessage(*length));
  rec->content_length = cl;
  if (!ReadBlock(rec)) return false;

  // WARC 1.1 §4: the block is followed by CRLF CRLF.
  const uint64_t trailer_at = base_ + pos_;
  if (!Ensure(4)) {
    if (!status_.ok()) return false;
    return Fail(trailer_at, "file ends after the block (Content-Length " + std::to_string(cl) +
                                ") without the CRLF CRLF that ends a record");
  }
  if (std::memcmp(buf_.data() + pos_, "\r\n\r\n", 4) != 0) {
    return Fail(trailer_at, "missing CRLF CRLF after the block (Content-Length " +
                                std::to_string(cl) + "), found " +
                                QuoteForMessage(std::string_view(buf_.data() + pos_, 4)));
  }
  pos_ += 4;
  return true;
}

// Reads (or skips, when too long) the Content-Length bytes of the block.
bool WarcReader::ReadBlock(WarcRecord* rec) {
  const uint64_t cl = rec->content_length;
  const uint64_t block_at = base_ + pos_;
  const bool keep = cl <= options_.max_block_bytes;
  rec->block_omitted = !keep;
  if (keep) rec->block.resize(cl);
  uint64_t got = std::min<uint64_t>(cl, end_ - pos_);
  if (keep) std::memcpy(rec->block.data(), buf_.data() + pos_, got);
  pos_ += got;
  if (got < cl) {
    // The buffer is used up: read the rest straight from the stream.
    base_ += end_;
    pos_ = end_ = 0;
    while (got < cl) {
      size_t n;
      if (keep) {
        n = stream_->Read(rec->block.data() + got, cl - got);
      } else {
        if (buf_.size() < kChunk) buf_.resize(kChunk);
        n = stream_->Read(buf_.data(), std::min<uint64_t>(kChunk, cl - got));
      }
      if (n == 0) break;
      got += n;
      base_ += n;
    }
  }
  if (got < cl) {
    if (!stream_->status().ok()) return FailStream();
    if (keep) rec->block.resize(got);
    return Fail(block_at + got, "block runs past the end of the file (Content-Length " +
                                    std::to_string(cl) + ", only " + std::to_string(got) +
                                    " bytes left)");
  }
  return true;
}

bool LooksLikeWarc(std::string_view first_bytes) {
  return first_bytes.substr(0, 7) == "WARC/1.";
}

StatusOr<bool> FileLooksLikeWarc(const std::string& path) {
  auto stream = ByteStream::Open(path);
  if (!stream.ok()) return stream.status();
  char buf[8];
  size_t got = 0;
  while (got < sizeof(buf)) {
    const size_t n = stream.value()->Read(buf + got, sizeof(buf) - got);
    if (n == 0) break;
    got += n;
  }
  if (got < 7 && !stream.value()->status().ok()) return stream.value()->status();
  return LooksLikeWarc(std::string_view(buf, got));
}

}  // namespace shingleton
