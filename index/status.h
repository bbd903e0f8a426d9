// Status and StatusOr: errors as values at every module boundary.
//
// A Status is either OK or carries a code and a message that names what failed
// and where (file and line, byte offset, record id). Statuses are cheap to copy.
// StatusOr<T> holds either a value or a non-OK Status.
//
// Thread safety: values; no shared state.
#pragma once

#include <cassert>
#include <optional>
#include <string>
#include <utility>

namespace shingleton {

class [[nodiscard]] Status {
 public:
  enum class Code {
    kOk = 0,
    kInvalidArgument,  // the caller's options or parameters are wrong
    kBadInput,         // an input record is malformed (names file and line)
    kNotFound,
    kAlreadyExists,
    kMismatch,  // a persisted format or scheme differs from the expected one
    kIoError,
    kCorruption,
    kInternal,
  };

  Status() = default;
  static Status Ok() { return Status(); }
  static Status InvalidArgument(std::string m) { return {Code::kInvalidArgument, std::move(m)}; }
  static Status BadInput(std::string m) { return {Code::kBadInput, std::move(m)}; }
  static Status NotFound(std::string m) { return {Code::kNotFound, std::move(m)}; }
  static Status AlreadyExists(std::string m) { return {Code::kAlreadyExists, std::move(m)}; }
  static Status Mismatch(std::string m) { return {Code::kMismatch, std::move(m)}; }
  static Status IoError(std::string m) { return {Code::kIoError, std::move(m)}; }
  static Status Corruption(std::string m) { return {Code::kCorruption, std::move(m)}; }
  static Status Internal(std::string m) { return {Code::kInternal, std::move(m)}; }

  bool ok() const { return code_ == Code::kOk; }
  Code code() const { return code_; }
  const std::string& message() const { return message_; }
  // "bad input: data.jsonl:12: missing field \"id\"" style, for logs and stderr.
  std::string ToString() const;

  // Returns a copy whose message is prefixed with `context` and ": ".
  Status WithContext(const std::string& context) const;

 private:
  Status(Code code, std::string message) : code_(code), message_(std::move(message)) {}
  Code code_ = Code::kOk;
  std::string message_;
};

template <typename T>
class [[nodiscard]] StatusOr {
 public:
  StatusOr(Status status) : status_(std::move(status)) { assert(!status_.ok()); }  // NOLINT
  StatusOr(T value) : value_(std::move(value)) {}                                // NOLINT

  bool ok() const { return status_.ok(); }
  const Status& status() const { return status_; }
  // REQUIRES: ok().
  T& value() & { assert(ok()); return *value_; }
  const T& value() const& { assert(ok()); return *value_; }
  // By value: `for (auto& x : F().value())` must not dangle when F() returns a temporary.
  T value() && { assert(ok()); return std::move(*value_); }
  T* operator->() { return &value(); }
  const T* operator->() const { return &value(); }
  T& operator*() { return value(); }

 private:
  Status status_;
  std::optional<T> value_;
};

}  // namespace shingleton

// Returns early from the enclosing function when `expr` yields a non-OK Status.
#define SHINGLETON_RETURN_IF_ERROR(expr)         \
  do {                                           \
    ::shingleton::Status _st = (expr);           \
    if (!_st.ok()) return _st;                   \
  } while (0)

#define SHINGLETON_CONCAT_INNER(a, b) a##b
#define SHINGLETON_CONCAT(a, b) SHINGLETON_CONCAT_INNER(a, b)
// Declares `lhs` from a StatusOr expression, returning its Status on error.
#define SHINGLETON_ASSIGN_OR_RETURN(lhs, expr) \
  SHINGLETON_ASSIGN_OR_RETURN_IMPL(SHINGLETON_CONCAT(_so_, __LINE__), lhs, expr)
#define SHINGLETON_ASSIGN_OR_RETURN_IMPL(tmp, lhs, expr) \
  auto tmp = (expr);                                     \
  if (!tmp.ok()) return tmp.status();                    \
  lhs = std::move(tmp).value()
