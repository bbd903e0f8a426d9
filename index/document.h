// Plain data types shared by the stages: a document's metadata, a verified
// edge, and a keep/drop decision.
//
// Identity: a document is its external id; its 64-bit key is XXH3-64 of the id
// bytes (seed 0, independent of the sketch scheme). Key collisions between
// different ids are detected where keys are assigned and refused, never merged.
#pragma once

#include <cmath>
#include <cstdint>
#include <string>
#include <string_view>

namespace shingleton {

uint64_t DocKey(std::string_view id);

struct DocumentMeta {
  uint64_t key = 0;
  std::string id;
  std::string url;        // may be empty
  uint64_t ordinal = 0;   // position in the job's input order (files in order, then lines)
  uint64_t text_bytes = 0;  // UTF-8 bytes of the raw text field
  uint64_t tokens = 0;      // tokens after normalisation
  double rank = NAN;        // the keep-policy field's value (field:NAME); NaN if absent
  std::string excerpt;      // first bytes of the raw text, for audit (may be empty)
  std::string source;       // "file:line" of the record
  std::string date;         // ISO 8601 date of the capture (WARC-Date or a date field); may be empty
  // XXH3-128 of the normalised text: equal hashes mean identical normalised text.
  uint64_t content_hi = 0, content_lo = 0;
  bool SameContent(const DocumentMeta& o) const {
    return content_hi == o.content_hi && content_lo == o.content_lo;
  }
};

// A verified candidate pair: estimated Jaccard >= threshold. a < b (by key).
struct Edge {
  uint64_t a = 0;
  uint64_t b = 0;
  float similarity = 0;
  uint16_t band = 0;  // the lowest band in which the pair shared a bucket; kExactBand:
                      // identical normalised text, found without LSH
  static constexpr uint16_t kExactBand = 0xFFFF;

  bool operator<(const Edge& o) const { return a != o.a ? a < o.a : b < o.b; }
  bool SamePair(const Edge& o) const { return a == o.a && b == o.b; }
};

// The outcome for one document. A kept document has kept_key == key.
struct Decision {
  uint64_t key = 0;
  uint64_t cluster = 0;      // the kept document's key: a stable cluster label
  uint64_t kept_key = 0;
  float similarity = 1;      // estimated Jaccard to the kept document
  uint32_t cluster_size = 1;
  bool for_reference = false;  // dropped in favour of a reference document (kept_key is its key)
  bool kept() const { return key == kept_key && !for_reference; }
};

}  // namespace shingleton
