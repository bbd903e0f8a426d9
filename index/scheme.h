// SketchScheme: everything that decides a document's signature and band keys.
//
// A persisted index and every job carry exactly one scheme. Two signatures are
// comparable only when their schemes are equal, so opening an index with a
// different scheme is refused with a message that names the differing fields.
// Changing any default below bumps kSchemeFormat or kNormalizationVersion,
// because persisted indexes depend on them.
//
// Thread safety: a value type.
#pragma once

#include <cstdint>
#include <string>

#include "index/status.h"

namespace shingleton {

enum class ShingleKind { kWord, kChar };

// Signature methods (the "sig=" field of the scheme). Each name fixes its values.
// "minhash-ms32": k multiply-shift hashes of the shingle hash, 32-bit minima (minhash.h).
inline constexpr char kMinHashMethod[] = "minhash-ms32";
// "oph32-p<T>", T = 0..kMaxOphProbes: one-permutation hashing, densification with up
// to T probes then directed rotation (oph.h).
inline constexpr char kOphMethodPrefix[] = "oph32-p";
inline constexpr int kMaxOphProbes = 8;
// Sketches up to this k use 4 probes, larger ones none (oph.h explains the cost).
inline constexpr int kOphProbingMaxBins = 1024;

std::string OphMethod(int probes);
// T of an "oph32-p<T>" name; -1 when `method` is not one.
int OphProbes(const std::string& method);

// A job's sketch choice (--sketch): "minhash" -> kMinHashMethod; "oph" ->
// OphMethod(4) when num_hashes <= kOphProbingMaxBins, else OphMethod(0).
StatusOr<std::string> SignatureMethodForSketch(const std::string& sketch, int num_hashes);

struct SketchScheme {
  // Version of the canonical text encoding produced by Serialize().
  static constexpr int kSchemeFormat = 1;
  // Version of the normaliser's rules (see normalizer.h). Bump on any change.
  static constexpr int kNormalizationVersion = 1;

  int normalization_version = kNormalizationVersion;
  // Unicode version of the NFKC / case-folding tables (utf8proc's); new Unicode
  // versions change the normal form of newly assigned characters.
  std::string unicode_version;
  // Default: word 5-grams (common practice for web text).
  ShingleKind shingle_kind = ShingleKind::kWord;
  int shingle_size = 5;
  // Seed of the XXH3-64 shingle hash and of the MinHash family. Default: 0x5348494e47 ("SHING").
  uint64_t seed = 0x5348494e47ULL;
  // Signature method: kMinHashMethod or an OphMethod (above). Default: kMinHashMethod,
  // k = 128.
  std::string signature_method = kMinHashMethod;
  int num_hashes = 128;
  // LSH banding: bands × rows ≤ num_hashes. Defaults are chosen from the
  // threshold by ChooseBanding() (bands.h); 16 × 8 for threshold 0.8, k = 128.
  int bands = 16;
  int rows = 8;

  // Returns the default scheme with the running library's Unicode version.
  static SketchScheme Default();

  // Checks internal consistency (sizes > 0, bands*rows <= num_hashes, ...).
  Status Validate() const;

  // Canonical single-line text, e.g.
  // "shingleton-scheme/1 norm=1 unicode=13.0.0 shingle=word:5 seed=0x... sig=minhash-ms32:128 bands=16x8".
  std::string Serialize() const;
  static StatusOr<SketchScheme> Parse(const std::string& text);

  // Empty when equal; otherwise "k 128 vs 64, bands 16x8 vs 20x5".
  std::string DescribeDifference(const SketchScheme& other) const;
  bool operator==(const SketchScheme& o) const { return DescribeDifference(o).empty(); }
  bool operator!=(const SketchScheme& o) const { return !(*this == o); }
};

const char* ShingleKindName(ShingleKind kind);
StatusOr<ShingleKind> ParseShingleKind(const std::string& name);

}  // namespace shingleton
