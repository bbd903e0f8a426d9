// DocTable: the documents of one job in memory — what decisions need of their
// metadata, and the signatures of the documents that verification needs —
// addressable by dense index (arrival order within the table) and by key.
//
// Memory per document is a fixed record (key, counts, rank, content hash), its id,
// source and date packed in one arena, and a slot number: about 100 bytes plus the
// id and source. The URL and the excerpt are dropped on insert (they live in the
// index). A signature (4k bytes) is held only when given to Add() or SetSignature():
// the embedded job loads only the documents that share a bucket with another one
// (or have an exact duplicate), so a million-document job does not hold a million
// signatures.
// Keys are checked on insert: the same id twice is a duplicate id, two ids with
// the same key are a key collision; both are refused (never merged).
//
// Thread safety: Add() and SetSignature() need exclusive access; const methods may
// run concurrently once adding has finished.
#pragma once

#include <cstdint>
#include <string>
#include <utility>
#include <vector>

#include "index/document.h"
#include "index/flat_map.h"
#include "index/status.h"

namespace shingleton {

class DocTable {
 public:
  explicit DocTable(int num_hashes) : k_(num_hashes) {}

  // Adds a document; `sig` has num_hashes values, or is nullptr (no signature held
  // yet). AlreadyExists on a duplicate id (naming both sources) or a key collision.
  Status Add(const DocumentMeta& doc, const uint32_t* sig);
  // Holds the signature of document i (replacing an earlier one). REQUIRES: i < size().
  void SetSignature(size_t i, const uint32_t* sig);

  // Room for n held signatures in all (avoids regrowing while loading them).
  void ReserveSignatures(size_t n);
  // Frees every held signature (signature() is then nullptr for all documents).
  void ReleaseSignatures();

  size_t size() const { return records_.size(); }
  int num_hashes() const { return k_; }
  uint64_t key(size_t i) const { return records_[i].key; }
  // The normalised-content hash (hi, lo) of document i.
  std::pair<uint64_t, uint64_t> content(size_t i) const { return {records_[i].content_hi, records_[i].content_lo}; }
  // The document without url and excerpt (built on each call).
  DocumentMeta doc(size_t i) const;
  // Its id alone, without building the rest (valid until the next Add()).
  std::string_view id(size_t i) const { return Piece(records_[i].strings, records_[i].id_size); }
  // The held signature of document i, or nullptr.
  const uint32_t* signature(size_t i) const {
    const uint32_t slot = records_[i].sig_slot;
    return slot == kNoSlot ? nullptr : &sigs_[static_cast<size_t>(slot) * k_];
  }
  // Dense index of a key, or -1.
  int64_t IndexOf(uint64_t key) const {
    const uint32_t* i = index_.find(key);
    return i == nullptr ? -1 : static_cast<int64_t>(*i);
  }
  const uint32_t* SignatureOf(uint64_t key) const {
    int64_t i = IndexOf(key);
    return i < 0 ? nullptr : signature(static_cast<size_t>(i));
  }
  size_t signatures_held() const { return sigs_.size() / (k_ > 0 ? k_ : 1); }

 private:
  static constexpr uint32_t kNoSlot = UINT32_MAX;
  struct Record {
    uint64_t key, ordinal, text_bytes, tokens;
    double rank;
    uint64_t content_hi, content_lo;
    uint64_t strings;  // offset of id | source | date in arena_
    uint32_t id_size, source_size, date_size;
    uint32_t sig_slot;
  };
  std::string_view Piece(uint64_t offset, uint32_t size) const { return {arena_.data() + offset, size}; }

  int k_;
  std::vector<Record> records_;
  std::string arena_;
  std::vector<uint32_t> sigs_;
  FlatMap<uint64_t, uint32_t, IdentityHash64> index_;  // key -> dense index
};

}  // namespace shingleton
