#include "index/doc_table.h"

namespace shingleton {

Status DocTable::Add(DocumentMeta doc, const uint32_t* sig) {
  auto [it, inserted] = index_.emplace(doc.key, static_cast<uint32_t>(docs_.size()));
  if (!inserted) {
    const DocumentMeta& other = docs_[it->second];
    if (other.id == doc.id) {
      return Status::AlreadyExists("duplicate id \"" + doc.id + "\" at " + doc.source +
                                   " (first seen at " + other.source + ")");
    }
    return Status::AlreadyExists("ids \"" + doc.id + "\" (" + doc.source + ") and \"" + other.id +
                                 "\" (" + other.source + ") have the same 64-bit key; " +
                                 "rename one of them");
  }
  doc.url = std::string();
  doc.excerpt = std::string();
  sigs_.insert(sigs_.end(), sig, sig + k_);
  docs_.push_back(std::move(doc));
  return Status::Ok();
}

}  // namespace shingleton
