// JsonWriter: builds one JSON value as text (RFC 8259), with correct string
// escaping. Used for manifests, summaries and --json output.
//
//   JsonWriter w; w.BeginObject(); w.Key("id"); w.String("a"); w.EndObject();
//
// Thread safety: one writer per thread.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace shingleton {

// Appends `s` as a quoted JSON string. REQUIRES: s is valid UTF-8.
void AppendJsonString(std::string* out, std::string_view s);

class JsonWriter {
 public:
  void BeginObject() { Open('{'); }
  void EndObject() { Close('}'); }
  void BeginArray() { Open('['); }
  void EndArray() { Close(']'); }
  void Key(std::string_view k);
  void String(std::string_view v);
  void Int(int64_t v);
  void Uint(uint64_t v);
  // Fixed notation with `digits` decimals; NaN and infinities are written as null.
  void Double(double v, int digits = 4);
  void Bool(bool v);
  void Null();
  // A key and its value in one call.
  void Field(std::string_view k, std::string_view v) {
    Key(k);
    String(v);
  }
  void FieldUint(std::string_view k, uint64_t v) {
    Key(k);
    Uint(v);
  }
  void FieldInt(std::string_view k, int64_t v) {
    Key(k);
    Int(v);
  }
  void FieldDouble(std::string_view k, double v, int digits = 4) {
    Key(k);
    Double(v, digits);
  }
  void FieldBool(std::string_view k, bool v) {
    Key(k);
    Bool(v);
  }

  const std::string& str() const { return out_; }
  std::string Take() { return std::move(out_); }
  void Clear() { out_.clear(); first_.clear(); after_key_ = false; }

 private:
  void Open(char c);
  void Close(char c);
  void Separate();
  std::string out_;
  std::vector<bool> first_;  // per open container: no element written yet
  bool after_key_ = false;
};

}  // namespace shingleton
