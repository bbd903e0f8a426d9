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

Status ManifestWriter::Prepare(const std::string& dir, const DocTable& docs,
                               const std::vector<Decision>& decisions) {
  keep_ = std::make_unique<AtomicFile>(dir + "/keep.jsonl");
  drop_ = std::make_unique<AtomicFile>(dir + "/drop.jsonl");
  SHINGLETON_RETURN_IF_ERROR(keep_->Open());
  SHINGLETON_RETURN_IF_ERROR(drop_->Open());
  std::string keep_buf, drop_buf;
  JsonWriter w;
  for (size_t i = 0; i < docs.size(); ++i) {
    const Decision& d = decisions[i];
    w.Clear();
    w.BeginObject();
    w.Key("id");
    w.String(docs.doc(i).id);
    if (d.kept()) {
      w.Key("cluster");
      w.String(ClusterLabel(d.cluster));
      w.Key("cluster_size");
      w.Uint(d.cluster_size);
    } else {
      const int64_t kept = docs.IndexOf(d.kept_key);
      w.Key("duplicate_of");
      w.String(docs.doc(static_cast<size_t>(kept)).id);
      w.Key("cluster");
      w.String(ClusterLabel(d.cluster));
      w.Key("similarity");
      w.Double(d.similarity, 4);
    }
    w.EndObject();
    std::string& buf = d.kept() ? keep_buf : drop_buf;
    buf += w.str();
    buf.push_back('\n');
    for (auto* pair : {&keep_buf, &drop_buf}) {
      if (pair->size() > (1 << 20)) {
        SHINGLETON_RETURN_IF_ERROR((pair == &keep_buf ? keep_ : drop_)->Append(*pair));
        pair->clear();
      }
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
