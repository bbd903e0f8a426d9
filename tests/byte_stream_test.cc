// ByteStream and LineReader against files made in the test by standard tools:
// the gzip and zstd command-line tools and Python's gzip module
// (/usr/bin/python3), and against the formats' definitions — RFC 1952 (gzip:
// members, the CRC-32/ISIZE trailer), RFC 8878 (Zstandard: frames, skippable
// frames). Expected contents are the bytes written before compression.
#include "index/byte_stream.h"

#include <gtest/gtest.h>

#include <cstdlib>
#include <random>
#include <string>
#include <vector>

#include "index/line_reader.h"
#include "tests/test_util.h"

namespace shingleton {
namespace {

using testing::ReadFile;
using testing::TempDir;
using testing::WriteFile;

void Shell(const std::string& cmd) {
  ASSERT_EQ(std::system(cmd.c_str()), 0) << cmd;
}

// Deterministic text-like data: words from a small alphabet, newlines between.
std::string SampleText(size_t bytes, uint32_t seed) {
  std::mt19937 rng(seed);
  std::string out;
  while (out.size() < bytes) {
    const int len = 1 + static_cast<int>(rng() % 9);
    for (int i = 0; i < len; ++i) out.push_back(static_cast<char>('a' + rng() % 26));
    out.push_back(rng() % 12 == 0 ? '\n' : ' ');
  }
  out.resize(bytes);
  return out;
}

// Incompressible bytes, so compressed files are large and cross buffer refills.
std::string RandomBytes(size_t bytes, uint32_t seed) {
  std::mt19937 rng(seed);
  std::string out(bytes, '\0');
  for (char& c : out) c = static_cast<char>(rng() & 0xFF);
  return out;
}

std::unique_ptr<ByteStream> OpenOrDie(const std::string& path) {
  auto s = ByteStream::Open(path);
  EXPECT_TRUE(s.ok()) << s.status().ToString();
  return s.ok() ? std::move(s).value() : nullptr;
}

// All bytes of the stream, read `chunk` bytes at a time.
std::string ReadAll(ByteStream* s, size_t chunk) {
  std::string out;
  std::vector<char> buf(chunk);
  for (;;) {
    const size_t n = s->Read(buf.data(), chunk);
    if (n == 0) break;
    out.append(buf.data(), n);
  }
  return out;
}

TEST(ByteStreamTest, PlainFileIsReadAsIs) {
  TempDir dir;
  const std::string data = SampleText(3 << 20, 1);
  WriteFile(dir.File("a.txt"), data);
  auto s = OpenOrDie(dir.File("a.txt"));
  ASSERT_TRUE(s);
  EXPECT_EQ(s->compression(), Compression::kNone);
  EXPECT_EQ(ReadAll(s.get(), 100000), data);
  EXPECT_TRUE(s->status().ok());
  EXPECT_EQ(s->raw_offset(), data.size());
  EXPECT_EQ(s->path(), dir.File("a.txt"));
  EXPECT_EQ(s->Read(nullptr, 0), 0u);
}

// Files shorter than a magic number, or starting with part of one, are plain.
TEST(ByteStreamTest, EmptyAndShortFilesArePlain) {
  TempDir dir;
  WriteFile(dir.File("empty"), "");
  WriteFile(dir.File("one"), "\x1f");                      // RFC 1952 ID1 alone
  WriteFile(dir.File("three"), std::string("\x28\xb5\x2f", 3));  // RFC 8878 magic, cut
  for (const char* name : {"empty", "one", "three"}) {
    auto s = OpenOrDie(dir.File(name));
    ASSERT_TRUE(s);
    EXPECT_EQ(s->compression(), Compression::kNone) << name;
    EXPECT_EQ(ReadAll(s.get(), 7), ReadFile(dir.File(name))) << name;
    EXPECT_TRUE(s->status().ok()) << name;
  }
}

TEST(ByteStreamTest, MissingFileIsAnIoErrorNamingIt) {
  TempDir dir;
  auto s = ByteStream::Open(dir.File("nope.gz"));
  ASSERT_FALSE(s.ok());
  EXPECT_EQ(s.status().code(), Status::Code::kIoError);
  EXPECT_NE(s.status().message().find(dir.File("nope.gz")), std::string::npos);
}

// The gzip tool's output is read back byte for byte; raw_offset ends at the file size.
TEST(ByteStreamTest, GzipToolOutput) {
  TempDir dir;
  const std::string data = SampleText(2 << 20, 2) + RandomBytes(1 << 20, 3);
  WriteFile(dir.File("a.bin"), data);
  Shell("gzip -k -n -6 " + dir.File("a.bin"));
  auto s = OpenOrDie(dir.File("a.bin.gz"));
  ASSERT_TRUE(s);
  EXPECT_EQ(s->compression(), Compression::kGzip);
  EXPECT_EQ(ReadAll(s.get(), 65536), data);
  EXPECT_TRUE(s->status().ok()) << s->status().ToString();
  EXPECT_EQ(s->raw_offset(), ReadFile(dir.File("a.bin.gz")).size());
}

// RFC 1952 §2.2: "A gzip file consists of a series of members"; the gzip tool
// writes one member per invocation, so `gzip -c a >> f` appends a member.
TEST(ByteStreamTest, GzipMembersMadeByTheToolAreReadThrough) {
  TempDir dir;
  std::string expected;
  for (int i = 0; i < 4; ++i) {
    const std::string part = i == 2 ? RandomBytes(600000, 10 + i) : SampleText(300000, 10 + i);
    WriteFile(dir.File("p" + std::to_string(i)), part);
    Shell("gzip -n -c " + dir.File("p" + std::to_string(i)) + " >> " + dir.File("m.gz"));
    expected += part;
  }
  for (size_t chunk : {size_t{1} << 20, size_t{4093}}) {
    auto s = OpenOrDie(dir.File("m.gz"));
    ASSERT_TRUE(s);
    EXPECT_EQ(ReadAll(s.get(), chunk), expected) << chunk;
    EXPECT_TRUE(s->status().ok()) << s->status().ToString();
    EXPECT_EQ(s->raw_offset(), ReadFile(dir.File("m.gz")).size());
  }
}

// Record-at-a-time style: Python's gzip.compress per piece (one member each,
// an empty member among them), concatenated.
TEST(ByteStreamTest, PythonGzipMembersAreReadThrough) {
  TempDir dir;
  WriteFile(dir.File("make.py"),
            "import gzip, sys\n"
            "out = open(sys.argv[1], 'wb')\n"
            "for i in range(60):\n"
            "    piece = b'' if i == 7 else (('record %d ' % i) * (i * 37 + 1)).encode()\n"
            "    out.write(gzip.compress(piece))\n");
  Shell("/usr/bin/python3 " + dir.File("make.py") + " " + dir.File("r.gz"));
  std::string expected;
  for (int i = 0; i < 60; ++i) {
    if (i == 7) continue;
    for (int k = 0; k < i * 37 + 1; ++k) expected += "record " + std::to_string(i) + " ";
  }
  auto s = OpenOrDie(dir.File("r.gz"));
  ASSERT_TRUE(s);
  EXPECT_EQ(ReadAll(s.get(), 1), expected);  // one byte at a time
  EXPECT_TRUE(s->status().ok()) << s->status().ToString();
}

// RFC 8878 §3: "Zstandard compressed data is made of one or more frames"; the zstd
// tool writes one frame per invocation.
TEST(ByteStreamTest, ZstdFramesMadeByTheToolAreReadThrough) {
  TempDir dir;
  std::string expected;
  for (int i = 0; i < 3; ++i) {
    const std::string part = i == 1 ? RandomBytes(700000, 20 + i) : SampleText(900000, 20 + i);
    WriteFile(dir.File("p" + std::to_string(i)), part);
    Shell("zstd -q -c " + dir.File("p" + std::to_string(i)) + " >> " + dir.File("m.zst"));
    expected += part;
  }
  for (size_t chunk : {size_t{1} << 20, size_t{1}, size_t{7777}}) {
    auto s = OpenOrDie(dir.File("m.zst"));
    ASSERT_TRUE(s);
    EXPECT_EQ(s->compression(), Compression::kZstd);
    EXPECT_EQ(ReadAll(s.get(), chunk), expected) << chunk;
    EXPECT_TRUE(s->status().ok()) << s->status().ToString();
    EXPECT_EQ(s->raw_offset(), ReadFile(dir.File("m.zst")).size());
  }
}

// RFC 8878 §3.1.2: a skippable frame is a magic 0x184D2A5? (little-endian), a
// 4-byte little-endian Frame_Size, then that many user bytes; decoders skip it.
// Built here by that definition, at the start of the file and between frames.
TEST(ByteStreamTest, ZstdSkippableFramesAreSkipped) {
  TempDir dir;
  auto skippable = [](uint8_t nibble, const std::string& user) {
    std::string f = {static_cast<char>(0x50 | nibble), 0x2A, 0x4D, 0x18};
    const uint32_t n = static_cast<uint32_t>(user.size());
    for (int i = 0; i < 4; ++i) f.push_back(static_cast<char>((n >> (8 * i)) & 0xFF));
    return f + user;
  };
  const std::string a = SampleText(5000, 30), b = SampleText(7000, 31);
  WriteFile(dir.File("a"), a);
  WriteFile(dir.File("b"), b);
  Shell("zstd -q -c " + dir.File("a") + " > " + dir.File("a.zst"));
  Shell("zstd -q -c " + dir.File("b") + " > " + dir.File("b.zst"));
  WriteFile(dir.File("s.zst"), skippable(0, "dictionary-like user data") +
                                   ReadFile(dir.File("a.zst")) + skippable(0xF, "") +
                                   ReadFile(dir.File("b.zst")));
  auto s = OpenOrDie(dir.File("s.zst"));
  ASSERT_TRUE(s);
  EXPECT_EQ(s->compression(), Compression::kZstd);
  EXPECT_EQ(ReadAll(s.get(), 1000), a + b);
  EXPECT_TRUE(s->status().ok()) << s->status().ToString();
}

// A gzip file cut anywhere inside a member is BadInput naming the file and the
// byte where the data ran out (the cut length); the bytes returned before the
// error are a prefix of the original.
TEST(ByteStreamTest, TruncatedGzipNamesFileAndOffset) {
  TempDir dir;
  const std::string data = SampleText(1 << 20, 40) + RandomBytes(300000, 41);
  WriteFile(dir.File("a"), data);
  Shell("gzip -n -c " + dir.File("a") + " > " + dir.File("a.gz"));
  const std::string gz = ReadFile(dir.File("a.gz"));
  // Cuts inside the 10-byte header, the deflate data, and the 8-byte trailer
  // (RFC 1952 §2.3: header, compressed blocks, CRC32, ISIZE).
  for (size_t cut : {size_t{5}, gz.size() / 3, gz.size() - 9, gz.size() - 1}) {
    WriteFile(dir.File("cut.gz"), gz.substr(0, cut));
    auto s = OpenOrDie(dir.File("cut.gz"));
    ASSERT_TRUE(s);
    const std::string got = ReadAll(s.get(), 65536);
    EXPECT_EQ(got, data.substr(0, got.size())) << cut;
    ASSERT_FALSE(s->status().ok()) << cut;
    EXPECT_EQ(s->status().code(), Status::Code::kBadInput);
    EXPECT_EQ(s->status().message(), dir.File("cut.gz") + ": truncated gzip stream at byte " +
                                         std::to_string(cut) + " (member starting at byte 0)");
    EXPECT_EQ(s->Read(nullptr, 1), 0u);  // stays failed
  }
}

// RFC 1952 §2.3.1: the member ends with CRC32 and ISIZE; a wrong CRC-32 is corrupt data.
TEST(ByteStreamTest, GzipWithBadCrcIsCorrupt) {
  TempDir dir;
  WriteFile(dir.File("a"), SampleText(100000, 50));
  Shell("gzip -n -c " + dir.File("a") + " > " + dir.File("a.gz"));
  std::string gz = ReadFile(dir.File("a.gz"));
  gz[gz.size() - 8] = static_cast<char>(gz[gz.size() - 8] ^ 0x01);  // first CRC32 byte
  WriteFile(dir.File("bad.gz"), gz);
  auto s = OpenOrDie(dir.File("bad.gz"));
  ASSERT_TRUE(s);
  ReadAll(s.get(), 4096);
  ASSERT_FALSE(s->status().ok());
  EXPECT_EQ(s->status().code(), Status::Code::kBadInput);
  EXPECT_EQ(s->status().message().rfind(dir.File("bad.gz") + ": corrupt gzip stream at byte ", 0),
            0u)
      << s->status().message();
}

// Bytes after the last member that do not start a member (RFC 1952 §2.3.1: ID1
// ID2 = 1F 8B) are an error naming where that data starts.
TEST(ByteStreamTest, GarbageAfterGzipMemberIsAnError) {
  TempDir dir;
  const std::string data = SampleText(20000, 60);
  WriteFile(dir.File("a"), data);
  Shell("gzip -n -c " + dir.File("a") + " > " + dir.File("a.gz"));
  const std::string gz = ReadFile(dir.File("a.gz"));
  WriteFile(dir.File("g.gz"), gz + "this is not gzip");
  auto s = OpenOrDie(dir.File("g.gz"));
  ASSERT_TRUE(s);
  EXPECT_EQ(ReadAll(s.get(), 4096), data);
  ASSERT_FALSE(s->status().ok());
  EXPECT_NE(s->status().message().find("(member starting at byte " + std::to_string(gz.size()) +
                                       ")"),
            std::string::npos)
      << s->status().message();
}

TEST(ByteStreamTest, TruncatedZstdNamesFileAndOffset) {
  TempDir dir;
  const std::string data = RandomBytes(400000, 70);
  WriteFile(dir.File("a"), data);
  Shell("zstd -q -c " + dir.File("a") + " > " + dir.File("a.zst"));
  const std::string zst = ReadFile(dir.File("a.zst"));
  for (size_t cut : {size_t{4}, size_t{9}, zst.size() / 2, zst.size() - 1}) {
    WriteFile(dir.File("cut.zst"), zst.substr(0, cut));
    auto s = OpenOrDie(dir.File("cut.zst"));
    ASSERT_TRUE(s);
    const std::string got = ReadAll(s.get(), 100000);
    EXPECT_EQ(got, data.substr(0, got.size())) << cut;
    ASSERT_FALSE(s->status().ok()) << cut;
    EXPECT_EQ(s->status().message(), dir.File("cut.zst") + ": truncated zstd stream at byte " +
                                         std::to_string(cut) + " (frame starting at byte 0)");
  }
}

// After a whole frame, bytes that are not a frame (RFC 8878 §3.1: no valid magic)
// are corrupt data, named with the offset where they start.
TEST(ByteStreamTest, GarbageAfterZstdFrameIsCorrupt) {
  TempDir dir;
  const std::string data = SampleText(30000, 80);
  WriteFile(dir.File("a"), data);
  Shell("zstd -q -c " + dir.File("a") + " > " + dir.File("a.zst"));
  const std::string zst = ReadFile(dir.File("a.zst"));
  WriteFile(dir.File("g.zst"), zst + "garbage!");
  auto s = OpenOrDie(dir.File("g.zst"));
  ASSERT_TRUE(s);
  EXPECT_EQ(ReadAll(s.get(), 4096), data);
  ASSERT_FALSE(s->status().ok());
  EXPECT_NE(s->status().message().find(dir.File("g.zst") + ": corrupt zstd stream at byte "),
            std::string::npos)
      << s->status().message();
  EXPECT_NE(s->status().message().find("(frame starting at byte " + std::to_string(zst.size()) +
                                       ")"),
            std::string::npos)
      << s->status().message();
}

// LineReader on ByteStream: the same lines from plain, gzip and zstd files —
// '\n' ends a line, a trailing '\r' is dropped, the last line needs no '\n',
// and a line longer than the 1 MiB read chunk is whole.
TEST(LineReaderTest, SameLinesFromPlainGzipAndZstd) {
  TempDir dir;
  std::vector<std::string> lines = {"first", "", "crlf line", "  spaced  ", std::string(3 << 20, 'x'),
                                    "unicode \xc3\xa9\xe2\x80\x94", "last without newline"};
  std::string data;
  for (size_t i = 0; i < lines.size(); ++i) {
    data += lines[i];
    if (i == 2) data += "\r";
    if (i + 1 < lines.size()) data += "\n";
  }
  WriteFile(dir.File("l.jsonl"), data);
  Shell("gzip -k -n " + dir.File("l.jsonl"));
  Shell("zstd -q -k " + dir.File("l.jsonl"));
  for (const char* name : {"l.jsonl", "l.jsonl.gz", "l.jsonl.zst"}) {
    LineReader reader;
    ASSERT_TRUE(reader.Open(dir.File(name)).ok()) << name;
    std::string_view line;
    size_t i = 0;
    while (reader.Next(&line)) {
      ASSERT_LT(i, lines.size()) << name;
      EXPECT_EQ(line, lines[i]) << name << " line " << i + 1;
      EXPECT_EQ(reader.line_number(), i + 1);
      ++i;
    }
    EXPECT_TRUE(reader.status().ok()) << reader.status().ToString();
    EXPECT_EQ(i, lines.size()) << name;
    EXPECT_EQ(reader.raw_offset(), ReadFile(dir.File(name)).size()) << name;
  }
}

// A truncated .zst JSONL file is an error naming the file and the offset.
TEST(LineReaderTest, TruncatedZstdIsAnErrorNamingTheFile) {
  TempDir dir;
  std::string data;
  for (int i = 0; i < 20000; ++i) data += "{\"id\": \"" + std::to_string(i) + "\"}\n";
  WriteFile(dir.File("l.jsonl"), data + RandomBytes(100000, 90));
  Shell("zstd -q -k " + dir.File("l.jsonl"));
  const std::string zst = ReadFile(dir.File("l.jsonl.zst"));
  WriteFile(dir.File("cut.jsonl.zst"), zst.substr(0, zst.size() - 100));
  LineReader reader;
  ASSERT_TRUE(reader.Open(dir.File("cut.jsonl.zst")).ok());
  std::string_view line;
  while (reader.Next(&line)) {
  }
  ASSERT_FALSE(reader.status().ok());
  EXPECT_EQ(reader.status().message(), dir.File("cut.jsonl.zst") +
                                           ": truncated zstd stream at byte " +
                                           std::to_string(zst.size() - 100) +
                                           " (frame starting at byte 0)");
}

TEST(LineReaderTest, MissingFileIsAnIoError) {
  TempDir dir;
  LineReader reader;
  Status s = reader.Open(dir.File("missing.jsonl"));
  EXPECT_EQ(s.code(), Status::Code::kIoError);
  EXPECT_NE(s.message().find("missing.jsonl"), std::string::npos);
  std::string_view line;
  EXPECT_FALSE(reader.Next(&line));
}

}  // namespace
}  // namespace shingleton
