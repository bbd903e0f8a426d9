#include "index/record_parser.h"

#include "index/normalizer.h"

namespace shingleton {
namespace {

Status Fail(BadRecord k, BadRecord* kind, std::string msg) {
  *kind = k;
  return Status::BadInput(std::move(msg));
}

}  // namespace

const char* BadRecordName(BadRecord kind) {
  switch (kind) {
    case BadRecord::kNone: return "none";
    case BadRecord::kMalformedJson: return "malformed_json";
    case BadRecord::kMissingField: return "missing_field";
    case BadRecord::kWrongType: return "wrong_type";
    case BadRecord::kInvalidUtf8: return "invalid_utf8";
    case BadRecord::kDuplicateId: return "duplicate_id";
    case BadRecord::kMalformedRecord: return "malformed_record";
    case BadRecord::kCount: break;
  }
  return "?";
}

Status RecordParser::Parse(const char* data, size_t len, size_t capacity, ParsedRecord* out,
                           BadRecord* kind) {
  *kind = BadRecord::kNone;
  if (capacity < len + simdjson::SIMDJSON_PADDING) {
    return Status::Internal("record buffer lacks simdjson padding");
  }
  simdjson::dom::element root;
  auto err = parser_.parse(data, len, /*realloc_if_needed=*/false).get(root);
  if (err == simdjson::UTF8_ERROR) {
    return Fail(BadRecord::kInvalidUtf8, kind, "invalid UTF-8 in the record");
  }
  if (err) return Fail(BadRecord::kMalformedJson, kind, std::string("malformed JSON: ") +
                                                            simdjson::error_message(err));
  simdjson::dom::object obj;
  if (root.get(obj)) return Fail(BadRecord::kMalformedJson, kind, "the line is not a JSON object");

  simdjson::dom::element id, text;
  if (obj[fields_.id].get(id)) {
    return Fail(BadRecord::kMissingField, kind, "missing field \"" + fields_.id + "\"");
  }
  if (id.get(out->id)) {
    return Fail(BadRecord::kWrongType, kind, "field \"" + fields_.id + "\" is not a string");
  }
  if (out->id.empty()) return Fail(BadRecord::kWrongType, kind, "field \"" + fields_.id + "\" is empty");
  if (obj[fields_.text].get(text)) {
    return Fail(BadRecord::kMissingField, kind, "missing field \"" + fields_.text + "\"");
  }
  if (text.get(out->text)) {
    return Fail(BadRecord::kWrongType, kind, "field \"" + fields_.text + "\" is not a string");
  }
  // simdjson validates the raw bytes; escapes (\uXXXX) are checked again here.
  Status utf8 = ValidateUtf8(out->text);
  if (!utf8.ok()) return Fail(BadRecord::kInvalidUtf8, kind, utf8.message());

  out->url = {};
  simdjson::dom::element url;
  if (!fields_.url.empty() && !obj[fields_.url].get(url) && !url.is_null()) {
    if (url.get(out->url)) {
      return Fail(BadRecord::kWrongType, kind, "field \"" + fields_.url + "\" is not a string");
    }
  }
  out->date = {};
  simdjson::dom::element date;
  if (!fields_.date.empty() && !obj[fields_.date].get(date) && !date.is_null()) {
    if (date.get(out->date)) {
      return Fail(BadRecord::kWrongType, kind, "field \"" + fields_.date + "\" is not a string");
    }
  }
  out->rank = NAN;
  simdjson::dom::element rank;
  if (!fields_.rank.empty() && !obj[fields_.rank].get(rank) && !rank.is_null()) {
    if (rank.get(out->rank)) {
      return Fail(BadRecord::kWrongType, kind, "field \"" + fields_.rank + "\" is not a number");
    }
  }
  return Status::Ok();
}

}  // namespace shingleton
