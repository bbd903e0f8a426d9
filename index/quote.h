// QuoteForMessage: a piece of input for an error message — at most `max` bytes,
// printable ASCII as is, every other byte (and '"', '\') as \xNN, in double quotes,
// with "..." when cut. Bad input stays readable and safe to print.
#pragma once

#include <string>
#include <string_view>

namespace shingleton {

inline std::string QuoteForMessage(std::string_view s, size_t max = 40) {
  static const char kHex[] = "0123456789abcdef";
  std::string out = "\"";
  for (size_t i = 0; i < s.size() && i < max; ++i) {
    const unsigned char c = static_cast<unsigned char>(s[i]);
    if (c >= 32 && c < 127 && c != '"' && c != '\\') {
      out.push_back(static_cast<char>(c));
    } else {
      out += "\\x";
      out.push_back(kHex[c >> 4]);
      out.push_back(kHex[c & 15]);
    }
  }
  out += s.size() > max ? "\"..." : "\"";
  return out;
}

}  // namespace shingleton
