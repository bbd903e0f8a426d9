// WARC record -> document: the text a WARC record contributes to a job.
//
// This is the per-record work of WARC ingest; it depends on the record only, so
// the pipeline may run it on many records in parallel.
//
// Which records give a document:
//  - WARC-Type response, resource or conversion (WARC 1.1 §6); anything else
//    (warcinfo, request, metadata, revisit, continuation) is skipped, kRecordType.
//  - response with Content-Type application/http (or, without Content-Type, a
//    block that starts with "HTTP/"): the block is an HTTP/1.x response message
//    (RFC 9112). Its status line must parse (else BadInput naming the record);
//    a status other than 200 is skipped, kHttpStatus. Header fields follow RFC
//    9112 §5 with the leniencies the RFC allows a recipient: a bare LF ends a
//    line (§2.2), obs-fold is replaced by a space (§5.2), whitespace before the
//    colon is removed (§5.1), and lines without a colon are ignored. The body is
//    the rest of the block; Transfer-Encoding chunked (§7.1) and gzip/x-gzip
//    (RFC 9110 §8.4.1.3) are decoded, as is Content-Encoding gzip/x-gzip;
//    identity is accepted; any other coding is skipped, kContentType. The
//    payload's media type is the HTTP Content-Type.
//  - resource and conversion: the block is the payload; its media type is the
//    WARC Content-Type.
//  - The media type (RFC 9110 §8.3.1, case-insensitive) must be text/html or
//    application/xhtml+xml (-> HtmlToText, index/html_text.h) or text/plain
//    (-> the text as is); anything else, or none, is skipped, kContentType. A
//    record whose block the reader omitted as too long is skipped, kTooLarge.
//  - No text left (only whitespace): skipped, kNoText.
//
// Charset: the charset parameter of the payload's media type. The WHATWG Encoding
// Standard's labels of windows-1252 (which include iso-8859-1, latin1 and
// us-ascii) are decoded as windows-1252; every other payload is taken as UTF-8,
// each maximal ill-formed subsequence replaced by U+FFFD (Unicode Standard §3.9,
// as the WHATWG UTF-8 decoder does), so the text always passes ValidateUtf8
// (index/normalizer.h) and crawled junk never stops a job.
//
// Truncation: a chunked or gzip body that ends early (a crawler cut the
// download, WARC-Truncated) gives the text decoded so far. A decoded body is
// capped at kMaxDecodedBodyBytes (a gzip bomb cannot exhaust memory). In all
// three cases WarcDocument::truncated is set; corrupt (not merely cut) chunked or
// gzip data is BadInput naming the record.
//
// Thread safety: reentrant; no shared state.
#pragma once

#include <cstddef>
#include <string>
#include <string_view>

#include "index/status.h"
#include "index/warc_reader.h"

namespace shingleton {

// Decoded payload bytes kept per record; the rest is dropped (truncated = true).
constexpr size_t kMaxDecodedBodyBytes = size_t{16} << 20;

struct WarcDocument {
  std::string id;    // WARC-Record-ID as written, e.g. "<urn:uuid:...>"
  std::string url;   // WARC-Target-URI, without <> if present
  std::string date;  // WARC-Date as written
  std::string text;  // valid UTF-8
  bool truncated = false;  // WARC-Truncated present, or the body was cut (see above)
};

enum class WarcSkip {
  kNone = 0,
  kRecordType,   // not response / resource / conversion
  kHttpStatus,   // HTTP status not 200
  kContentType,  // not text/html, application/xhtml+xml or text/plain; or an unsupported coding
  kNoText,       // nothing but whitespace
  kTooLarge,     // the reader omitted the block (WarcReader::Options::max_block_bytes)
};
const char* WarcSkipName(WarcSkip skip);

// Fills *out and sets *skip = kNone when the record gives a document; sets *skip
// to the reason otherwise (still OK: skipping is not an error). Returns BadInput
// "record <id> at byte N: ..." for a malformed HTTP message (no status line,
// header section without an end, bad chunk framing, corrupt gzip). *out's id,
// url, date and truncated are filled whenever the status is OK.
Status ExtractWarcDocument(const WarcRecord& rec, WarcDocument* out, WarcSkip* skip);

// Windows-1252 bytes -> UTF-8 (WHATWG Encoding Standard, index-windows-1252:
// 0x80-0x9F per its table, every other byte is the code point of the same value).
std::string Windows1252ToUtf8(std::string_view bytes);

// UTF-8 with every maximal ill-formed subsequence replaced by U+FFFD (Unicode
// Standard §3.9, "U+FFFD Substitution of Maximal Subparts"; WHATWG Encoding
// Standard, UTF-8 decoder). Well-formed input is returned unchanged.
std::string ToValidUtf8(std::string_view bytes);

}  // namespace shingleton
