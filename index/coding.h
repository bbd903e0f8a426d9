// Byte encodings of persisted keys and values.
//
// Keys are big-endian so RocksDB's bytewise order equals numeric order; values
// use little-endian fixed-width integers, LEB128 varints and length-prefixed
// strings. Decoders never read past the input and report failure instead.
//
// Thread safety: pure functions; a Decoder is a cursor owned by one thread.
#pragma once

#include <cstdint>
#include <cstring>
#include <string>
#include <string_view>

namespace shingleton {

inline void PutBigEndian64(std::string* out, uint64_t v) {
  for (int i = 7; i >= 0; --i) out->push_back(static_cast<char>(v >> (8 * i)));
}
inline void PutBigEndian16(std::string* out, uint16_t v) {
  out->push_back(static_cast<char>(v >> 8));
  out->push_back(static_cast<char>(v));
}
inline uint64_t GetBigEndian64(const char* p) {
  uint64_t v = 0;
  for (int i = 0; i < 8; ++i) v = (v << 8) | static_cast<unsigned char>(p[i]);
  return v;
}
inline uint16_t GetBigEndian16(const char* p) {
  return static_cast<uint16_t>((static_cast<unsigned char>(p[0]) << 8) |
                               static_cast<unsigned char>(p[1]));
}
inline void PutFixed32(std::string* out, uint32_t v) {
  for (int i = 0; i < 4; ++i) out->push_back(static_cast<char>(v >> (8 * i)));
}
// n values, little-endian (a signature): one copy on little-endian hosts.
inline void PutFixed32Array(std::string* out, const uint32_t* v, size_t n) {
#if defined(__BYTE_ORDER__) && __BYTE_ORDER__ == __ORDER_LITTLE_ENDIAN__
  out->append(reinterpret_cast<const char*>(v), 4 * n);
#else
  for (size_t i = 0; i < n; ++i) PutFixed32(out, v[i]);
#endif
}
// Reads n little-endian values from p (4 * n bytes; the caller checks the size).
inline void GetFixed32Array(const char* p, size_t n, uint32_t* out) {
#if defined(__BYTE_ORDER__) && __BYTE_ORDER__ == __ORDER_LITTLE_ENDIAN__
  std::memcpy(out, p, 4 * n);
#else
  for (size_t i = 0; i < n; ++i) {
    uint32_t v = 0;
    for (int b = 0; b < 4; ++b) v |= static_cast<uint32_t>(static_cast<unsigned char>(p[4 * i + b])) << (8 * b);
    out[i] = v;
  }
#endif
}
inline void PutVarint(std::string* out, uint64_t v) {
  while (v >= 0x80) {
    out->push_back(static_cast<char>(v | 0x80));
    v >>= 7;
  }
  out->push_back(static_cast<char>(v));
}
inline void PutDouble(std::string* out, double d) {
  uint64_t bits;
  std::memcpy(&bits, &d, 8);
  for (int i = 0; i < 8; ++i) out->push_back(static_cast<char>(bits >> (8 * i)));
}
inline void PutLengthPrefixed(std::string* out, std::string_view s) {
  PutVarint(out, s.size());
  out->append(s.data(), s.size());
}

// Reads values in the order they were put; any failure sticks (ok() == false).
class Decoder {
 public:
  explicit Decoder(std::string_view in) : in_(in) {}
  bool ok() const { return ok_; }
  bool done() const { return in_.empty(); }

  uint64_t Varint() {
    uint64_t v = 0;
    for (int shift = 0; shift < 64; shift += 7) {
      if (in_.empty()) return Fail();
      unsigned char c = static_cast<unsigned char>(in_[0]);
      in_.remove_prefix(1);
      v |= static_cast<uint64_t>(c & 0x7F) << shift;
      if (c < 0x80) return v;
    }
    return Fail();
  }
  uint32_t Fixed32() {
    if (in_.size() < 4) return static_cast<uint32_t>(Fail());
    uint32_t v = 0;
    for (int i = 0; i < 4; ++i) v |= static_cast<uint32_t>(static_cast<unsigned char>(in_[i])) << (8 * i);
    in_.remove_prefix(4);
    return v;
  }
  double Double() {
    if (in_.size() < 8) return static_cast<double>(Fail());
    uint64_t bits = 0;
    for (int i = 0; i < 8; ++i) bits |= static_cast<uint64_t>(static_cast<unsigned char>(in_[i])) << (8 * i);
    in_.remove_prefix(8);
    double d;
    std::memcpy(&d, &bits, 8);
    return d;
  }
  std::string_view LengthPrefixed() {
    uint64_t n = Varint();
    if (!ok_ || n > in_.size()) {
      Fail();
      return {};
    }
    std::string_view s = in_.substr(0, n);
    in_.remove_prefix(n);
    return s;
  }

 private:
  uint64_t Fail() {
    ok_ = false;
    in_ = {};
    return 0;
  }
  std::string_view in_;
  bool ok_ = true;
};

}  // namespace shingleton
