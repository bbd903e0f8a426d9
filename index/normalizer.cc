#include "index/normalizer.h"

#include <utf8proc.h>

#include <cstdint>
#include <cstdlib>
#include <cstring>
#include <memory>

namespace shingleton {
namespace {

bool IsTokenCategory(utf8proc_int32_t cp) {
  switch (utf8proc_category(cp)) {
    case UTF8PROC_CATEGORY_LU: case UTF8PROC_CATEGORY_LL: case UTF8PROC_CATEGORY_LT:
    case UTF8PROC_CATEGORY_LM: case UTF8PROC_CATEGORY_LO:
    case UTF8PROC_CATEGORY_MN: case UTF8PROC_CATEGORY_MC: case UTF8PROC_CATEGORY_ME:
    case UTF8PROC_CATEGORY_ND: case UTF8PROC_CATEGORY_NL: case UTF8PROC_CATEGORY_NO:
      return true;
    default:
      return false;
  }
}

// For each byte: its lower-case form if it is an ASCII letter or digit, else 0.
struct AsciiFold {
  char fold[256];
  constexpr AsciiFold() : fold() {
    for (int c = 0; c < 256; ++c) {
      fold[c] = (c >= '0' && c <= '9') || (c >= 'a' && c <= 'z') ? static_cast<char>(c)
                : (c >= 'A' && c <= 'Z')                         ? static_cast<char>(c + 32)
                                                                 : 0;
    }
  }
};
constexpr AsciiFold kAsciiFold;

// Whether any of the 8 bytes at p has its high bit set.
bool AnyHighBit(const char* p) {
  uint64_t w;
  std::memcpy(&w, p, 8);
  return (w & 0x8080808080808080ULL) != 0;
}

struct FreeDeleter {
  void operator()(utf8proc_uint8_t* p) const { std::free(p); }
};

// Appends one code point to a token stream, opening a token when needed.
class TokenBuilder {
 public:
  explicit TokenBuilder(NormalizedText* out) : out_(out) {
    out_->text.clear();
    out_->starts.clear();
  }
  void Separator() { in_token_ = false; }
  void Append(const char* bytes, size_t n) {
    if (!in_token_) {
      if (!out_->text.empty()) out_->text.push_back(' ');
      out_->starts.push_back(static_cast<uint32_t>(out_->text.size()));
      in_token_ = true;
    }
    out_->text.append(bytes, n);
  }
  // Appends ASCII text: letters and digits folded to lower case (one table lookup
  // per byte), every other byte a separator. Branch-free: every byte writes a space
  // and its folded form at the end of the text and a start offset at the end of the
  // starts, and the counts advance only by what is real (a space before a token
  // that is not the first, a token byte, a token start), so token boundaries cost
  // no mispredicted branch.
  void AppendAscii(std::string_view piece) {
    std::string& text = out_->text;
    std::vector<uint32_t>& starts = out_->starts;
    size_t n = text.size(), m = starts.size();
    // Bounds: the text grows by at most piece.size() + 1 (one space before a token)
    // and is written one byte past that; a piece holds at most size/2 + 1 token
    // starts (they are separated), and starts is written one entry past them.
    text.resize(n + piece.size() + 2);
    starts.resize(m + piece.size() / 2 + 2);
    char* p = text.data();
    uint32_t* st = starts.data();
    uint32_t in = in_token_, any = n > 0;  // inside a token; the text holds one already
    for (char ch : piece) {
      const char c = kAsciiFold.fold[static_cast<unsigned char>(ch)];
      const uint32_t tok = c != 0, start = tok & ~in, space = start & any;
      p[n] = ' ';
      p[n + space] = c;
      st[m] = static_cast<uint32_t>(n + space);
      n += space + tok;
      m += start;
      any |= tok;
      in = tok;
    }
    text.resize(n);
    starts.resize(m);
    in_token_ = in != 0;
  }

