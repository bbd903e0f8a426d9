// WarcReader and ExtractWarcDocument against outside references:
//  - the WARC 1.1 specification (ISO 28500, iipc/warc-specifications): record
//    framing (§4), named fields (§5), record types (§6), the record-at-a-time
//    gzip convention (annex D), and the annex example of a `response` record —
//    reproduced from memory, so its structure is the spec's but the byte counts
//    are computed here;
//  - RFC 9112 (HTTP/1.1 message syntax: status line, fields, chunked coding),
//    RFC 9110 (content codings, media types), RFC 1952 (gzip);
//  - the WHATWG Encoding Standard (windows-1252 labels and index; UTF-8 decoding
//    with U+FFFD) and the Unicode Standard §3.9 (maximal subparts);
//  - files and expected values made in the test by standard tools: the gzip and
//    zstd command-line tools, and Python's gzip module and codecs (/usr/bin/python3).
#include "index/warc_reader.h"

#include <gtest/gtest.h>

#include <cstdio>
#include <cstdlib>
#include <random>
#include <string>
#include <utility>
#include <vector>

#include "index/normalizer.h"
#include "index/warc_record.h"
#include "tests/test_util.h"

namespace shingleton {
namespace {

using testing::ReadFile;
using testing::TempDir;
using testing::WriteFile;

using Fields = std::vector<std::pair<std::string, std::string>>;

void Shell(const std::string& cmd) { ASSERT_EQ(std::system(cmd.c_str()), 0) << cmd; }

// A record by WARC 1.1 §4: version CRLF, fields "Name: value" CRLF, CRLF, block,
// CRLF CRLF. Content-Length (the block's size) is added last unless given.
std::string Record(const std::string& version, const Fields& fields, const std::string& block,
                   bool add_length = true) {
  std::string r = version + "\r\n";
  for (const auto& [n, v] : fields) r += n + ": " + v + "\r\n";
  if (add_length) r += "Content-Length: " + std::to_string(block.size()) + "\r\n";
  return r + "\r\n" + block + "\r\n\r\n";
}

std::string Uuid(int i) {
  char buf[64];
  std::snprintf(buf, sizeof(buf), "<urn:uuid:00000000-0000-4000-8000-%012d>", i);
  return buf;
}

// An HTTP/1.1 response message (RFC 9112 §2.1) with CRLF line ends.
std::string Http(const std::string& status_line, const Fields& fields, const std::string& body) {
  std::string m = status_line + "\r\n";
  for (const auto& [n, v] : fields) m += n + ": " + v + "\r\n";
  return m + "\r\n" + body;
}

std::string ResponseRecord(int id, const std::string& url, const std::string& http,
                           const std::string& version = "WARC/1.1", Fields extra = {}) {
  Fields f = {{"WARC-Type", "response"},
              {"WARC-Target-URI", url},
              {"WARC-Date", "2024-05-01T12:00:00Z"},
              {"WARC-Record-ID", Uuid(id)},
              {"Content-Type", "application/http;msgtype=response"}};
  for (auto& e : extra) f.push_back(std::move(e));
  return Record(version, f, http);
}

struct Parsed {
  std::vector<WarcRecord> records;
  Status status;
};

Parsed ReadAll(const std::string& path, WarcReader::Options options = {}) {
  Parsed p;
  WarcReader reader(options);
  p.status = reader.Open(path);
  if (!p.status.ok()) return p;
  WarcRecord rec;
  while (reader.Next(&rec)) p.records.push_back(rec);
  p.status = reader.status();
  EXPECT_FALSE(reader.Next(&rec));  // stays at the end / failed
  return p;
}

// WARC 1.1 annex (informative examples): a `response` record for an image,
// fields in the order shown there (from memory). The example's
// "Content-Length: 1902" is also from memory and does not match the HTTP header
// as reconstructed here (250 bytes + 1662 payload bytes), so the length is computed.
TEST(WarcReaderTest, SpecAnnexResponseExampleFieldByField) {
  TempDir dir;
  const std::string payload(1662, '\xFF');  // stands for "[image/jpeg binary data here]"
  const std::string http =
      "HTTP/1.1 200 OK\r\n"
      "Date: Tue, 19 Sep 2016 17:18:40 GMT\r\n"
      "Server: Apache/2.0.54 (Ubuntu)\r\n"
      "Last-Modified: Mon, 16 Jun 2003 22:28:51 GMT\r\n"
      "ETag: \"3e45-67e-2ed02ec0\"\r\n"
      "Accept-Ranges: bytes\r\n"
      "Content-Length: 1662\r\n"
      "Connection: close\r\n"
      "Content-Type: image/jpeg\r\n"
      "\r\n" +
      payload;
  const std::string record =
      "WARC/1.1\r\n"
      "WARC-Type: response\r\n"
      "WARC-Target-URI: http://www.archive.org/images/logoc.jpg\r\n"
      "WARC-Date: 2016-09-19T17:20:24Z\r\n"
      "WARC-Payload-Digest: sha1:UZY6ND6CCHXETFVJD2MSS7ZENMWF7KQ2\r\n"
      "WARC-IP-Address: 207.241.233.58\r\n"
      "WARC-Record-ID: <urn:uuid:92283950-ef2f-4d72-b224-f54c6ec90bb0>\r\n"
      "Content-Type: application/http;msgtype=response\r\n"
      "WARC-Identified-Payload-Type: image/jpeg\r\n"
      "Content-Length: " +
      std::to_string(http.size()) + "\r\n\r\n" + http + "\r\n\r\n";
  ASSERT_EQ(http.size(), 1912u);
  WriteFile(dir.File("annex.warc"), record);
  Parsed p = ReadAll(dir.File("annex.warc"));
  ASSERT_TRUE(p.status.ok()) << p.status.ToString();
  ASSERT_EQ(p.records.size(), 1u);
  const WarcRecord& r = p.records[0];
  EXPECT_EQ(r.version, "WARC/1.1");
  EXPECT_EQ(r.offset, 0u);
  const Fields expected = {
      {"WARC-Type", "response"},
      {"WARC-Target-URI", "http://www.archive.org/images/logoc.jpg"},
      {"WARC-Date", "2016-09-19T17:20:24Z"},
      {"WARC-Payload-Digest", "sha1:UZY6ND6CCHXETFVJD2MSS7ZENMWF7KQ2"},
      {"WARC-IP-Address", "207.241.233.58"},
      {"WARC-Record-ID", "<urn:uuid:92283950-ef2f-4d72-b224-f54c6ec90bb0>"},
      {"Content-Type", "application/http;msgtype=response"},
      {"WARC-Identified-Payload-Type", "image/jpeg"},
      {"Content-Length", "1912"}};
  EXPECT_EQ(r.headers, expected);
  EXPECT_EQ(r.content_length, 1912u);
  EXPECT_EQ(r.block, http);
  // WARC 1.1 §5: field names are case-insensitive.
  EXPECT_EQ(r.Header("warc-record-id"), "<urn:uuid:92283950-ef2f-4d72-b224-f54c6ec90bb0>");
  EXPECT_EQ(r.Header("CONTENT-TYPE"), "application/http;msgtype=response");
  EXPECT_EQ(r.Header("WARC-Truncated"), "");
  EXPECT_EQ(r.FindHeader("WARC-Truncated"), nullptr);
  // An image: no document (image/jpeg is not a text type).
  WarcDocument doc;
  WarcSkip skip;
  ASSERT_TRUE(ExtractWarcDocument(r, &doc, &skip).ok());
  EXPECT_EQ(skip, WarcSkip::kContentType);
  EXPECT_EQ(doc.id, "<urn:uuid:92283950-ef2f-4d72-b224-f54c6ec90bb0>");
  EXPECT_EQ(doc.url, "http://www.archive.org/images/logoc.jpg");
  EXPECT_EQ(doc.date, "2016-09-19T17:20:24Z");
}

// A file of several record types (WARC 1.1 §6), built by §4's framing.
std::vector<std::string> SampleRecords() {
  std::vector<std::string> r;
  r.push_back(Record("WARC/1.1",
                     {{"WARC-Type", "warcinfo"},
                      {"WARC-Date", "2024-05-01T12:00:00Z"},
                      {"WARC-Record-ID", Uuid(1)},
                      {"Content-Type", "application/warc-fields"}},
                     "software: shingleton-test\r\nformat: WARC File Format 1.1\r\n"));
  r.push_back(Record("WARC/1.1",
                     {{"WARC-Type", "request"},
                      {"WARC-Target-URI", "http://example.com/"},
                      {"WARC-Date", "2024-05-01T12:00:01Z"},
                      {"WARC-Record-ID", Uuid(2)},
                      {"Content-Type", "application/http;msgtype=request"}},
                     "GET / HTTP/1.1\r\nHost: example.com\r\n\r\n"));
  r.push_back(ResponseRecord(
      3, "http://example.com/",
      Http("HTTP/1.1 200 OK", {{"Content-Type", "text/html; charset=utf-8"}},
           "<html><head><title>T</title></head><body><p>Hello</p><p>World</p></body></html>")));
  // A block containing what looks like record framing: only Content-Length counts.
  r.push_back(Record("WARC/1.1",
                     {{"WARC-Type", "resource"},
                      {"WARC-Target-URI", "urn:x-test:tricky"},
                      {"WARC-Record-ID", Uuid(4)},
                      {"Content-Type", "application/octet-stream"}},
                     "\r\n\r\nWARC/1.1\r\nContent-Length: 5\r\n\r\n" + std::string(1, '\0') +
                         "\xff\r\n"));
  // §4: a field value may continue on lines starting with SP or HT.
  r.push_back("WARC/1.1\r\n"
              "WARC-Type: metadata\r\n"
              "WARC-Record-ID: " + Uuid(5) + "\r\n"
              "WARC-Concurrent-To: " + Uuid(3) + "\r\n"
              "X-Folded: first part\r\n"
              "   second part\r\n"
              "\tthird part\r\n"
              "Content-Type: application/warc-fields\r\n"
              "Content-Length: 11\r\n"
              "\r\n"
              "via: test\r\n"
              "\r\n\r\n");
  // An empty block (§5.6 Content-Length: 0), as in a revisit record.
  r.push_back(Record("WARC/1.1",
                     {{"WARC-Type", "revisit"},
                      {"WARC-Target-URI", "http://example.com/"},
                      {"WARC-Record-ID", Uuid(6)},
                      {"WARC-Profile", "http://netpreserve.org/warc/1.1/revisit/identical-payload-digest"}},
                     ""));
  r.push_back(Record("WARC/1.1",
                     {{"WARC-Type", "resource"},
                      {"WARC-Target-URI", "urn:x-test:note"},
                      {"WARC-Record-ID", Uuid(7)},
                      {"Content-Type", "text/plain"}},
                     "A plain note.\nSecond line.\n"));
  return r;
}

void ExpectSampleRecords(const Parsed& p, const std::vector<std::string>& raw) {
  ASSERT_TRUE(p.status.ok()) << p.status.ToString();
  ASSERT_EQ(p.records.size(), raw.size());
  uint64_t offset = 0;
  for (size_t i = 0; i < raw.size(); ++i) {
    const WarcRecord& r = p.records[i];
    EXPECT_EQ(r.offset, offset) << i;  // uncompressed offsets: sums of record sizes
    offset += raw[i].size();
    EXPECT_EQ(r.version, "WARC/1.1");
    EXPECT_EQ(r.Header("WARC-Record-ID"), Uuid(static_cast<int>(i) + 1));
    // The block is the bytes between the header's CRLF CRLF and the closing CRLF CRLF.
    const size_t start = raw[i].find("\r\n\r\n") + 4;
    EXPECT_EQ(r.block, raw[i].substr(start, raw[i].size() - start - 4)) << i;
    EXPECT_EQ(r.content_length, r.block.size());
    EXPECT_FALSE(r.block_omitted);
  }
  EXPECT_EQ(p.records[4].Header("X-Folded"), "first part second part third part");
  EXPECT_EQ(p.records[4].headers.size(), 6u);
  EXPECT_EQ(p.records[3].block.size(), 39u);  // 35 framing-like bytes, NUL, 0xFF, CRLF
}

TEST(WarcReaderTest, MultiRecordPlainFile) {
  TempDir dir;
  const auto raw = SampleRecords();
  std::string all;
  for (const auto& r : raw) all += r;
  WriteFile(dir.File("a.warc"), all);
  ExpectSampleRecords(ReadAll(dir.File("a.warc")), raw);
  WarcReader reader;
  ASSERT_TRUE(reader.Open(dir.File("a.warc")).ok());
  EXPECT_EQ(reader.compression(), Compression::kNone);
  WarcRecord rec;
  for (int i = 0; i < 3; ++i) ASSERT_TRUE(reader.Next(&rec));
  EXPECT_EQ(reader.record_offset(), raw[0].size() + raw[1].size());
}

// WARC 1.1 annex D: record-at-a-time compression — each record its own gzip
// member, the members concatenated. Made with Python's gzip module and with the
// gzip tool; also one zstd frame per record made with the zstd tool.
TEST(WarcReaderTest, RecordAtATimeGzipAndZstd) {
  TempDir dir;
  const auto raw = SampleRecords();
  std::string files;
  for (size_t i = 0; i < raw.size(); ++i) {
    const std::string f = dir.File("rec" + std::to_string(i));
    WriteFile(f, raw[i]);
    files += " " + f;
  }
  WriteFile(dir.File("pack.py"),
            "import gzip, sys\n"
            "with open(sys.argv[1], 'wb') as out:\n"
            "    for name in sys.argv[2:]:\n"
            "        out.write(gzip.compress(open(name, 'rb').read()))\n");
  Shell("/usr/bin/python3 " + dir.File("pack.py") + " " + dir.File("py.warc.gz") + files);
  for (size_t i = 0; i < raw.size(); ++i) {
    const std::string f = dir.File("rec" + std::to_string(i));
    Shell("gzip -n -c " + f + " >> " + dir.File("tool.warc.gz"));
    Shell("zstd -q -c " + f + " >> " + dir.File("tool.warc.zst"));
  }
  for (const char* name : {"py.warc.gz", "tool.warc.gz", "tool.warc.zst"}) {
    SCOPED_TRACE(name);
    ExpectSampleRecords(ReadAll(dir.File(name)), raw);
    WarcReader reader;
    ASSERT_TRUE(reader.Open(dir.File(name)).ok());
    EXPECT_NE(reader.compression(), Compression::kNone);
    WarcRecord rec;
    while (reader.Next(&rec)) {
    }
    EXPECT_TRUE(reader.status().ok());
    EXPECT_EQ(reader.raw_offset(), ReadFile(dir.File(name)).size());
  }
}

TEST(WarcReaderTest, AcceptsWarc10AndLooksLikeWarc) {
  TempDir dir;
  const std::string r10 = ResponseRecord(
      1, "<http://example.org/old>",
      Http("HTTP/1.0 200 OK", {{"Content-Type", "text/html"}}, "<p>old format</p>"), "WARC/1.0");
  WriteFile(dir.File("old.warc"), r10);
  Parsed p = ReadAll(dir.File("old.warc"));
  ASSERT_TRUE(p.status.ok()) << p.status.ToString();
  ASSERT_EQ(p.records.size(), 1u);
  EXPECT_EQ(p.records[0].version, "WARC/1.0");
  WarcDocument doc;
  WarcSkip skip;
  ASSERT_TRUE(ExtractWarcDocument(p.records[0], &doc, &skip).ok());
  EXPECT_EQ(skip, WarcSkip::kNone);
  EXPECT_EQ(doc.url, "http://example.org/old");  // WARC 1.0's <uri> form, brackets removed
  EXPECT_EQ(doc.text, "old format");

  EXPECT_TRUE(LooksLikeWarc("WARC/1.1\r\n"));
  EXPECT_TRUE(LooksLikeWarc("WARC/1.0\r\nWARC-Type: x"));
  EXPECT_FALSE(LooksLikeWarc("{\"id\": 1}"));
  EXPECT_FALSE(LooksLikeWarc("WARC/"));
  EXPECT_FALSE(LooksLikeWarc(""));
  Shell("gzip -k -n " + dir.File("old.warc"));
  WriteFile(dir.File("a.jsonl"), "{\"id\": \"1\", \"text\": \"x\"}\n");
  EXPECT_TRUE(FileLooksLikeWarc(dir.File("old.warc")).value());
  EXPECT_TRUE(FileLooksLikeWarc(dir.File("old.warc.gz")).value());
  EXPECT_FALSE(FileLooksLikeWarc(dir.File("a.jsonl")).value());
  EXPECT_FALSE(FileLooksLikeWarc(dir.File("missing")).ok());
}

// Errors: BadInput naming the file, the byte offset and the record.
class WarcErrorTest : public ::testing::Test {
 protected:
  Status ReadError(const std::string& bytes, size_t* records_before = nullptr) {
    WriteFile(dir_.File("bad.warc"), bytes);
    Parsed p = ReadAll(dir_.File("bad.warc"));
    if (records_before) *records_before = p.records.size();
    EXPECT_FALSE(p.status.ok());
    EXPECT_EQ(p.status.code(), Status::Code::kBadInput) << p.status.ToString();
    return p.status;
  }
  std::string path() const { return dir_.File("bad.warc"); }
  TempDir dir_;
};

TEST_F(WarcErrorTest, TruncatedInsideBlock) {
  const auto raw = SampleRecords();
  const std::string all = raw[0] + raw[1] + raw[2];
  const size_t start2 = raw[0].size() + raw[1].size();
  const size_t block_at = start2 + raw[2].find("\r\n\r\n") + 4;
  const size_t cut = block_at + 20;
  size_t before = 0;
  Status s = ReadError(all.substr(0, cut), &before);
  EXPECT_EQ(before, 2u);
  const size_t cl = raw[2].size() - (block_at - start2) - 4;
  EXPECT_EQ(s.message(), path() + ": byte " + std::to_string(cut) +
                             ": block runs past the end of the file (Content-Length " +
                             std::to_string(cl) + ", only 20 bytes left); record " + Uuid(3) +
                             " starting at byte " + std::to_string(start2));
}

TEST_F(WarcErrorTest, ContentLengthPastTheEnd) {
  const std::string block = "only a few bytes";
  const std::string r = "WARC/1.1\r\nWARC-Type: resource\r\nWARC-Record-ID: " + Uuid(9) +
                        "\r\nContent-Length: 1000\r\n\r\n" + block + "\r\n\r\n";
  Status s = ReadError(r);
  EXPECT_NE(s.message().find(path() + ": byte " + std::to_string(r.size()) +
                             ": block runs past the end of the file (Content-Length 1000, only " +
                             std::to_string(block.size() + 4) + " bytes left)"),
            std::string::npos)
      << s.message();
  EXPECT_NE(s.message().find(Uuid(9)), std::string::npos);
  // A length far above the block limit is skipped over, not allocated, and is
  // still reported as running past the end.
  const std::string huge = "WARC/1.1\r\nWARC-Record-ID: " + Uuid(10) +
                           "\r\nContent-Length: 999999999999\r\n\r\nabc";
  Status h = ReadError(huge);
  EXPECT_NE(h.message().find("Content-Length 999999999999, only 3 bytes left"), std::string::npos)
      << h.message();
}

TEST_F(WarcErrorTest, BadHeaderLines) {
  const std::string head = "WARC/1.1\r\nWARC-Type: resource\r\nWARC-Record-ID: " + Uuid(11) + "\r\n";
  // §5: a named field is "Name: value"; the line offset is computed by definition.
  Status s = ReadError(head + "This is not a field\r\nContent-Length: 0\r\n\r\n\r\n\r\n");
  EXPECT_EQ(s.message(), path() + ": byte " + std::to_string(head.size()) +
                             ": bad header line: not a \"Name: value\" field: \"This is not a "
                             "field\"; record " + Uuid(11) + " starting at byte 0");
  // A field name is a token: no spaces or separators.
  s = ReadError(head + "Bad Name: x\r\nContent-Length: 0\r\n\r\n\r\n\r\n");
  EXPECT_NE(s.message().find("byte " + std::to_string(head.size()) +
                             ": bad header line: field name is not a token"),
            std::string::npos)
      << s.message();
  // §4: lines end with CRLF, not a bare LF.
  s = ReadError("WARC/1.1\nWARC-Type: resource\n\n");
  EXPECT_NE(s.message().find(path() + ": byte 0: header line does not end with CRLF"),
            std::string::npos)
      << s.message();
  // A continuation line before any field.
  s = ReadError("WARC/1.1\r\n  folded\r\n\r\n");
  EXPECT_NE(s.message().find("byte 10: bad header line: continuation line before any field"),
            std::string::npos)
      << s.message();
}

TEST_F(WarcErrorTest, ContentLengthMissingOrInvalid) {
  const std::string head = "WARC/1.1\r\nWARC-Record-ID: " + Uuid(12) + "\r\n";
  Status s = ReadError(head + "\r\nabc\r\n\r\n");
  EXPECT_NE(s.message().find("missing Content-Length field; record " + Uuid(12)),
            std::string::npos)
      << s.message();
  for (const char* bad : {"12a", "-1", "", "1 2", "0x10", "99999999999999999999"}) {
    s = ReadError(head + "Content-Length: " + bad + "\r\n\r\n\r\n\r\n");
    EXPECT_NE(s.message().find("invalid Content-Length"), std::string::npos)
        << bad << ": " << s.message();
  }
}

TEST_F(WarcErrorTest, MissingCrLfCrLfAfterBlock) {
  const auto raw = SampleRecords();
  // The block is one byte longer than Content-Length says.
  const std::string r = "WARC/1.1\r\nWARC-Record-ID: " + Uuid(13) +
                        "\r\nContent-Length: 3\r\n\r\nabcd\r\n\r\n";
  size_t before = 0;
  Status s = ReadError(raw[0] + r + raw[1], &before);
  EXPECT_EQ(before, 1u);
  const size_t at = raw[0].size() + r.find("abcd") + 3;
  EXPECT_NE(s.message().find(path() + ": byte " + std::to_string(at) +
                             ": missing CRLF CRLF after the block (Content-Length 3), found "
                             "\"d\\x0d\\x0a\\x0d\""),
            std::string::npos)
      << s.message();
  // The file ends right after the block.
  s = ReadError("WARC/1.1\r\nWARC-Record-ID: " + Uuid(14) + "\r\nContent-Length: 3\r\n\r\nabc\r\n");
  EXPECT_NE(s.message().find("without the CRLF CRLF that ends a record; record " + Uuid(14)),
            std::string::npos)
      << s.message();
}

TEST_F(WarcErrorTest, NotWarcOrTruncatedHeader) {
  Status s = ReadError("{\"id\": \"1\", \"text\": \"json\"}\n");
  EXPECT_NE(s.message().find(path() + ": byte 0: expected a WARC version line"), std::string::npos)
      << s.message();
  s = ReadError("HTTP/1.1 200 OK\r\n\r\n");
  EXPECT_EQ(s.message(), path() + ": byte 0: expected a WARC version line (\"WARC/1.1\"), found "
                                  "\"HTTP/1.1 200 OK\"; record starting at byte 0");
  s = ReadError("WARC/0.18\r\nContent-Length: 0\r\n\r\n\r\n\r\n");
  EXPECT_NE(s.message().find("unsupported WARC version \"WARC/0.18\""), std::string::npos);
  s = ReadError("WARC/1.1\r\nWARC-Type: resource\r\nContent-Le");
  EXPECT_NE(s.message().find("file ends inside the WARC header"), std::string::npos)
      << s.message();
}

// A record-at-a-time .warc.gz whose last member is cut: the ByteStream's error
// (file, compressed offset, member start) with the record named after it.
TEST_F(WarcErrorTest, TruncatedGzipMember) {
  auto raw = SampleRecords();
  std::mt19937 rng(5);
  std::string payload(200000, ' ');
  for (char& c : payload) c = static_cast<char>('a' + rng() % 26);
  raw.push_back(Record("WARC/1.1", {{"WARC-Type", "resource"}, {"WARC-Record-ID", Uuid(99)}},
                       payload));
  std::string gz;
  size_t last_member = 0;
  uint64_t last_record = 0;
  for (size_t i = 0; i < raw.size(); ++i) {
    const std::string f = dir_.File("r" + std::to_string(i));
    WriteFile(f, raw[i]);
    Shell("gzip -n -c " + f + " > " + f + ".gz");
    last_member = gz.size();
    gz += ReadFile(f + ".gz");
    if (i + 1 < raw.size()) last_record += raw[i].size();
  }
  // The last member cut in half: its record's header survives, its block does not.
  const size_t cut = last_member + (gz.size() - last_member) / 2;
  WriteFile(dir_.File("cut.warc.gz"), gz.substr(0, cut));
  Parsed p = ReadAll(dir_.File("cut.warc.gz"));
  EXPECT_EQ(p.records.size(), raw.size() - 1);
  ASSERT_FALSE(p.status.ok());
  EXPECT_EQ(p.status.code(), Status::Code::kBadInput);
  EXPECT_EQ(p.status.message(),
            dir_.File("cut.warc.gz") + ": truncated gzip stream at byte " + std::to_string(cut) +
                " (member starting at byte " + std::to_string(last_member) +
                "); while reading the record " + Uuid(99) + " starting at uncompressed byte " +
                std::to_string(last_record));
}

// Fuzz-style: cut and corrupted files never crash; the reader ends with records
// or with an error naming the file.
TEST_F(WarcErrorTest, DamagedFilesNeverCrash) {
  const auto raw = SampleRecords();
  std::string all;
  for (const auto& r : raw) all += r;
  WriteFile(dir_.File("all.warc"), all);
  Shell("gzip -k -n " + dir_.File("all.warc"));
  const std::string gz = ReadFile(dir_.File("all.warc.gz"));
  std::mt19937 rng(7);
  for (int iter = 0; iter < 300; ++iter) {
    std::string bytes = (iter % 2 ? gz : all);
    if (iter % 3 == 0) {
      bytes = bytes.substr(0, rng() % bytes.size());
    } else {
      for (int k = 0; k < 1 + static_cast<int>(rng() % 4); ++k) {
        bytes[rng() % bytes.size()] = static_cast<char>(rng() & 0xFF);
      }
    }
    const std::string f = dir_.File("f" + std::to_string(iter % 2) + ".warc");
    WriteFile(f, bytes);
    Parsed p = ReadAll(f);
    if (!p.status.ok()) {
      EXPECT_EQ(p.status.message().rfind(f + ": ", 0), 0u) << p.status.message();
    }
    for (const auto& r : p.records) {
      WarcDocument doc;
      WarcSkip skip;
      Status s = ExtractWarcDocument(r, &doc, &skip);
      if (s.ok()) {
        EXPECT_TRUE(ValidateUtf8(doc.text).ok());
      }
    }
  }
}

// ---------------------------------------------------------------------------
// ExtractWarcDocument

WarcRecord MakeRecord(const std::string& type, const std::string& content_type,
                      const std::string& block, Fields extra = {}) {
  WarcRecord r;
  r.version = "WARC/1.1";
  r.headers = {{"WARC-Type", type},
               {"WARC-Target-URI", "http://example.com/page"},
               {"WARC-Date", "2024-05-01T12:00:00Z"},
               {"WARC-Record-ID", Uuid(42)}};
  if (!content_type.empty()) r.headers.emplace_back("Content-Type", content_type);
  for (auto& e : extra) r.headers.push_back(std::move(e));
  r.headers.emplace_back("Content-Length", std::to_string(block.size()));
  r.block = block;
  r.content_length = block.size();
  r.offset = 1234;
  return r;
}

WarcRecord HttpRecord(const std::string& http, Fields extra = {}) {
  return MakeRecord("response", "application/http; msgtype=response", http, std::move(extra));
}

struct Extracted {
  Status status;
  WarcDocument doc;
  WarcSkip skip = WarcSkip::kNone;
};

Extracted Extract(const WarcRecord& r) {
  Extracted e;
  e.status = ExtractWarcDocument(r, &e.doc, &e.skip);
  return e;
}

// Compresses `data` with Python's gzip module (RFC 1952).
std::string PythonGzip(const std::string& data) {
  TempDir dir;
  WriteFile(dir.File("in"), data);
  Shell("/usr/bin/python3 -c \"import gzip,sys; open(sys.argv[2],'wb').write(gzip.compress("
        "open(sys.argv[1],'rb').read()))\" " + dir.File("in") + " " + dir.File("out"));
  return ReadFile(dir.File("out"));
}

// RFC 9112 §7.1: chunk = chunk-size [ chunk-ext ] CRLF chunk-data CRLF;
// last-chunk = 1*"0" [ chunk-ext ] CRLF; then trailer fields and CRLF.
std::string Chunked(const std::vector<std::string>& chunks) {
  std::string out;
  char size[32];
  for (size_t i = 0; i < chunks.size(); ++i) {
    std::snprintf(size, sizeof(size), "%zx", chunks[i].size());
    out += size;
    if (i == 0) out += ";name=value";  // a chunk extension, ignored
    out += "\r\n" + chunks[i] + "\r\n";
  }
  return out + "0\r\nX-Trailer: ignored\r\n\r\n";
}

TEST(ExtractWarcDocumentTest, HtmlResponse) {
  Extracted e = Extract(HttpRecord(Http(
      "HTTP/1.1 200 OK", {{"Content-Type", "text/html; charset=UTF-8"}, {"Content-Length", "68"}},
      "<html><head><title>T</title><script>x()</script></head><body><h1>Head</h1>"
      "<p>Caf&eacute; &amp; more</p></body></html>")));
  ASSERT_TRUE(e.status.ok()) << e.status.ToString();
  EXPECT_EQ(e.skip, WarcSkip::kNone);
  EXPECT_EQ(e.doc.id, Uuid(42));
  EXPECT_EQ(e.doc.url, "http://example.com/page");
  EXPECT_EQ(e.doc.date, "2024-05-01T12:00:00Z");
  EXPECT_EQ(e.doc.text, "Head\nCaf\xC3\xA9 & more");
  EXPECT_FALSE(e.doc.truncated);
  // application/xhtml+xml is HTML too; a media type is case-insensitive (RFC 9110 §8.3.1).
  e = Extract(HttpRecord(Http("HTTP/1.1 200 OK", {{"Content-Type", "Application/XHTML+XML"}},
                              "<p>x</p>")));
  EXPECT_EQ(e.skip, WarcSkip::kNone);
  EXPECT_EQ(e.doc.text, "x");
  // text/plain is taken as is.
  e = Extract(HttpRecord(Http("HTTP/1.1 200 OK", {{"Content-Type", "text/plain"}},
                              "line one\n  <b>not markup</b>\n")));
  EXPECT_EQ(e.skip, WarcSkip::kNone);
  EXPECT_EQ(e.doc.text, "line one\n  <b>not markup</b>\n");
}

// RFC 9112 §7.1 chunked coding, decoded; a UTF-8 character split across chunks
// comes back whole.
TEST(ExtractWarcDocumentTest, ChunkedBody) {
  const std::string body = Chunked({"<p>caf\xC3", "\xA9 au lait</p>", std::string(300, 'z')});
  Extracted e = Extract(HttpRecord(Http(
      "HTTP/1.1 200 OK", {{"Transfer-Encoding", "chunked"}, {"Content-Type", "text/html"}}, body)));
  ASSERT_TRUE(e.status.ok()) << e.status.ToString();
  EXPECT_EQ(e.doc.text, "caf\xC3\xA9 au lait\n" + std::string(300, 'z'));  // </p> ends a line
  EXPECT_FALSE(e.doc.truncated);
  // Cut inside a chunk (the crawler stopped, WARC-Truncated: length): the prefix.
  e = Extract(HttpRecord(Http("HTTP/1.1 200 OK",
                              {{"Transfer-Encoding", "chunked"}, {"Content-Type", "text/plain"}},
                              body.substr(0, 30)),
                         {{"WARC-Truncated", "length"}}));
  ASSERT_TRUE(e.status.ok()) << e.status.ToString();
  // 30 bytes = "7;name=value" CRLF (14) + 7 data bytes + CRLF (2) + "e" CRLF (3) + 4
  // data bytes of the second chunk.
  EXPECT_EQ(e.doc.text, "<p>caf\xC3\xA9 au");
  EXPECT_TRUE(e.doc.truncated);
  // A chunk-size line that is not hexadecimal is malformed.
  e = Extract(HttpRecord(Http("HTTP/1.1 200 OK",
                              {{"Transfer-Encoding", "chunked"}, {"Content-Type", "text/html"}},
                              "zz\r\nabc\r\n0\r\n\r\n")));
  EXPECT_EQ(e.status.code(), Status::Code::kBadInput);
  EXPECT_NE(e.status.message().find("record " + Uuid(42) + " at byte 1234: chunked body: bad "
                                    "chunk-size line \"zz\""),
            std::string::npos)
      << e.status.message();
}

// Content-Encoding gzip (RFC 9110 §8.4.1.3; x-gzip is its alias), made with
// Python's gzip module; also under chunked transfer coding.
TEST(ExtractWarcDocumentTest, GzipBody) {
  const std::string html = "<html><body><p>compressed page</p><p>" + std::string(2000, 'w') +
                           "</p></body></html>";
  const std::string gz = PythonGzip(html);
  const std::string expected = "compressed page\n" + std::string(2000, 'w');
  for (const char* coding : {"gzip", "x-gzip", "GZIP"}) {
    Extracted e = Extract(HttpRecord(Http(
        "HTTP/1.1 200 OK", {{"Content-Encoding", coding}, {"Content-Type", "text/html"}}, gz)));
    ASSERT_TRUE(e.status.ok()) << e.status.ToString();
    EXPECT_EQ(e.skip, WarcSkip::kNone) << coding;
    EXPECT_EQ(e.doc.text, expected) << coding;
  }
  Extracted e = Extract(HttpRecord(
      Http("HTTP/1.1 200 OK",
           {{"Content-Type", "text/html"}, {"Content-Encoding", "gzip"},
            {"Transfer-Encoding", "chunked"}},
           Chunked({gz.substr(0, 10), gz.substr(10, 25), gz.substr(35)}))));
  ASSERT_TRUE(e.status.ok()) << e.status.ToString();
  EXPECT_EQ(e.doc.text, expected);
  // Cut gzip data: the decoded prefix, marked truncated.
  e = Extract(HttpRecord(Http("HTTP/1.1 200 OK",
                              {{"Content-Encoding", "gzip"}, {"Content-Type", "text/plain"}},
                              PythonGzip(std::string(100000, 'q')).substr(0, 60))));
  ASSERT_TRUE(e.status.ok()) << e.status.ToString();
  EXPECT_TRUE(e.doc.truncated);
  EXPECT_EQ(e.doc.text.find_first_not_of('q'), std::string::npos);
  // Not gzip at all: malformed, naming the record.
  e = Extract(HttpRecord(Http("HTTP/1.1 200 OK",
                              {{"Content-Encoding", "gzip"}, {"Content-Type", "text/html"}},
                              "<p>plain, not gzip</p>")));
  EXPECT_EQ(e.status.code(), Status::Code::kBadInput);
  EXPECT_NE(e.status.message().find(Uuid(42)), std::string::npos);
  // Other content codings are not decoded: skipped.
  for (const char* coding : {"br", "deflate", "compress", "zstd", "gzip, br"}) {
    e = Extract(HttpRecord(Http(
        "HTTP/1.1 200 OK", {{"Content-Encoding", coding}, {"Content-Type", "text/html"}}, "x")));
    ASSERT_TRUE(e.status.ok());
    EXPECT_EQ(e.skip, WarcSkip::kContentType) << coding;
  }
  // identity is no coding.
  e = Extract(HttpRecord(Http("HTTP/1.1 200 OK",
                              {{"Content-Encoding", "identity"}, {"Content-Type", "text/plain"}},
                              "as is")));
  EXPECT_EQ(e.doc.text, "as is");
}

// WARC 1.1 §6: only response, resource and conversion records carry documents.
TEST(ExtractWarcDocumentTest, RecordTypes) {
  for (const char* type : {"warcinfo", "request", "metadata", "revisit", "continuation"}) {
    Extracted e = Extract(MakeRecord(type, "text/plain", "some text"));
    ASSERT_TRUE(e.status.ok());
    EXPECT_EQ(e.skip, WarcSkip::kRecordType) << type;
  }
  Extracted e = Extract(MakeRecord("resource", "text/plain", "A plain resource.\nLine 2."));
  EXPECT_EQ(e.skip, WarcSkip::kNone);
  EXPECT_EQ(e.doc.text, "A plain resource.\nLine 2.");
  e = Extract(MakeRecord("conversion", "text/plain; charset=utf-8", "Converted text."));
  EXPECT_EQ(e.skip, WarcSkip::kNone);
  EXPECT_EQ(e.doc.text, "Converted text.");
  e = Extract(MakeRecord("resource", "text/html", "<div>res<br>ource</div>"));
  EXPECT_EQ(e.doc.text, "res\nource");
  e = Extract(MakeRecord("resource", "image/png", "\x89PNG\r\n\x1a\n"));
  EXPECT_EQ(e.skip, WarcSkip::kContentType);
  e = Extract(MakeRecord("resource", "", "no content type"));
  EXPECT_EQ(e.skip, WarcSkip::kContentType);
}

TEST(ExtractWarcDocumentTest, HttpStatusAndContentType) {
  // RFC 9110 §15: only 200 (OK) is taken.
  for (const char* status : {"HTTP/1.1 404 Not Found", "HTTP/1.1 301 Moved Permanently",
                             "HTTP/1.1 500 Internal Server Error", "HTTP/1.1 206 Partial Content"}) {
    Extracted e = Extract(HttpRecord(Http(status, {{"Content-Type", "text/html"}}, "<p>x</p>")));
    ASSERT_TRUE(e.status.ok());
    EXPECT_EQ(e.skip, WarcSkip::kHttpStatus) << status;
  }
  for (const char* type : {"image/png", "application/pdf", "text/css", "application/json", ""}) {
    Fields f;
    if (*type) f.emplace_back("Content-Type", type);
    Extracted e = Extract(HttpRecord(Http("HTTP/1.1 200 OK", f, "\x89PNG")));
    ASSERT_TRUE(e.status.ok());
    EXPECT_EQ(e.skip, WarcSkip::kContentType) << type;
  }
  // A response record that is not an HTTP message (Heritrix writes DNS lookups
  // as response records with Content-Type text/dns).
  Extracted e = Extract(MakeRecord("response", "text/dns", "20240501120000\nexample.com. 300 IN A 1.2.3.4"));
  EXPECT_EQ(e.skip, WarcSkip::kContentType);
  // No WARC Content-Type, but the block is an HTTP message: parsed as one.
  e = Extract(MakeRecord("response", "",
                         Http("HTTP/1.1 200 OK", {{"Content-Type", "text/plain"}}, "untyped")));
  EXPECT_EQ(e.skip, WarcSkip::kNone);
  EXPECT_EQ(e.doc.text, "untyped");
}

TEST(ExtractWarcDocumentTest, MalformedHttp) {
  // RFC 9112 §4: a response starts with a status line.
  for (const char* block : {"<html>no status line</html>", "", "HTTP/1.1 OK\r\n\r\nx",
                            "HTTP/x 200 OK\r\n\r\n", "ICY 200 OK\r\n\r\n"}) {
    Extracted e = Extract(HttpRecord(block));
    EXPECT_EQ(e.status.code(), Status::Code::kBadInput) << block;
    EXPECT_NE(e.status.message().find("record " + Uuid(42) + " at byte 1234: malformed HTTP "
                                      "response: no status line"),
              std::string::npos)
        << e.status.message();
  }
  // The header section never ends.
  Extracted e = Extract(HttpRecord("HTTP/1.1 200 OK\r\nContent-Type: text/html\r\n<p>x"));
  EXPECT_EQ(e.status.code(), Status::Code::kBadInput);
  EXPECT_NE(e.status.message().find("header section has no end"), std::string::npos);
}

// RFC 9112 §2.2 (a bare LF ends a line), §5.1 (whitespace before the colon is
// removed), §5.2 (obs-fold becomes SP), §4 (reason phrase may be empty).
TEST(ExtractWarcDocumentTest, HttpLeniencyAllowedByRfc9112) {
  Extracted e = Extract(HttpRecord("HTTP/1.1 200 OK\nContent-Type: text/plain\n\nbare LF"));
  EXPECT_EQ(e.skip, WarcSkip::kNone);
  EXPECT_EQ(e.doc.text, "bare LF");
  e = Extract(HttpRecord("HTTP/1.1 200 \r\nContent-Type : text/html;\r\n charset=iso-8859-1\r\n\r\n"
                         "<p>caf\xE9</p>"));
  EXPECT_EQ(e.skip, WarcSkip::kNone);
  EXPECT_EQ(e.doc.text, "caf\xC3\xA9");
  e = Extract(HttpRecord("HTTP/1.0 200\r\nContent-Type: text/plain\r\n\r\nno reason"));
  EXPECT_EQ(e.doc.text, "no reason");
}

TEST(ExtractWarcDocumentTest, CharsetsAndInvalidUtf8) {
  // WHATWG Encoding Standard: iso-8859-1, latin1, us-ascii are labels of
  // windows-1252, so 0x80 is U+20AC and 0xE9 is U+00E9.
  for (const char* cs : {"iso-8859-1", "ISO-8859-1", "latin1", "windows-1252", "\"cp1252\"",
                         "us-ascii"}) {
    Extracted e = Extract(HttpRecord(Http(
        "HTTP/1.1 200 OK", {{"Content-Type", std::string("text/plain; charset=") + cs}},
        "caf\xE9 \x80 \x93quoted\x94")));
    EXPECT_EQ(e.doc.text, "caf\xC3\xA9 \xE2\x82\xAC \xE2\x80\x9Cquoted\xE2\x80\x9D") << cs;
  }
  // Other or no charset: UTF-8, invalid sequences replaced, never an error.
  Extracted e = Extract(HttpRecord(Http("HTTP/1.1 200 OK", {{"Content-Type", "text/html"}},
                                        "<p>ok \xC3\xA9 bad \xFF\xC3 end</p>")));
  ASSERT_TRUE(e.status.ok());
  EXPECT_EQ(e.doc.text, "ok \xC3\xA9 bad \xEF\xBF\xBD\xEF\xBF\xBD end");
  e = Extract(HttpRecord(Http("HTTP/1.1 200 OK", {{"Content-Type", "text/plain; charset=shift_jis"}},
                              "\x82\xA0")));
  EXPECT_TRUE(ValidateUtf8(e.doc.text).ok());
  // WHATWG "decode": a UTF-8 byte order mark wins over the label and is removed.
  e = Extract(HttpRecord(Http("HTTP/1.1 200 OK", {{"Content-Type", "text/plain; charset=latin1"}},
                              "\xEF\xBB\xBF\xC3\xA9t\xC3\xA9")));
  EXPECT_EQ(e.doc.text, "\xC3\xA9t\xC3\xA9");
}

// The windows-1252 table against Python's cp1252 codec (generated from the
// Unicode consortium's CP1252.TXT); the five bytes it leaves undefined map to
// C1 controls in the WHATWG index.
TEST(ExtractWarcDocumentTest, Windows1252MatchesPythonCodec) {
  TempDir dir;
  std::string all;
  for (int b = 0; b < 256; ++b) all.push_back(static_cast<char>(b));
  WriteFile(dir.File("bytes"), all);
  Shell("/usr/bin/python3 -c \"import sys; d=open(sys.argv[1],'rb').read(); "
        "open(sys.argv[2],'wb').write(b''.join(bytes([c]).decode('cp1252', 'ignore').encode()"
        " for c in d))\" " + dir.File("bytes") + " " + dir.File("want"));
  std::string mine;
  for (int b = 0; b < 256; ++b) {
    if (b == 0x81 || b == 0x8D || b == 0x8F || b == 0x90 || b == 0x9D) continue;
    mine += Windows1252ToUtf8(std::string(1, static_cast<char>(b)));
  }
  EXPECT_EQ(mine, ReadFile(dir.File("want")));
  EXPECT_EQ(Windows1252ToUtf8("\x81\x8D\x8F\x90\x9D"),
            "\xC2\x81\xC2\x8D\xC2\x8F\xC2\x90\xC2\x9D");
}

// U+FFFD substitution of maximal subparts (Unicode Standard §3.9; its example,
// from memory: 61 F1 80 80 E1 80 C2 62 80 63 80 BF 64 -> a FFFD FFFD FFFD b FFFD
// c FFFD FFFD d), and random bytes against Python's bytes.decode('utf-8', 'replace').
TEST(ExtractWarcDocumentTest, Utf8ReplacementMatchesPython) {
  const std::string r = "\xEF\xBF\xBD";
  EXPECT_EQ(ToValidUtf8("\x61\xF1\x80\x80\xE1\x80\xC2\x62\x80\x63\x80\xBF\x64"),
            "a" + r + r + r + "b" + r + "c" + r + r + "d");
  EXPECT_EQ(ToValidUtf8("ok \xC3\xA9 \xF0\x9F\x98\x80"), "ok \xC3\xA9 \xF0\x9F\x98\x80");
  EXPECT_EQ(ToValidUtf8("\xED\xA0\x80"), r + r + r);  // a surrogate: three subparts
  EXPECT_EQ(ToValidUtf8("\xC0\xAF"), r + r);          // an overlong
  TempDir dir;
  std::mt19937 rng(99);
  std::string input;
  std::vector<size_t> ends;
  const std::vector<std::string> pieces = {"a", "\xC3\xA9", "\xE2\x82\xAC", "\xF0\x9F\x98\x80",
                                           "\xC3", "\xE2\x82", "\xF0\x9F", "\x80", "\xBF",
                                           "\xED\xA0\x80", "\xF4\x90\x80\x80", "\xC0\xAF", "\xFF"};
  std::string all_mine;
  for (int iter = 0; iter < 400; ++iter) {
    std::string s;
    const int n = static_cast<int>(rng() % 40);
    for (int k = 0; k < n; ++k) {
      if (rng() % 3 == 0) {
        s.push_back(static_cast<char>(rng() & 0xFF));
      } else {
        s += pieces[rng() % pieces.size()];
      }
    }
    // Each sample ends with '\n' so Python and ToValidUtf8 see the same boundaries.
    s.push_back('\n');
    input += s;
    all_mine += ToValidUtf8(s);
    EXPECT_TRUE(ValidateUtf8(ToValidUtf8(s)).ok());
  }
  WriteFile(dir.File("in"), input);
  WriteFile(dir.File("decode.py"),
            "import sys\n"
            "data = open(sys.argv[1], 'rb').read()\n"
            "out = b''.join(l.decode('utf-8', 'replace').encode() + b'\\n'\n"
            "               for l in data.split(b'\\n')[:-1])\n"
            "open(sys.argv[2], 'wb').write(out)\n");
  Shell("/usr/bin/python3 " + dir.File("decode.py") + " " + dir.File("in") + " " + dir.File("want"));
  EXPECT_EQ(all_mine, ReadFile(dir.File("want")));
}

TEST(ExtractWarcDocumentTest, NoTextTooLargeAndTruncatedFlag) {
  Extracted e = Extract(HttpRecord(Http("HTTP/1.1 200 OK", {{"Content-Type", "text/html"}},
                                        "<script>only()</script><style>x{}</style>")));
  EXPECT_EQ(e.skip, WarcSkip::kNoText);
  e = Extract(HttpRecord(Http("HTTP/1.1 200 OK", {{"Content-Type", "text/plain"}}, " \r\n\t ")));
  EXPECT_EQ(e.skip, WarcSkip::kNoText);
  e = Extract(HttpRecord(Http("HTTP/1.1 200 OK", {{"Content-Type", "text/plain"}}, "")));
  EXPECT_EQ(e.skip, WarcSkip::kNoText);
  // WARC 1.1 §5.13: WARC-Truncated marks a block cut by the archiver.
  e = Extract(HttpRecord(Http("HTTP/1.1 200 OK", {{"Content-Type", "text/plain"}}, "partial"),
                         {{"WARC-Truncated", "length"}}));
  EXPECT_EQ(e.skip, WarcSkip::kNone);
  EXPECT_TRUE(e.doc.truncated);

  // A block above the reader's limit is skipped over and the record reported.
  TempDir dir;
  const std::string big = ResponseRecord(
      1, "http://example.com/big",
      Http("HTTP/1.1 200 OK", {{"Content-Type", "text/plain"}}, std::string(5000, 'b')));
  const std::string small = ResponseRecord(
      2, "http://example.com/small", Http("HTTP/1.1 200 OK", {{"Content-Type", "text/plain"}}, "s"));
  WriteFile(dir.File("a.warc"), big + small);
  WarcReader::Options options;
  options.max_block_bytes = 1000;
  Parsed p = ReadAll(dir.File("a.warc"), options);
  ASSERT_TRUE(p.status.ok()) << p.status.ToString();
  ASSERT_EQ(p.records.size(), 2u);
  EXPECT_TRUE(p.records[0].block_omitted);
  EXPECT_TRUE(p.records[0].block.empty());
  EXPECT_GT(p.records[0].content_length, 5000u);
  EXPECT_EQ(Extract(p.records[0]).skip, WarcSkip::kTooLarge);
  EXPECT_EQ(p.records[1].offset, big.size());
  EXPECT_EQ(Extract(p.records[1]).doc.text, "s");
}

}  // namespace
}  // namespace shingleton
