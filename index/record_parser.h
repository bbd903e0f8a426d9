// RecordParser: one JSON Lines record -> the fields a job needs.
//
// The whole line is parsed and validated (simdjson DOM), so malformed JSON
// anywhere in the line is an error, not only in the fields read. `id` must be a
// string, `text` a string, `url` a string or null (optional); the keep-policy
// field, when configured, a number or null (optional). Errors carry a BadRecord
// kind (counted under --skip-bad) and a message without the location, which the
// caller prefixes with "file:line".
//
// Thread safety: a RecordParser owns simdjson buffers; use one per thread.
#pragma once

#include <simdjson.h>

#include <cmath>
#include <string>
#include <string_view>

#include "index/status.h"

namespace shingleton {

// Names of the JSON fields read from each record. Defaults: id, text, url; no rank field.
struct FieldNames {
  std::string id = "id";
  std::string text = "text";
  std::string url = "url";
  std::string rank;  // empty: not read
  std::string date;  // capture date (ISO 8601 string) for keep policies newest/oldest; empty: not read
};

enum class BadRecord { kNone = 0, kMalformedJson, kMissingField, kWrongType, kInvalidUtf8,
                       kDuplicateId, kMalformedRecord /* WARC/HTTP */, kCount };
const char* BadRecordName(BadRecord kind);

struct ParsedRecord {
  // Views into the parser's buffers: valid until the next Parse().
  std::string_view id, text, url, date;
  double rank = NAN;
};

class RecordParser {
 public:
  explicit RecordParser(FieldNames fields) : fields_(std::move(fields)) {}

  // REQUIRES: `capacity` >= len + simdjson::SIMDJSON_PADDING bytes readable at `data`.
  // On failure returns a non-OK status and sets *kind.
  Status Parse(const char* data, size_t len, size_t capacity, ParsedRecord* out, BadRecord* kind);

 private:
  FieldNames fields_;
  simdjson::dom::parser parser_;
};

}  // namespace shingleton
