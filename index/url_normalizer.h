// URL normaliser: a crawled page's URL -> the key that recognises the same page
// when it is re-crawled under a different spelling of that URL.
//
// Contract. NormalizeUrl accepts an absolute URI with an authority, parsed per
// RFC 3986 §3 as  scheme ":" "//" authority path ["?" query] ["#" fragment],
// where authority is [userinfo "@"] host [":" port]. Anything else ("not a url",
// "http//x", "mailto:a@b", "") is InvalidArgument, naming the byte offset of the
// problem. The result is itself accepted by NormalizeUrl and maps to itself
// (idempotent). The key identifies a page for de-duplication; it is not meant for
// fetching (some rules below, such as sorting the query, are beyond what RFC 3986
// guarantees to preserve meaning).
//
// Rules, applied in this order:
//  1. Characters. Bytes 0x00-0x20 and 0x7F (controls, space) anywhere are
//     rejected; callers trim whitespace first. Other bytes that RFC 3986 §2 does
//     not allow (non-ASCII, '{', '|', '^', ...) are accepted leniently in the
//     userinfo, path, query and fragment and kept byte for byte (they are not
//     percent-encoded, so "/{a}" and "/%7Ba%7D" stay distinct).
//  2. Scheme: ALPHA *( ALPHA / DIGIT / "+" / "-" / "." ) (§3.1), lowercased
//     (§6.2.2.1).
//  3. Userinfo: kept exactly as written, including an empty one ("http://@h/").
//     More than one '@' in the authority is rejected.
//  4. Host (§3.2.2): a reg-name of unreserved, sub-delims and percent-encodings,
//     or an IP literal in brackets. A reg-name gets rule 7, then is lowercased
//     (§6.2.2.1) except for the hex digits of remaining percent-encodings, which
//     stay uppercase. Non-ASCII hosts are rejected: convert IDNs to A-labels
//     first. An IP literal ("[...]") must be IPvFuture ("v" HEXDIG "." ...) or
//     consist of hex digits, ':' and '.' with at least two ':' (the character set
//     is checked, not the full IPv6 grammar); it is lowercased and otherwise kept
//     (no RFC 5952 compression, so "[::1]" and "[0::1]" stay distinct). An empty
//     host is rejected for http and https and allowed for other schemes.
//  5. Trailing dot (our decision): one trailing '.' of a reg-name ("example.com.")
//     is removed. It names the same DNS node (the root label), and a re-crawl
//     under the absolute spelling is the same page. "." alone and names ending
//     in ".." are left alone.
//  6. Port (§3.2.3, §6.2.3): digits only, at most 65535, leading zeros dropped
//     (":0080" is port 80). The port and its ':' are removed when the port is
//     empty ("http://h:/") or is the scheme's default: 80 for http, 443 for
//     https. No other scheme has a default here.
//  7. Percent-encoding (§6.2.2.2), in host, path, query and fragment: the hex
//     digits of every "%XX" are uppercased, and an encoded unreserved character
//     (ALPHA / DIGIT / "-" / "." / "_" / "~", §2.3) is decoded ("%7e" -> "~",
//     "%41" -> "A"). Reserved characters (gen-delims and sub-delims, §2.2) stay
//     encoded ("%3a" -> "%3A"), and '+' is never turned into a space or back.
//     A '%' not followed by two hex digits is rejected (§2.1).
//  8. Path: dot segments are removed (§5.2.4, §6.2.2.3) after rule 7, so "%2E"
//     counts as ".". For http and https an empty path becomes "/" (§6.2.3); for
//     other schemes it stays empty. Case and all other bytes are kept.
//  9. Query, when drop_tracking_params or sort_query is set: split on '&' into
//     parameters; empty parameters ("a=1&&b=2") are dropped. A parameter's name is
//     the text before its first '=' (the whole parameter if there is none).
//     - drop_tracking_params removes parameters whose name, compared
//       case-insensitively after rule 7, is a tracking parameter (see
//       TrackingParameters()). All other parameters are kept.
//     - sort_query orders the remaining parameters by name, then by the rest of
//       the parameter (so by value, with "a" before "a=" before "a=x"), in byte
//       order ('B' < 'a'); each parameter keeps its spelling and encoding.
//     With both options off the query is kept as written (after rule 7).
// 10. A "?" whose query is empty, as written or after rule 9, is dropped. RFC 3986
//     §6.2.3 does not license this for http; we do it because such a URL serves
//     the same page.
// 11. Fragment: dropped when drop_fragment is set (a fragment is resolved by the
//     client and never reaches the server). Otherwise it is kept after rule 7,
//     except that an empty fragment's '#' is dropped, as for rule 10.
//
// Thread safety: all functions are reentrant and touch no mutable shared state;
// TrackingParameters() returns a reference to an immutable list.
#pragma once

#include <string>
#include <string_view>
#include <vector>

#include "index/status.h"

namespace shingleton {

struct UrlNormalizeOptions {
  bool drop_tracking_params = true;  // rule 9: remove TrackingParameters()
  bool sort_query = true;            // rule 9: order parameters by name then value
  bool drop_fragment = true;         // rule 11
};

// Returns the normalised form used to recognise a page re-crawled under a
// different spelling of its URL (rules above); InvalidArgument for strings that
// are not absolute http(s)/other URIs with an authority.
StatusOr<std::string> NormalizeUrl(std::string_view url,
                                   const UrlNormalizeOptions& options = {});

// The documented set of tracking parameters removed by drop_tracking_params.
// Names are compared case-insensitively; an entry ending in '_' is a prefix and
// matches every parameter whose name starts with it ("utm_" matches utm_source,
// utm_medium, utm_campaign, ...); any other entry matches that name only.
// Entries are lowercase. The set is limited to parameters that ad and analytics
// systems append to links to attribute a click and that do not select content:
//   utm_     campaign tagging (utm_source, utm_medium, utm_campaign, utm_term,
//            utm_content, ...)
//   gclid, gbraid, wbraid, dclid   Google Ads / Campaign Manager click ids
//   _ga, _gl                       Google Analytics cross-domain linker
//   fbclid                         Facebook click id
//   igshid                         Instagram share id
//   msclkid                        Microsoft Advertising click id
//   twclid                         Twitter/X click id
//   ttclid                         TikTok click id
//   li_fat_id                      LinkedIn click id
//   yclid                          Yandex click id
//   mc_cid, mc_eid                 Mailchimp campaign / recipient ids
// Generic names such as "ref", "source" or "id" are deliberately absent: on many
// sites they change what the page shows.
const std::vector<std::string>& TrackingParameters();

// True if `name` (a query parameter name, already percent-normalised) matches
// TrackingParameters() as described there.
bool IsTrackingParameter(std::string_view name);

// RFC 3986 §5.2.4 remove_dot_segments, exactly as specified: works on absolute
// ("/a/./b") and relative ("a/../b") paths and on bytes only (no percent-decoding;
// NormalizeUrl decodes first).
std::string RemoveDotSegments(std::string_view path);

}  // namespace shingleton
