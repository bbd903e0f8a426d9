#include "index/manifest.h"

#include <cinttypes>
#include <cstdio>

#include "index/json_writer.h"

namespace shingleton {

std::string ClusterLabel(uint64_t kept_key) {
  char buf[17];
  std::snprintf(buf, sizeof buf, "%016" PRIx64, kept_key);
  return buf;
}

std::vector<ManifestRow> ManifestRows(const DocTable& docs, const std::vector<Decision>& decisions) {
  std::vector<ManifestRow> rows(docs.size());
  for (size_t i = 0; i < docs.size(); ++i) {
    const Decision& d = decisions[i];
    ManifestRow& r = rows[i];
    r.id = docs.id(i);  // id() and content(), not doc(): doc() builds every string
    if (!d.kept()) {
      const size_t kept = static_cast<size_t>(docs.IndexOf(d.kept_key));
      r.duplicate_of = docs.id(kept);
      r.reason = docs.content(i) == docs.content(kept) ? DropReason::kExact : DropReason::kNear;
    }
    r.cluster = d.cluster;
    r.cluster_size = d.cluster_size;
    r.similarity = d.similarity;
  }
  return rows;
}

Status ManifestWriter::Prepare(const std::string& dir, const std::vector<ManifestRow>& rows) {
  keep_ = std::make_unique<AtomicFile>(dir + "/keep.jsonl");
  drop_ = std::make_unique<AtomicFile>(dir + "/drop.jsonl");
  SHINGLETON_RETURN_IF_ERROR(keep_->Open());
  SHINGLETON_RETURN_IF_ERROR(drop_->Open());
  std::string keep_buf, drop_buf;
  JsonWriter w;
  for (const ManifestRow& r : rows) {
    w.Clear();
    w.BeginObject();
    w.Key("id");
    w.String(r.id);
    if (r.kept()) {
      w.Key("cluster");
      w.String(ClusterLabel(r.cluster));
      w.Key("cluster_size");
      w.Uint(r.cluster_size);
    } else {
      w.Key("duplicate_of");
      w.String(r.duplicate_of);
      w.Key("cluster");
      w.String(ClusterLabel(r.cluster));
      w.Key("similarity");
      w.Double(r.similarity, 4);
      w.Key("reason");
      w.String(DropReasonName(r.reason));
      if (!r.reference.empty()) {
        w.Key("reference");
        w.String(r.reference);
      }
    }
    w.EndObject();
    std::string& buf = r.kept() ? keep_buf : drop_buf;
    buf += w.str();
    buf.push_back('\n');
    if (buf.size() > (1 << 20)) {
      SHINGLETON_RETURN_IF_ERROR((r.kept() ? keep_ : drop_)->Append(buf));
      buf.clear();
    }
  }
  SHINGLETON_RETURN_IF_ERROR(keep_->Append(keep_buf));
  SHINGLETON_RETURN_IF_ERROR(drop_->Append(drop_buf));
  SHINGLETON_RETURN_IF_ERROR(keep_->Finish());
  return drop_->Finish();
}

Status ManifestWriter::Commit() {
  SHINGLETON_RETURN_IF_ERROR(keep_->Commit());
  return drop_->Commit();
}

}  // namespace shingleton
