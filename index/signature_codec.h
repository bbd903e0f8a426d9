// The wire and disk form of a signature: k values as little-endian uint32, 4k bytes.
// Used by the index store, the RPC messages and the clients alike.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace shingleton {

inline std::string PackSignature(const uint32_t* sig, int k) {
  std::string out(4 * static_cast<size_t>(k), '\0');
  for (int i = 0; i < k; ++i) {
    for (int b = 0; b < 4; ++b) out[4 * i + b] = static_cast<char>(sig[i] >> (8 * b));
  }
  return out;
}

// REQUIRES: bytes.size() is a multiple of 4.
inline std::vector<uint32_t> UnpackSignature(std::string_view bytes) {
  std::vector<uint32_t> sig(bytes.size() / 4);
  for (size_t i = 0; i < sig.size(); ++i) {
    const auto* p = reinterpret_cast<const unsigned char*>(bytes.data() + 4 * i);
    sig[i] = p[0] | (p[1] << 8) | (p[2] << 16) | (static_cast<uint32_t>(p[3]) << 24);
  }
  return sig;
}

// Job names, used as directory names on shards and the coordinator: 1-128 of
// letters, digits, '-', '_', '.', and not "." or "..".
bool ValidJobName(const std::string& job);

}  // namespace shingleton
