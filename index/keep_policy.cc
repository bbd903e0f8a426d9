#include "index/keep_policy.h"

#include <cmath>

namespace shingleton {

StatusOr<KeepPolicy> KeepPolicy::Parse(const std::string& text) {
  KeepPolicy p;
  if (text == "longest") {
    p.kind_ = Kind::kLongest;
  } else if (text == "newest") {
    p.kind_ = Kind::kNewest;
  } else if (text == "oldest") {
    p.kind_ = Kind::kOldest;
  } else if (text == "first") {
    p.kind_ = Kind::kFirst;
  } else if (text.rfind("field:", 0) == 0 && text.size() > 6) {
    p.kind_ = Kind::kField;
    p.field_ = text.substr(6);
  } else {
    return Status::InvalidArgument("unknown keep policy '" + text +
                                   "' (expected longest, first, newest, oldest or field:NAME)");
  }
  return p;
}

std::string KeepPolicy::Name() const {
  switch (kind_) {
    case Kind::kLongest: return "longest";
    case Kind::kFirst: return "first";
    case Kind::kField: return "field:" + field_;
    case Kind::kNewest: return "newest";
    case Kind::kOldest: return "oldest";
  }
  return "?";
}

bool KeepPolicy::Prefer(const DocumentMeta& a, const DocumentMeta& b) const {
  switch (kind_) {
    case Kind::kLongest:
      if (a.text_bytes != b.text_bytes) return a.text_bytes > b.text_bytes;
      break;
    case Kind::kFirst:
      if (a.ordinal != b.ordinal) return a.ordinal < b.ordinal;
      break;
    case Kind::kField: {
      const bool ha = !std::isnan(a.rank), hb = !std::isnan(b.rank);
      if (ha != hb) return ha;
      if (ha && a.rank != b.rank) return a.rank > b.rank;
      break;
    }
    case Kind::kNewest:
    case Kind::kOldest:
      // ISO 8601 timestamps of one format order as strings do.
      if (a.date.empty() != b.date.empty()) return !a.date.empty();
      if (a.date != b.date) return kind_ == Kind::kNewest ? a.date > b.date : a.date < b.date;
      break;
  }
  return a.id < b.id;
}

}  // namespace shingleton
