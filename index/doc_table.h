// DocTable: the documents of one job in memory — metadata and signatures —
// addressable by dense index (arrival order within the table) and by key.
//
// Only what decisions need is kept: the URL and the excerpt are dropped on insert
// (they live in the index), so memory per document is its id, source and signature.
// Keys are checked on insert: the same id twice is a duplicate id, two ids with
// the same key are a key collision; both are refused (never merged).
//
// Thread safety: Add() needs exclusive access; const methods may run
// concurrently once adding has finished.
#pragma once

#include <cstdint>
#include <unordered_map>
#include <vector>

#include "index/document.h"
#include "index/status.h"

namespace shingleton {

class DocTable {
 public:
  explicit DocTable(int num_hashes) : k_(num_hashes) {}

  // Adds a document; `sig` has num_hashes values. AlreadyExists on a duplicate id
  // (naming both sources) or a key collision.
  Status Add(DocumentMeta doc, const uint32_t* sig);

  size_t size() const { return docs_.size(); }
  int num_hashes() const { return k_; }
  const DocumentMeta& doc(size_t i) const { return docs_[i]; }
  const uint32_t* signature(size_t i) const { return &sigs_[i * k_]; }
  // Dense index of a key, or -1.
  int64_t IndexOf(uint64_t key) const {
    auto it = index_.find(key);
    return it == index_.end() ? -1 : static_cast<int64_t>(it->second);
  }
  const uint32_t* SignatureOf(uint64_t key) const {
    int64_t i = IndexOf(key);
    return i < 0 ? nullptr : signature(static_cast<size_t>(i));
  }

 private:
  int k_;
  std::vector<DocumentMeta> docs_;
  std::vector<uint32_t> sigs_;
  std::unordered_map<uint64_t, uint32_t> index_;
};

}  // namespace shingleton
