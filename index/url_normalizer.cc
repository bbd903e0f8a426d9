#include "index/url_normalizer.h"

#include <algorithm>
#include <cstdint>
#include <cstdio>
#include <utility>

namespace shingleton {
namespace {

// Longest stretch of the input quoted in an error message.
constexpr size_t kMaxQuotedBytes = 120;
constexpr uint32_t kMaxPort = 65535;

bool IsAlpha(char c) { return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z'); }
bool IsDigit(char c) { return c >= '0' && c <= '9'; }
bool IsHexDigit(char c) {
  return IsDigit(c) || (c >= 'A' && c <= 'F') || (c >= 'a' && c <= 'f');
}
// RFC 3986 §2.3.
bool IsUnreserved(char c) {
  return IsAlpha(c) || IsDigit(c) || c == '-' || c == '.' || c == '_' || c == '~';
}
// RFC 3986 §2.2.
bool IsSubDelim(char c) {
  return std::string_view("!$&'()*+,;=").find(c) != std::string_view::npos;
}
// RFC 3986 §3.1, after the first character.
bool IsSchemeChar(char c) {
  return IsAlpha(c) || IsDigit(c) || c == '+' || c == '-' || c == '.';
}
// Space, C0 controls and DEL: never part of a URI and never accepted here.
bool IsForbiddenByte(char c) {
  const auto b = static_cast<unsigned char>(c);
  return b <= 0x20 || b == 0x7F;
}
char ToLowerAscii(char c) {
  return (c >= 'A' && c <= 'Z') ? static_cast<char>(c + 32) : c;
}
char ToUpperAscii(char c) {
  return (c >= 'a' && c <= 'z') ? static_cast<char>(c - 32) : c;
}
int HexValue(char c) {
  if (IsDigit(c)) return c - '0';
  return ToLowerAscii(c) - 'a' + 10;
}

bool EqualsIgnoreCase(std::string_view a, std::string_view b) {
  if (a.size() != b.size()) return false;
  for (size_t i = 0; i < a.size(); ++i) {
    if (ToLowerAscii(a[i]) != ToLowerAscii(b[i])) return false;
  }
  return true;
}

// The URL, truncated and with unprintable bytes escaped, for error messages.
std::string Quote(std::string_view url) {
  std::string out = "\"";
  for (char c : url.substr(0, kMaxQuotedBytes)) {
    const auto b = static_cast<unsigned char>(c);
    if (b < 0x20 || b == 0x7F || c == '"' || c == '\\') {
      char buf[8];
      std::snprintf(buf, sizeof(buf), "\\x%02X", b);
      out += buf;
    } else {
      out += c;
    }
  }
  out += url.size() > kMaxQuotedBytes ? "\"..." : "\"";
  return out;
}

Status Invalid(std::string_view url, const std::string& what, size_t offset) {
  return Status::InvalidArgument("url " + Quote(url) + ": " + what + " at byte " +
                                 std::to_string(offset));
}

// Appends url[begin, end) to *out with RFC 3986 §6.2.2.2 applied: encoded
// unreserved characters decoded, the hex digits of other encodings uppercased.
Status AppendPercentNormalized(std::string_view url, size_t begin, size_t end,
                               std::string* out) {
  for (size_t i = begin; i < end; ++i) {
    const char c = url[i];
    if (c != '%') {
      out->push_back(c);
      continue;
    }
    if (i + 2 >= end || !IsHexDigit(url[i + 1]) || !IsHexDigit(url[i + 2])) {
      return Invalid(url, "'%' not followed by two hex digits", i);
    }
    const char decoded =
        static_cast<char>(HexValue(url[i + 1]) * 16 + HexValue(url[i + 2]));
    if (IsUnreserved(decoded)) {
      out->push_back(decoded);
    } else {
      out->push_back('%');
      out->push_back(ToUpperAscii(url[i + 1]));
      out->push_back(ToUpperAscii(url[i + 2]));
    }
    i += 2;
  }
  return Status::Ok();
}

// Host rules 4 and 5 of the header for a reg-name url[begin, end).
Status NormalizeRegName(std::string_view url, size_t begin, size_t end,
                        std::string* host) {
  for (size_t i = begin; i < end; ++i) {
    const char c = url[i];
    if (!IsUnreserved(c) && !IsSubDelim(c) && c != '%') {
      return Invalid(url, "character not allowed in host", i);
    }
  }
  std::string encoded;
  SHINGLETON_RETURN_IF_ERROR(AppendPercentNormalized(url, begin, end, &encoded));
  host->reserve(encoded.size());
  for (size_t i = 0; i < encoded.size(); ++i) {
    if (encoded[i] == '%') {  // a normalised triplet: keep its uppercase hex
      host->append(encoded, i, 3);
      i += 2;
    } else {
      host->push_back(ToLowerAscii(encoded[i]));
    }
  }
  if (host->size() > 1 && host->back() == '.' && (*host)[host->size() - 2] != '.') {
    host->pop_back();
  }
  return Status::Ok();
}

// Host rule 4 for an IP literal; url[begin, end) is the text between the brackets.
Status NormalizeIpLiteral(std::string_view url, size_t begin, size_t end,
                          std::string* host) {
  if (begin == end) return Invalid(url, "empty IP literal", begin);
  if (url[begin] == 'v' || url[begin] == 'V') {
    // IPvFuture = "v" 1*HEXDIG "." 1*( unreserved / sub-delims / ":" )
    size_t i = begin + 1;
    while (i < end && IsHexDigit(url[i])) ++i;
    if (i == begin + 1 || i >= end || url[i] != '.' || i + 1 == end) {
      return Invalid(url, "malformed IPvFuture literal", begin);
    }
    for (++i; i < end; ++i) {
      if (!IsUnreserved(url[i]) && !IsSubDelim(url[i]) && url[i] != ':') {
        return Invalid(url, "character not allowed in IPvFuture literal", i);
      }
    }
  } else {
    int colons = 0;
    for (size_t i = begin; i < end; ++i) {
      const char c = url[i];
      if (c == ':') {
        ++colons;
      } else if (!IsHexDigit(c) && c != '.') {
        return Invalid(url, "character not allowed in IPv6 literal", i);
      }
    }
    if (colons < 2) return Invalid(url, "IPv6 literal has fewer than two ':'", begin);
  }
  host->push_back('[');
  for (size_t i = begin; i < end; ++i) host->push_back(ToLowerAscii(url[i]));
  host->push_back(']');
  return Status::Ok();
}

// Port rule 6: url[begin, end) is the text after ':'. Sets *port to its canonical
// decimal spelling, or empty when the port is empty or the scheme's default.
Status NormalizePort(std::string_view url, size_t begin, size_t end,
                     std::string_view scheme, std::string* port) {
  uint32_t value = 0;
  for (size_t i = begin; i < end; ++i) {
    if (!IsDigit(url[i])) return Invalid(url, "non-digit in port", i);
    value = value * 10 + static_cast<uint32_t>(url[i] - '0');
    if (value > kMaxPort) return Invalid(url, "port above 65535", begin);
  }
  port->clear();
  if (begin == end) return Status::Ok();
  if ((scheme == "http" && value == 80) || (scheme == "https" && value == 443)) {
    return Status::Ok();
  }
  *port = std::to_string(value);
  return Status::Ok();
}

// Rule 9: parameters of an already percent-normalised query, filtered and sorted.
std::string NormalizeQuery(std::string_view query, const UrlNormalizeOptions& options) {
  if (!options.drop_tracking_params && !options.sort_query) return std::string(query);
  struct Param {
    std::string_view name;
    std::string_view rest;  // "" or "=" followed by the value
  };
  std::vector<Param> params;
  size_t start = 0;
  while (start <= query.size()) {
    size_t amp = query.find('&', start);
    if (amp == std::string_view::npos) amp = query.size();
    const std::string_view param = query.substr(start, amp - start);
    start = amp + 1;
    if (param.empty()) continue;
    const size_t eq = param.find('=');
    Param p{param.substr(0, eq),
            eq == std::string_view::npos ? std::string_view() : param.substr(eq)};
    if (options.drop_tracking_params && IsTrackingParameter(p.name)) continue;
    params.push_back(p);
  }
  if (options.sort_query) {
    std::stable_sort(params.begin(), params.end(), [](const Param& a, const Param& b) {
      if (a.name != b.name) return a.name < b.name;
      return a.rest < b.rest;
    });
  }
  std::string out;
  out.reserve(query.size());
  for (const Param& p : params) {
    if (!out.empty()) out.push_back('&');
    out.append(p.name);
    out.append(p.rest);
  }
  return out;
}

}  // namespace

const std::vector<std::string>& TrackingParameters() {
  static const std::vector<std::string>* const kParams = new std::vector<std::string>{
      "utm_",                                    // campaign tagging (prefix)
      "gclid",     "gbraid", "wbraid", "dclid",  // Google Ads / Campaign Manager
      "_ga",       "_gl",                        // Google Analytics linker
      "fbclid",                                  // Facebook
      "igshid",                                  // Instagram
      "msclkid",                                 // Microsoft Advertising
      "twclid",                                  // Twitter/X
      "ttclid",                                  // TikTok
      "li_fat_id",                               // LinkedIn
      "yclid",                                   // Yandex
      "mc_cid",    "mc_eid",                     // Mailchimp
  };
  return *kParams;
}

bool IsTrackingParameter(std::string_view name) {
  for (const std::string& entry : TrackingParameters()) {
    if (!entry.empty() && entry.back() == '_') {
      if (name.size() >= entry.size() &&
          EqualsIgnoreCase(name.substr(0, entry.size()), entry)) {
        return true;
      }
    } else if (EqualsIgnoreCase(name, entry)) {
      return true;
    }
  }
  return false;
}

std::string RemoveDotSegments(std::string_view path) {
  std::string out;
  out.reserve(path.size());
  std::string_view in = path;
  auto starts_with = [&in](std::string_view prefix) {
    return in.substr(0, prefix.size()) == prefix;
  };
  // Removes the last segment and its preceding "/" (if any) from the output.
  auto pop_segment = [&out] {
    const size_t slash = out.rfind('/');
    out.erase(slash == std::string::npos ? 0 : slash);
  };
  while (!in.empty()) {
    if (starts_with("../")) {  // 2A
      in.remove_prefix(3);
    } else if (starts_with("./")) {  // 2A
      in.remove_prefix(2);
    } else if (starts_with("/./")) {  // 2B: "/./" -> "/"
      in.remove_prefix(2);
    } else if (in == "/.") {  // 2B: complete "/." -> "/"
      in = "/";
    } else if (starts_with("/../")) {  // 2C: "/../" -> "/"
      in.remove_prefix(3);
      pop_segment();
    } else if (in == "/..") {  // 2C: complete "/.." -> "/"
      in = "/";
      pop_segment();
    } else if (in == "." || in == "..") {  // 2D
      in = std::string_view();
    } else {  // 2E: move the first segment, with its leading "/" if any
      size_t next = in.find('/', 1);
      if (next == std::string_view::npos) next = in.size();
      out.append(in.substr(0, next));
      in.remove_prefix(next);
    }
  }
  return out;
}

StatusOr<std::string> NormalizeUrl(std::string_view url,
                                   const UrlNormalizeOptions& options) {
  if (url.empty()) return Invalid(url, "empty string", 0);
  for (size_t i = 0; i < url.size(); ++i) {
    if (IsForbiddenByte(url[i])) return Invalid(url, "space or control character", i);
  }

  // Scheme (§3.1).
  const size_t colon = url.find(':');
  if (colon == std::string_view::npos) return Invalid(url, "no scheme (no ':')", 0);
  if (colon == 0) return Invalid(url, "empty scheme", 0);
  if (!IsAlpha(url[0])) return Invalid(url, "scheme does not start with a letter", 0);
  std::string scheme;
  scheme.reserve(colon);
  for (size_t i = 0; i < colon; ++i) {
    if (!IsSchemeChar(url[i])) return Invalid(url, "character not allowed in scheme", i);
    scheme.push_back(ToLowerAscii(url[i]));
  }
  const bool is_http = scheme == "http" || scheme == "https";

  // Component boundaries (§3): authority ends at the first "/", "?" or "#", the
  // path at the first "?" or "#", the query at the first "#".
  if (url.substr(colon + 1, 2) != "//") {
    return Invalid(url, "no authority (\"//\" must follow the scheme)", colon + 1);
  }
  const size_t auth_begin = colon + 3;
  size_t auth_end = url.find_first_of("/?#", auth_begin);
  if (auth_end == std::string_view::npos) auth_end = url.size();
  size_t path_end = url.find_first_of("?#", auth_end);
  if (path_end == std::string_view::npos) path_end = url.size();
  size_t frag_mark = url.find('#', path_end);
  if (frag_mark == std::string_view::npos) frag_mark = url.size();
  const bool has_query = path_end < url.size() && url[path_end] == '?';

  // Authority (§3.2): [userinfo "@"] host [":" port].
  size_t host_begin = auth_begin;
  const size_t at = url.find('@', auth_begin);
  const bool has_userinfo = at < auth_end;
  if (has_userinfo) {
    const size_t second = url.find('@', at + 1);
    if (second < auth_end) return Invalid(url, "more than one '@' in authority", second);
    host_begin = at + 1;
  }
  std::string host;
  size_t port_colon = std::string_view::npos;
  if (host_begin < auth_end && url[host_begin] == '[') {
    const size_t close = url.find(']', host_begin);
    if (close >= auth_end) return Invalid(url, "unterminated IP literal", host_begin);
    SHINGLETON_RETURN_IF_ERROR(NormalizeIpLiteral(url, host_begin + 1, close, &host));
    if (close + 1 < auth_end) {
      if (url[close + 1] != ':') {
        return Invalid(url, "unexpected character after IP literal", close + 1);
      }
      port_colon = close + 1;
    }
  } else {
    const size_t c = url.find(':', host_begin);
    const size_t host_end = c < auth_end ? c : auth_end;
    if (c < auth_end) port_colon = c;
    SHINGLETON_RETURN_IF_ERROR(NormalizeRegName(url, host_begin, host_end, &host));
  }
  if (host.empty() && is_http) return Invalid(url, "empty host", host_begin);
  std::string port;
  if (port_colon != std::string_view::npos) {
    SHINGLETON_RETURN_IF_ERROR(
        NormalizePort(url, port_colon + 1, auth_end, scheme, &port));
  }

  // Path (§3.3, §5.2.4, §6.2.2.3, §6.2.3).
  std::string path;
  SHINGLETON_RETURN_IF_ERROR(AppendPercentNormalized(url, auth_end, path_end, &path));
  path = RemoveDotSegments(path);
  if (path.empty() && is_http) path = "/";

  // Query (§3.4).
  std::string query;
  if (has_query) {
    std::string encoded;
    SHINGLETON_RETURN_IF_ERROR(
        AppendPercentNormalized(url, path_end + 1, frag_mark, &encoded));
    query = NormalizeQuery(encoded, options);
  }

  // Fragment (§3.5).
  std::string fragment;
  if (!options.drop_fragment && frag_mark < url.size()) {
    SHINGLETON_RETURN_IF_ERROR(
        AppendPercentNormalized(url, frag_mark + 1, url.size(), &fragment));
  }

  std::string out;
  out.reserve(url.size());
  out.append(scheme).append("://");
  if (has_userinfo) out.append(url.substr(auth_begin, at - auth_begin)).push_back('@');
  out.append(host);
  if (!port.empty()) out.append(":").append(port);
  out.append(path);
  if (!query.empty()) out.append("?").append(query);
  if (!fragment.empty()) out.append("#").append(fragment);
  return out;
}

}  // namespace shingleton
