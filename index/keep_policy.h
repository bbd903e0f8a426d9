// KeepPolicy: which document of a cluster is kept.
//
//   longest     the most bytes of raw text (default)
//   first       the earliest in input order (files in the order given, then lines)
//   field:NAME  the largest numeric value of metadata field NAME; documents without
//               it rank below all that have it
//   newest      the latest capture date (WARC-Date, or --date-field); undated last
//   oldest      the earliest capture date; undated last
// Remaining ties go to the smallest id (bytewise), so `longest` and `field:NAME`
// do not depend on input order.
//
// Thread safety: immutable value.
#pragma once

#include <string>

#include "index/document.h"
#include "index/status.h"

namespace shingleton {

class KeepPolicy {
 public:
  enum class Kind { kLongest, kFirst, kField, kNewest, kOldest };

  KeepPolicy() = default;
  static StatusOr<KeepPolicy> Parse(const std::string& text);

  Kind kind() const { return kind_; }
  const std::string& field() const { return field_; }
  std::string Name() const;
  bool DependsOnInputOrder() const { return kind_ == Kind::kFirst; }

  // True if `a` is to be kept in preference to `b`. A strict weak order.
  bool Prefer(const DocumentMeta& a, const DocumentMeta& b) const;

 private:
  Kind kind_ = Kind::kLongest;
  std::string field_;
};

}  // namespace shingleton
