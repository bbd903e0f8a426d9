#include "index/doc_table.h"

#include <algorithm>

namespace shingleton {

Status DocTable::Add(const DocumentMeta& doc, const uint32_t* sig) {
  auto [held, inserted] = index_.emplace(doc.key, static_cast<uint32_t>(records_.size()));
  if (!inserted) {
    const DocumentMeta other = this->doc(*held);
    if (other.id == doc.id) {
      return Status::AlreadyExists("duplicate id \"" + doc.id + "\" at " + doc.source +
                                   " (first seen at " + other.source + ")");
    }
    return Status::AlreadyExists("ids \"" + doc.id + "\" (" + doc.source + ") and \"" + other.id +
                                 "\" (" + other.source + ") have the same 64-bit key; " +
                                 "rename one of them");
  }
  Record r;
  r.key = doc.key;
  r.ordinal = doc.ordinal;
  r.text_bytes = doc.text_bytes;
  r.tokens = doc.tokens;
  r.rank = doc.rank;
  r.content_hi = doc.content_hi;
  r.content_lo = doc.content_lo;
  r.strings = arena_.size();
  r.id_size = static_cast<uint32_t>(doc.id.size());
  r.source_size = static_cast<uint32_t>(doc.source.size());
  r.date_size = static_cast<uint32_t>(doc.date.size());
  r.sig_slot = kNoSlot;
  arena_ += doc.id;
  arena_ += doc.source;
  arena_ += doc.date;
  records_.push_back(r);
  if (sig) SetSignature(records_.size() - 1, sig);
  return Status::Ok();
}

void DocTable::SetSignature(size_t i, const uint32_t* sig) {
  Record& r = records_[i];
  if (r.sig_slot == kNoSlot) {  // appended as is: no zero fill first
    r.sig_slot = static_cast<uint32_t>(sigs_.size() / k_);
    sigs_.insert(sigs_.end(), sig, sig + k_);
    return;
  }
  std::copy(sig, sig + k_, sigs_.begin() + static_cast<size_t>(r.sig_slot) * k_);
}

void DocTable::ReserveSignatures(size_t n) { sigs_.reserve(n * static_cast<size_t>(k_)); }

void DocTable::ReleaseSignatures() {
  for (Record& r : records_) r.sig_slot = kNoSlot;
  std::vector<uint32_t>().swap(sigs_);
}

DocumentMeta DocTable::doc(size_t i) const {
  const Record& r = records_[i];
  DocumentMeta d;
  d.key = r.key;
  d.ordinal = r.ordinal;
  d.text_bytes = r.text_bytes;
  d.tokens = r.tokens;
  d.rank = r.rank;
  d.content_hi = r.content_hi;
  d.content_lo = r.content_lo;
  d.id = std::string(Piece(r.strings, r.id_size));
  d.source = std::string(Piece(r.strings + r.id_size, r.source_size));
  d.date = std::string(Piece(r.strings + r.id_size + r.source_size, r.date_size));
  return d;
}

}  // namespace shingleton
