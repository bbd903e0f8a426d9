#include "index/scheme.h"

#include <utf8proc.h>

#include <cinttypes>
#include <cstdio>
#include <map>
#include <sstream>

namespace shingleton {
namespace {

constexpr char kMagic[] = "shingleton-scheme/";

void AddDiff(std::string* out, const char* field, const std::string& a, const std::string& b) {
  if (a == b) return;
  if (!out->empty()) *out += ", ";
  *out += std::string(field) + " " + a + " vs " + b;
}

StatusOr<int> ParsePositiveInt(const std::string& s, const char* what) {
  char* end = nullptr;
  long v = std::strtol(s.c_str(), &end, 10);
  if (s.empty() || *end != '\0' || v <= 0 || v > 1000000) {
    return Status::Corruption(std::string("scheme field ") + what + ": bad number '" + s + "'");
  }
  return static_cast<int>(v);
}

}  // namespace

const char* ShingleKindName(ShingleKind kind) {
  return kind == ShingleKind::kWord ? "word" : "char";
}

StatusOr<ShingleKind> ParseShingleKind(const std::string& name) {
  if (name == "word") return ShingleKind::kWord;
  if (name == "char") return ShingleKind::kChar;
  return Status::InvalidArgument("unknown shingle kind '" + name + "' (expected word or char)");
}

std::string OphMethod(int probes) { return kOphMethodPrefix + std::to_string(probes); }

int OphProbes(const std::string& method) {
  const std::string prefix = kOphMethodPrefix;
  if (method.size() != prefix.size() + 1 || method.compare(0, prefix.size(), prefix) != 0) return -1;
  const int t = method.back() - '0';
  return t >= 0 && t <= kMaxOphProbes ? t : -1;
}

StatusOr<std::string> SignatureMethodForSketch(const std::string& sketch, int num_hashes) {
  if (sketch == "minhash") return std::string(kMinHashMethod);
  if (sketch == "oph") return OphMethod(num_hashes <= kOphProbingMaxBins ? 4 : 0);
  return Status::InvalidArgument("unknown sketch '" + sketch + "' (expected minhash or oph)");
}

SketchScheme SketchScheme::Default() {
  SketchScheme s;
  s.unicode_version = utf8proc_unicode_version();
  return s;
}

Status SketchScheme::Validate() const {
  if (shingle_size < 1 || shingle_size > 64)
    return Status::InvalidArgument("shingle size must be in 1..64, got " + std::to_string(shingle_size));
  if (num_hashes < 1 || num_hashes > 100000)
    return Status::InvalidArgument("number of hashes must be in 1..100000, got " + std::to_string(num_hashes));
  if (bands < 1 || rows < 1 || static_cast<int64_t>(bands) * rows > num_hashes)
    return Status::InvalidArgument("bands x rows (" + std::to_string(bands) + "x" +
                                   std::to_string(rows) + ") must be positive and at most the " +
                                   "number of hashes (" + std::to_string(num_hashes) + ")");
  if (bands > 65535) return Status::InvalidArgument("at most 65535 bands");
  if (signature_method != kMinHashMethod && OphProbes(signature_method) < 0)
    return Status::InvalidArgument("unknown signature method '" + signature_method + "'");
  return Status::Ok();
}

std::string SketchScheme::Serialize() const {
  char seed_hex[32];
  std::snprintf(seed_hex, sizeof seed_hex, "0x%016" PRIx64, seed);
  std::ostringstream out;
  out << kMagic << kSchemeFormat << " norm=" << normalization_version
      << " unicode=" << unicode_version << " shingle=" << ShingleKindName(shingle_kind) << ":"
      << shingle_size << " seed=" << seed_hex << " sig=" << signature_method << ":" << num_hashes
      << " bands=" << bands << "x" << rows;
  return out.str();
}

StatusOr<SketchScheme> SketchScheme::Parse(const std::string& text) {
  std::istringstream in(text);
  std::string head;
  in >> head;
  if (head.rfind(kMagic, 0) != 0) return Status::Corruption("not a sketch scheme record: '" + text + "'");
  if (head != kMagic + std::to_string(kSchemeFormat)) {
    return Status::Mismatch("scheme record format '" + head + "' is not supported by this build (" +
                            kMagic + std::to_string(kSchemeFormat) + ")");
  }
  std::map<std::string, std::string> fields;
  for (std::string tok; in >> tok;) {
    auto eq = tok.find('=');
    if (eq == std::string::npos) return Status::Corruption("scheme record: bad field '" + tok + "'");
    fields[tok.substr(0, eq)] = tok.substr(eq + 1);
  }
  for (const char* f : {"norm", "unicode", "shingle", "seed", "sig", "bands"}) {
    if (!fields.count(f)) return Status::Corruption(std::string("scheme record lacks field ") + f);
  }
  SketchScheme s;
  SHINGLETON_ASSIGN_OR_RETURN(s.normalization_version, ParsePositiveInt(fields["norm"], "norm"));
  s.unicode_version = fields["unicode"];
  const std::string& sh = fields["shingle"];
  auto colon = sh.find(':');
  if (colon == std::string::npos) return Status::Corruption("scheme field shingle: '" + sh + "'");
  auto kind = ParseShingleKind(sh.substr(0, colon));
  if (!kind.ok()) return Status::Corruption(kind.status().message());
  s.shingle_kind = kind.value();
  SHINGLETON_ASSIGN_OR_RETURN(s.shingle_size, ParsePositiveInt(sh.substr(colon + 1), "shingle"));
  char* end = nullptr;
  s.seed = std::strtoull(fields["seed"].c_str(), &end, 16);
  if (*end != '\0') return Status::Corruption("scheme field seed: '" + fields["seed"] + "'");
  const std::string& sig = fields["sig"];
  colon = sig.find(':');
  if (colon == std::string::npos) return Status::Corruption("scheme field sig: '" + sig + "'");
  s.signature_method = sig.substr(0, colon);
  SHINGLETON_ASSIGN_OR_RETURN(s.num_hashes, ParsePositiveInt(sig.substr(colon + 1), "sig"));
  const std::string& b = fields["bands"];
  auto x = b.find('x');
  if (x == std::string::npos) return Status::Corruption("scheme field bands: '" + b + "'");
  SHINGLETON_ASSIGN_OR_RETURN(s.bands, ParsePositiveInt(b.substr(0, x), "bands"));
  SHINGLETON_ASSIGN_OR_RETURN(s.rows, ParsePositiveInt(b.substr(x + 1), "bands"));
  return s;
}

std::string SketchScheme::DescribeDifference(const SketchScheme& o) const {
  std::string d;
  AddDiff(&d, "normalisation version", std::to_string(normalization_version),
          std::to_string(o.normalization_version));
  AddDiff(&d, "unicode version", unicode_version, o.unicode_version);
  AddDiff(&d, "shingles", std::string(ShingleKindName(shingle_kind)) + ":" + std::to_string(shingle_size),
          std::string(ShingleKindName(o.shingle_kind)) + ":" + std::to_string(o.shingle_size));
  AddDiff(&d, "seed", std::to_string(seed), std::to_string(o.seed));
  AddDiff(&d, "signature", signature_method + ":" + std::to_string(num_hashes),
          o.signature_method + ":" + std::to_string(o.num_hashes));
  AddDiff(&d, "bands", std::to_string(bands) + "x" + std::to_string(rows),
          std::to_string(o.bands) + "x" + std::to_string(o.rows));
  return d;
}

}  // namespace shingleton
