#include "index/json_writer.h"

#include <cmath>
#include <cstdio>

namespace shingleton {

void AppendJsonString(std::string* out, std::string_view s) {
  static const char kHex[] = "0123456789abcdef";
  out->push_back('"');
  size_t start = 0;  // first byte not yet copied; runs without escapes are copied at once
  for (size_t i = 0; i < s.size(); ++i) {
    const unsigned char c = static_cast<unsigned char>(s[i]);
    if (c >= 0x20 && c != '"' && c != '\\') continue;
    out->append(s.data() + start, i - start);
    start = i + 1;
    switch (c) {
      case '"': out->append("\\\""); break;
      case '\\': out->append("\\\\"); break;
      case '\n': out->append("\\n"); break;
      case '\r': out->append("\\r"); break;
      case '\t': out->append("\\t"); break;
      case '\b': out->append("\\b"); break;
      case '\f': out->append("\\f"); break;
      default:
        out->append("\\u00");
        out->push_back(kHex[c >> 4]);
        out->push_back(kHex[c & 15]);
    }
  }
  out->append(s.data() + start, s.size() - start);
  out->push_back('"');
}

void JsonWriter::Separate() {
  if (after_key_) {
    after_key_ = false;
    return;
  }
  if (!first_.empty()) {
    if (!first_.back()) out_.push_back(',');
    first_.back() = false;
  }
}

void JsonWriter::Open(char c) {
  Separate();
  out_.push_back(c);
  first_.push_back(true);
}

void JsonWriter::Close(char c) {
  out_.push_back(c);
  first_.pop_back();
}

void JsonWriter::Key(std::string_view k) {
  Separate();
  AppendJsonString(&out_, k);
  out_.push_back(':');
  after_key_ = true;
}

void JsonWriter::String(std::string_view v) {
  Separate();
  AppendJsonString(&out_, v);
}

void JsonWriter::Int(int64_t v) {
  Separate();
  out_ += std::to_string(v);
}

void JsonWriter::Uint(uint64_t v) {
  Separate();
  out_ += std::to_string(v);
}

void JsonWriter::Double(double v, int digits) {
  Separate();
  if (!std::isfinite(v)) {
    out_ += "null";
    return;
  }
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*f", digits, v);
  out_ += buf;
}

void JsonWriter::Bool(bool v) {
  Separate();
  out_ += v ? "true" : "false";
}

void JsonWriter::Null() {
  Separate();
  out_ += "null";
}

}  // namespace shingleton