 private:
  NormalizedText* out_;
  bool in_token_ = false;
};

}  // namespace

Status ValidateUtf8(std::string_view text) {
  const auto* p = reinterpret_cast<const utf8proc_uint8_t*>(text.data());
  size_t i = 0;
  while (i < text.size()) {
    if (i + 8 <= text.size() && !AnyHighBit(text.data() + i)) {
      i += 8;
      continue;
    }
    if (p[i] < 0x80) { ++i; continue; }
    utf8proc_int32_t cp;
    utf8proc_ssize_t n = utf8proc_iterate(p + i, static_cast<utf8proc_ssize_t>(text.size() - i), &cp);
    if (n < 0) return Status::BadInput("invalid UTF-8 at byte " + std::to_string(i) + " of the text");
    i += static_cast<size_t>(n);
  }
  return Status::Ok();
}

StatusOr<std::string> Nfkc(std::string_view text) {
  utf8proc_uint8_t* raw = nullptr;
  utf8proc_ssize_t n = utf8proc_map(reinterpret_cast<const utf8proc_uint8_t*>(text.data()),
                                    static_cast<utf8proc_ssize_t>(text.size()), &raw,
                                    static_cast<utf8proc_option_t>(UTF8PROC_STABLE | UTF8PROC_COMPAT |
                                                                   UTF8PROC_COMPOSE));
  std::unique_ptr<utf8proc_uint8_t, FreeDeleter> owned(raw);
  if (n < 0) return Status::BadInput(std::string("NFKC failed: ") + utf8proc_errmsg(n));
  return std::string(reinterpret_cast<const char*>(raw), static_cast<size_t>(n));
}

namespace {

// ASCII is NFKC-stable, folds case by A-Z -> a-z, and its token characters
// (categories L*, N*) are exactly [0-9A-Za-z].
void AppendUnicode(std::string_view piece, TokenBuilder* tokens) {
  utf8proc_uint8_t* raw = nullptr;
  const utf8proc_ssize_t n = utf8proc_map(
      reinterpret_cast<const utf8proc_uint8_t*>(piece.data()),
      static_cast<utf8proc_ssize_t>(piece.size()), &raw,
      static_cast<utf8proc_option_t>(UTF8PROC_STABLE | UTF8PROC_COMPAT | UTF8PROC_COMPOSE |
                                     UTF8PROC_CASEFOLD | UTF8PROC_IGNORE));
  std::unique_ptr<utf8proc_uint8_t, FreeDeleter> owned(raw);
  if (n < 0) return;  // only on invalid UTF-8, excluded by the precondition
  utf8proc_ssize_t i = 0;
  while (i < n) {
    utf8proc_int32_t cp;
    const utf8proc_ssize_t len = utf8proc_iterate(raw + i, n - i, &cp);
    if (len <= 0) break;
    if (IsTokenCategory(cp)) {
      tokens->Append(reinterpret_cast<const char*>(raw + i), static_cast<size_t>(len));
    } else {
      tokens->Separator();
    }
    i += len;
  }
}

size_t FindNonAscii(std::string_view s, size_t from) {
  size_t i = from;
  while (i + 8 <= s.size() && !AnyHighBit(s.data() + i)) i += 8;  // 8 bytes at a time
  for (; i < s.size(); ++i) {
    if (static_cast<unsigned char>(s[i]) >= 0x80) return i;
  }
  return std::string_view::npos;
}

size_t FindAscii(std::string_view s, size_t from) {
  for (size_t i = from; i < s.size(); ++i) {
    if (static_cast<unsigned char>(s[i]) < 0x80) return i;
  }
  return s.size();
}

}  // namespace

// Only the non-ASCII runs go through utf8proc, each with the ASCII character
// before it (a combining mark may compose with it). Splitting before an ASCII
// character is safe: ASCII characters are starters that never compose with
// what precedes them, have no decomposition, and case folding is per character.
// The result equals NormalizeUnicode() of the whole text (tested).
void Normalizer::Normalize(std::string_view input, NormalizedText* out) {
  TokenBuilder tokens(out);
  out->text.reserve(input.size());
  out->starts.reserve(input.size() / 4);
  size_t i = 0;
  while (i < input.size()) {
    const size_t p = FindNonAscii(input, i);
    if (p == std::string_view::npos) {
      tokens.AppendAscii(input.substr(i));
      break;
    }
    const size_t start = p > i ? p - 1 : p;
    tokens.AppendAscii(input.substr(i, start - i));
    const size_t end = FindAscii(input, p);
    AppendUnicode(input.substr(start, end - start), &tokens);
    i = end;
  }
}

void Normalizer::NormalizeUnicode(std::string_view input, NormalizedText* out) {
  TokenBuilder tokens(out);
  AppendUnicode(input, &tokens);
}

}  // namespace shingleton
