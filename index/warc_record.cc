#include "index/quote.h"
#include "index/warc_record.h"

#include <zlib.h>

#include <cstring>
#include <utility>
#include <vector>

#include "index/html_text.h"

namespace shingleton {
namespace {

char AsciiLower(char c) { return (c >= 'A' && c <= 'Z') ? static_cast<char>(c + 32) : c; }

std::string Lower(std::string_view s) {
  std::string out(s);
  for (char& c : out) c = AsciiLower(c);
  return out;
}

bool EqualsIgnoreCase(std::string_view a, std::string_view b) {
  if (a.size() != b.size()) return false;
  for (size_t i = 0; i < a.size(); ++i) {
    if (AsciiLower(a[i]) != AsciiLower(b[i])) return false;
  }
  return true;
}

// RFC 9110 §5.6.3: OWS = *( SP / HTAB ).
std::string_view TrimOws(std::string_view s) {
  while (!s.empty() && (s.front() == ' ' || s.front() == '\t')) s.remove_prefix(1);
  while (!s.empty() && (s.back() == ' ' || s.back() == '\t')) s.remove_suffix(1);
  return s;
}

bool IsDigit(char c) { return c >= '0' && c <= '9'; }


void AppendUtf8(uint32_t cp, std::string* out) {
  if (cp < 0x80) {
    out->push_back(static_cast<char>(cp));
  } else if (cp < 0x800) {
    out->push_back(static_cast<char>(0xC0 | (cp >> 6)));
    out->push_back(static_cast<char>(0x80 | (cp & 0x3F)));
  } else if (cp < 0x10000) {
    out->push_back(static_cast<char>(0xE0 | (cp >> 12)));
    out->push_back(static_cast<char>(0x80 | ((cp >> 6) & 0x3F)));
    out->push_back(static_cast<char>(0x80 | (cp & 0x3F)));
  } else {
    out->push_back(static_cast<char>(0xF0 | (cp >> 18)));
    out->push_back(static_cast<char>(0x80 | ((cp >> 12) & 0x3F)));
    out->push_back(static_cast<char>(0x80 | ((cp >> 6) & 0x3F)));
    out->push_back(static_cast<char>(0x80 | (cp & 0x3F)));
  }
}

// WHATWG Encoding Standard, index-windows-1252.txt, pointers 0-31 (bytes
// 0x80-0x9F). The five bytes Windows leaves undefined (81 8D 8F 90 9D) map to
// the C1 control of the same value, as in the WHATWG index.
constexpr uint16_t kWindows1252High[32] = {
    0x20AC, 0x0081, 0x201A, 0x0192, 0x201E, 0x2026, 0x2020, 0x2021,  // 80-87
    0x02C6, 0x2030, 0x0160, 0x2039, 0x0152, 0x008D, 0x017D, 0x008F,  // 88-8F
    0x0090, 0x2018, 0x2019, 0x201C, 0x201D, 0x2022, 0x2013, 0x2014,  // 90-97
    0x02DC, 0x2122, 0x0161, 0x203A, 0x0153, 0x009D, 0x017E, 0x0178,  // 98-9F
};

// WHATWG Encoding Standard §4.2 "Names and labels": the labels of windows-1252.
bool IsWindows1252Label(std::string_view label) {
  static const char* const kLabels[] = {
      "ansi_x3.4-1968", "ascii",    "cp1252",     "cp819",           "csisolatin1",
      "ibm819",         "iso-8859-1", "iso-ir-100", "iso8859-1",     "iso88591",
      "iso_8859-1",     "iso_8859-1:1987", "l1",    "latin1",        "us-ascii",
      "windows-1252",   "x-cp1252"};
  for (const char* l : kLabels) {
    if (label == l) return true;
  }
  return false;
}

// A media type (RFC 9110 §8.3.1): type/subtype lowercased, and the charset
// parameter lowercased and unquoted.
struct MediaType {
  std::string type;
  std::string charset;
};

MediaType ParseMediaType(std::string_view v) {
  MediaType m;
  size_t semi = v.find(';');
  m.type = Lower(TrimOws(v.substr(0, semi)));
  while (semi != std::string_view::npos) {
    size_t i = semi + 1;
    // parameter = parameter-name "=" parameter-value (token / quoted-string).
    size_t eq = v.find('=', i);
    size_t next = v.find(';', i);
    if (eq == std::string_view::npos || (next != std::string_view::npos && next < eq)) {
      semi = next;
      continue;
    }
    const std::string name = Lower(TrimOws(v.substr(i, eq - i)));
    size_t j = eq + 1;
    while (j < v.size() && (v[j] == ' ' || v[j] == '\t')) ++j;
    std::string value;
    if (j < v.size() && v[j] == '"') {
      ++j;
      while (j < v.size() && v[j] != '"') {
        if (v[j] == '\\' && j + 1 < v.size()) ++j;  // quoted-pair
        value.push_back(v[j++]);
      }
      next = v.find(';', j);
    } else {
      value = std::string(TrimOws(v.substr(j, next == std::string_view::npos ? v.npos : next - j)));
    }
    if (name == "charset" && m.charset.empty()) m.charset = Lower(TrimOws(value));
    semi = next;
  }
  return m;
}

// An HTTP/1.x response message (RFC 9112 §2.1): status line, fields, body.
struct HttpResponse {
  int status = 0;
  std::vector<std::pair<std::string_view, std::string>> fields;
  std::string_view body;
  bool header_complete = false;
};

// Next line of `s` from *pos: up to LF, a CR before it dropped (RFC 9112 §2.2).
// Returns false when no LF is left (*line is then the rest).
bool NextLine(std::string_view s, size_t* pos, std::string_view* line) {
  const size_t nl = s.find('\n', *pos);
  if (nl == std::string_view::npos) {
    *line = s.substr(*pos);
    *pos = s.size();
    return false;
  }
  size_t len = nl - *pos;
  if (len > 0 && s[nl - 1] == '\r') --len;
  *line = s.substr(*pos, len);
  *pos = nl + 1;
  return true;
}

// RFC 9112 §4: status-line = HTTP-version SP status-code SP [ reason-phrase ],
// HTTP-version = "HTTP/" DIGIT "." DIGIT, status-code = 3DIGIT. Also accepted:
// "HTTP/2" (as written by some archiving browsers) and a missing SP after the code.
bool ParseStatusLine(std::string_view line, int* status) {
  if (line.substr(0, 5) != "HTTP/") return false;
  size_t i = 5;
  if (i >= line.size() || !IsDigit(line[i])) return false;
  ++i;
  if (i < line.size() && line[i] == '.') {
    ++i;
    if (i >= line.size() || !IsDigit(line[i])) return false;
    ++i;
  }
  if (i >= line.size() || line[i] != ' ') return false;
  while (i < line.size() && line[i] == ' ') ++i;
  if (i + 3 > line.size() || !IsDigit(line[i]) || !IsDigit(line[i + 1]) || !IsDigit(line[i + 2])) {
    return false;
  }
  if (i + 3 < line.size() && line[i + 3] != ' ' && line[i + 3] != '\t') return false;
  *status = (line[i] - '0') * 100 + (line[i + 1] - '0') * 10 + (line[i + 2] - '0');
  return true;
}

// Returns false if there is no status line.
bool ParseHttpResponse(std::string_view block, HttpResponse* r) {
  size_t pos = 0;
  std::string_view line;
  if (!NextLine(block, &pos, &line)) {
    return ParseStatusLine(line, &r->status);  // a status line and nothing else
  }
  if (!ParseStatusLine(line, &r->status)) return false;
  bool first = true;
  for (;;) {
    const bool has_lf = NextLine(block, &pos, &line);
    if (line.empty()) {
      if (!has_lf) return true;  // the data ends inside the header section
      r->header_complete = true;
      r->body = block.substr(pos);
      return true;
    }
    if (line[0] == ' ' || line[0] == '\t') {
      if (!first && !r->fields.empty()) {
        // RFC 9112 §5.2: obs-fold is replaced with SP.
        std::string& value = r->fields.back().second;
        value.push_back(' ');
        const std::string_view more = TrimOws(line);
        value.append(more.data(), more.size());
      }
      // else RFC 9112 §2.2: whitespace-preceded lines before the first field are
      // consumed without further processing.
    } else {
      first = false;
      const size_t colon = line.find(':');
      if (colon != std::string_view::npos) {
        // RFC 9112 §5.1: whitespace between name and colon is removed, as a proxy must.
        r->fields.emplace_back(TrimOws(line.substr(0, colon)),
                               std::string(TrimOws(line.substr(colon + 1))));
      }
    }
    if (!has_lf) return true;
  }
}

// The value of the first field `name`, all values joined with ", " when `all`
// (RFC 9110 §5.3: repeated list fields combine), nullptr-like "" if absent.
std::string FieldValue(const HttpResponse& r, std::string_view name, bool all) {
  std::string out;
  bool found = false;
  for (const auto& [n, v] : r.fields) {
    if (!EqualsIgnoreCase(n, name)) continue;
    if (found) {
      if (!all) break;
      out += ", ";
    }
    out += v;
    found = true;
  }
  return out;
}

// RFC 9110 §5.6.1: a comma-separated list; empty elements are ignored.
std::vector<std::string> ParseCodings(std::string_view v) {
  std::vector<std::string> out;
  size_t i = 0;
  while (i <= v.size()) {
    size_t comma = v.find(',', i);
    if (comma == std::string_view::npos) comma = v.size();
    std::string_view item = TrimOws(v.substr(i, comma - i));
    const size_t semi = item.find(';');  // transfer parameters are ignored
    item = TrimOws(item.substr(0, semi));
    if (!item.empty()) out.push_back(Lower(item));
    i = comma + 1;
  }
  return out;
}

// RFC 9112 §7.1: chunked-body = *chunk last-chunk trailer-section CRLF;
// chunk = chunk-size [ chunk-ext ] CRLF chunk-data CRLF. Sets *cut when the data
// ends before the last chunk. Returns "" or what is wrong.
std::string Dechunk(std::string_view in, std::string* out, bool* cut) {
  out->clear();
  size_t pos = 0;
  for (;;) {
    std::string_view line;
    if (!NextLine(in, &pos, &line)) {
      *cut = true;  // ends inside (or before) a chunk-size line
      return "";
    }
    size_t i = 0;
    while (i < line.size() && (line[i] == ' ' || line[i] == '\t')) ++i;
    uint64_t size = 0;
    size_t digits = 0;
    for (; i < line.size(); ++i, ++digits) {
      const char c = AsciiLower(line[i]);
      int d;
      if (IsDigit(c)) {
        d = c - '0';
      } else if (c >= 'a' && c <= 'f') {
        d = c - 'a' + 10;
      } else {
        break;
      }
      if (size > (uint64_t{1} << 40)) return "chunk size too large: " + QuoteForMessage(line);
      size = size * 16 + static_cast<uint64_t>(d);
    }
    if (digits == 0) return "bad chunk-size line " + QuoteForMessage(line);
    std::string_view rest = TrimOws(line.substr(i));
    if (!rest.empty() && rest[0] != ';') return "bad chunk-size line " + QuoteForMessage(line);
    if (size == 0) return "";  // last-chunk; the trailer section is ignored
    const size_t avail = in.size() - pos;
    const size_t take = static_cast<size_t>(std::min<uint64_t>(size, avail));
    const size_t room = kMaxDecodedBodyBytes - std::min(out->size(), kMaxDecodedBodyBytes);
    out->append(in.data() + pos, std::min(take, room));
    if (take > room) {
      *cut = true;
      return "";
    }
    pos += take;
    if (take < size || pos == in.size()) {
      *cut = true;
      return "";
    }
    if (in[pos] == '\n') {
      pos += 1;
    } else if (in[pos] == '\r' && pos + 1 < in.size() && in[pos + 1] == '\n') {
      pos += 2;
    } else if (in[pos] == '\r' && pos + 1 == in.size()) {
      *cut = true;
      return "";
    } else {
      return "chunk data (" + std::to_string(size) + " bytes) not followed by CRLF";
    }
  }
}

// gzip (RFC 1952) members one after another; data after the last member that
// is not a gzip member is ignored, as the gzip tool does. Sets *cut when the data
// ends inside a member or the output reaches kMaxDecodedBodyBytes.
std::string Gunzip(std::string_view in, std::string* out, bool* cut) {
  out->clear();
  in = in.substr(0, size_t{1} << 31);  // zlib counts in uInt; blocks are far smaller
  if (in.empty()) return "";
  z_stream zs;
  std::memset(&zs, 0, sizeof(zs));
  if (inflateInit2(&zs, 15 + 16) != Z_OK) return "cannot initialise zlib";
  zs.next_in = reinterpret_cast<Bytef*>(const_cast<char*>(in.data()));
  zs.avail_in = static_cast<uInt>(in.size());
  std::string error;
  for (;;) {
    const size_t old = out->size();
    if (old >= kMaxDecodedBodyBytes) {
      *cut = true;
      break;
    }
    const size_t chunk = std::min<size_t>(64 * 1024, kMaxDecodedBodyBytes - old);
    out->resize(old + chunk);
    zs.next_out = reinterpret_cast<Bytef*>(out->data() + old);
    zs.avail_out = static_cast<uInt>(chunk);
    const int rc = inflate(&zs, Z_NO_FLUSH);
    out->resize(old + chunk - zs.avail_out);
    if (rc == Z_STREAM_END) {
      const size_t used = in.size() - zs.avail_in;
      if (zs.avail_in < 2 || static_cast<unsigned char>(in[used]) != 0x1F ||
          static_cast<unsigned char>(in[used + 1]) != 0x8B) {
        break;  // the end, or trailing bytes that are not a member
      }
      inflateReset(&zs);
      continue;
    }
    if (rc == Z_OK || rc == Z_BUF_ERROR) {
      if (zs.avail_in == 0 && zs.avail_out > 0) {
        *cut = true;  // all input used inside a member
        break;
      }
      continue;
    }
    error = "corrupt gzip data at byte " + std::to_string(in.size() - zs.avail_in) +
            " of the body" + (zs.msg ? std::string(": ") + zs.msg : std::string());
    break;
  }
  inflateEnd(&zs);
  return error;
}

bool HasText(std::string_view s) {
  for (char c : s) {
    if (c != ' ' && c != '\t' && c != '\n' && c != '\r' && c != '\f' && c != '\v') return true;
  }
  return false;
}

}  // namespace

const char* WarcSkipName(WarcSkip skip) {
  switch (skip) {
    case WarcSkip::kNone: return "none";
    case WarcSkip::kRecordType: return "record_type";
    case WarcSkip::kHttpStatus: return "http_status";
    case WarcSkip::kContentType: return "content_type";
    case WarcSkip::kNoText: return "no_text";
    case WarcSkip::kTooLarge: return "too_large";
  }
  return "unknown";
}

std::string Windows1252ToUtf8(std::string_view bytes) {
  std::string out;
  out.reserve(bytes.size() + bytes.size() / 8);
  for (unsigned char c : bytes) {
    if (c < 0x80) {
      out.push_back(static_cast<char>(c));
    } else if (c < 0xA0) {
      AppendUtf8(kWindows1252High[c - 0x80], &out);
    } else {
      AppendUtf8(c, &out);
    }
  }
  return out;
}

std::string ToValidUtf8(std::string_view bytes) {
  const auto* s = reinterpret_cast<const unsigned char*>(bytes.data());
  const size_t n = bytes.size();
  std::string out;
  out.reserve(n);
  size_t i = 0;
  while (i < n) {
    const unsigned char b = s[i];
    if (b < 0x80) {
      size_t j = i + 1;
      while (j < n && s[j] < 0x80) ++j;
      out.append(bytes.data() + i, j - i);
      i = j;
      continue;
    }
    // Unicode Standard ch. 3, Table 3-7 (well-formed UTF-8 byte sequences).
    size_t need;
    unsigned char lo = 0x80, hi = 0xBF;
    if (b >= 0xC2 && b <= 0xDF) {
      need = 1;
    } else if (b == 0xE0) {
      need = 2, lo = 0xA0;
    } else if ((b >= 0xE1 && b <= 0xEC) || b == 0xEE || b == 0xEF) {
      need = 2;
    } else if (b == 0xED) {
      need = 2, hi = 0x9F;
    } else if (b == 0xF0) {
      need = 3, lo = 0x90;
    } else if (b >= 0xF1 && b <= 0xF3) {
      need = 3;
    } else if (b == 0xF4) {
      need = 3, hi = 0x8F;
    } else {
      out += "\xEF\xBF\xBD";  // 80-C1, F5-FF never start a sequence
      ++i;
      continue;
    }
    size_t j = i + 1;
    bool ok = true;
    for (size_t k = 0; k < need; ++k, ++j) {
      const unsigned char l = k == 0 ? lo : 0x80, h = k == 0 ? hi : 0xBF;
      if (j >= n || s[j] < l || s[j] > h) {
        ok = false;
        break;
      }
    }
    if (ok) {
      out.append(bytes.data() + i, j - i);
    } else {
      out += "\xEF\xBF\xBD";  // one U+FFFD for the maximal subpart [i, j)
    }
    i = j;
  }
  return out;
}

Status ExtractWarcDocument(const WarcRecord& rec, WarcDocument* out, WarcSkip* skip) {
  *skip = WarcSkip::kNone;
  out->id = rec.Header("WARC-Record-ID");
  out->url = rec.Header("WARC-Target-URI");
  // WARC 1.0's grammar wrote WARC-Target-URI in angle brackets; 1.1 does not.
  if (out->url.size() >= 2 && out->url.front() == '<' && out->url.back() == '>') {
    out->url = out->url.substr(1, out->url.size() - 2);
  }
  out->date = rec.Header("WARC-Date");
  out->truncated = rec.FindHeader("WARC-Truncated") != nullptr;
  out->text.clear();
  auto bad = [&](const std::string& what) {
    return Status::BadInput("record " + (out->id.empty() ? std::string("(no WARC-Record-ID)") : out->id) +
                            " at byte " + std::to_string(rec.offset) + ": " + what);
  };

  const std::string type = Lower(rec.Header("WARC-Type"));
  if (type != "response" && type != "resource" && type != "conversion") {
    *skip = WarcSkip::kRecordType;
    return Status::Ok();
  }
  if (rec.block_omitted) {
    *skip = WarcSkip::kTooLarge;
    return Status::Ok();
  }
  const std::string* warc_type = rec.FindHeader("Content-Type");
  MediaType media;
  std::string_view payload;
  std::string decoded;
  if (type == "response") {
    const bool http = warc_type ? ParseMediaType(*warc_type).type == "application/http"
                                : rec.block.compare(0, 5, "HTTP/") == 0;
    if (!http) {
      *skip = WarcSkip::kContentType;
      return Status::Ok();
    }
    HttpResponse r;
    if (!ParseHttpResponse(rec.block, &r)) {
      std::string_view first = rec.block;
      first = first.substr(0, first.find('\n'));
      return bad("malformed HTTP response: no status line (found " + QuoteForMessage(first) + ")");
    }
    if (r.status != 200) {
      *skip = WarcSkip::kHttpStatus;
      return Status::Ok();
    }
    if (!r.header_complete) {
      if (!out->truncated) {
        return bad("malformed HTTP response: the header section has no end (no empty line)");
      }
      r.body = std::string_view();
    }
    media = ParseMediaType(FieldValue(r, "Content-Type", false));
    const std::string te = FieldValue(r, "Transfer-Encoding", true);
    const std::string ce = FieldValue(r, "Content-Encoding", true);
    std::vector<std::string> codings = ParseCodings(ce);
    for (auto& c : ParseCodings(te)) codings.push_back(std::move(c));
    bool supported = true;
    for (const auto& c : codings) {
      supported = supported && (c == "chunked" || c == "gzip" || c == "x-gzip" || c == "identity");
    }
    const bool text_type = media.type == "text/html" || media.type == "application/xhtml+xml" ||
                           media.type == "text/plain";
    if (!text_type || !supported) {
      *skip = WarcSkip::kContentType;
      return Status::Ok();
    }
    payload = r.body;
    // Codings are undone in the reverse order of their application: transfer
    // codings (applied last) first, each list from its end (RFC 9110 §8.4, RFC 9112 §6.1).
    for (size_t k = codings.size(); k-- > 0;) {
      const std::string& c = codings[k];
      if (c == "identity") continue;
      std::string next;
      bool cut = false;
      const std::string err = c == "chunked" ? Dechunk(payload, &next, &cut)
                                             : Gunzip(payload, &next, &cut);
      if (!err.empty()) return bad((c == "chunked" ? "chunked body: " : c + " body: ") + err);
      if (cut) out->truncated = true;
      decoded = std::move(next);
      payload = decoded;
    }
  } else {
    media = warc_type ? ParseMediaType(*warc_type) : MediaType();
    payload = rec.block;
  }
  const bool html = media.type == "text/html" || media.type == "application/xhtml+xml";
  if (!html && media.type != "text/plain") {
    *skip = WarcSkip::kContentType;
    return Status::Ok();
  }
  if (payload.size() > kMaxDecodedBodyBytes) {
    payload = payload.substr(0, kMaxDecodedBodyBytes);
    out->truncated = true;
  }
  std::string utf8;
  // WHATWG Encoding Standard, "decode": a UTF-8 byte order mark wins over the label.
  if (payload.substr(0, 3) == "\xEF\xBB\xBF") {
    utf8 = ToValidUtf8(payload.substr(3));
  } else if (IsWindows1252Label(media.charset)) {
    utf8 = Windows1252ToUtf8(payload);
  } else {
    utf8 = ToValidUtf8(payload);
  }
  out->text = html ? HtmlToText(utf8) : std::move(utf8);
  if (!HasText(out->text)) {
    out->text.clear();
    *skip = WarcSkip::kNoText;
  }
  return Status::Ok();
}

}  // namespace shingleton
