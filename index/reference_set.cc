#include "index/reference_set.h"

#include <simdjson.h>
#include <xxhash.h>

#include <algorithm>
#include <chrono>
#include <ctime>
#include <filesystem>
#include <fstream>

#include "index/atomic_file.h"
#include "index/bands.h"
#include "index/json_writer.h"
#include "index/minhash.h"
#include "index/url_normalizer.h"

namespace shingleton {
namespace {

namespace fs = std::filesystem;
constexpr char kFormat[] = "shingleton-generation/1";

std::string Hex128(XXH128_hash_t h) {
  char buf[33];
  std::snprintf(buf, sizeof buf, "%016llx%016llx", static_cast<unsigned long long>(h.high64),
                static_cast<unsigned long long>(h.low64));
  return buf;
}

std::string UtcNow() {
  std::time_t t = std::time(nullptr);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", std::gmtime(&t));
  return buf;
}

}  // namespace

const char* DropReasonName(DropReason r) {
  switch (r) {
    case DropReason::kNone: return "";
    case DropReason::kExact: return "exact";
    case DropReason::kNear: return "near";
    case DropReason::kUrl: return "url";
    case DropReason::kReferenceExact: return "reference-exact";
    case DropReason::kReferenceNear: return "reference-near";
  }
  return "?";
}

DropReason ParseDropReason(const std::string& name) {
  for (DropReason r : {DropReason::kExact, DropReason::kNear, DropReason::kUrl,
                       DropReason::kReferenceExact, DropReason::kReferenceNear}) {
    if (name == DropReasonName(r)) return r;
  }
  return DropReason::kNone;
}

StatusOr<std::string> ChecksumDirectory(const std::string& dir) {
  std::vector<fs::path> files;
  std::error_code ec;
  for (const auto& e : fs::directory_iterator(dir, ec)) {
    if (e.is_regular_file()) files.push_back(e.path());
  }
  if (ec) return Status::IoError("cannot list " + dir + ": " + ec.message());
  std::sort(files.begin(), files.end());
  XXH3_state_t* state = XXH3_createState();
  XXH3_128bits_reset(state);
  std::vector<char> buf(1 << 20);
  for (const auto& f : files) {
    const std::string name = f.filename().string();
    const uint64_t size = fs::file_size(f);
    XXH3_128bits_update(state, name.data(), name.size() + 1);
    XXH3_128bits_update(state, &size, sizeof size);
    std::ifstream in(f, std::ios::binary);
    while (in) {
      in.read(buf.data(), buf.size());
      XXH3_128bits_update(state, buf.data(), static_cast<size_t>(in.gcount()));
    }
  }
  const std::string hex = Hex128(XXH3_128bits_digest(state));
  XXH3_freeState(state);
  return hex;
}

StatusOr<std::string> SealFrozenStore(const std::string& db_dir) {
  // Removes the write-time info logs so the checksum covers data files only.
  std::error_code ec;
  for (const auto& e : fs::directory_iterator(db_dir, ec)) {
    const std::string n = e.path().filename().string();
    if (n.rfind("LOG", 0) == 0) fs::remove(e.path(), ec);
  }
  return ChecksumDirectory(db_dir);
}

StatusOr<GenerationRecord> ReadGenerationRecord(const std::string& ref_dir) {
  const std::string path = ref_dir + "/generation.json";
  simdjson::dom::parser parser;
  simdjson::dom::element e;
  if (parser.load(path).get(e)) {
    return Status::NotFound(ref_dir + " is not a reference generation (no readable generation.json)");
  }
  std::string_view format, name, scheme, created, source, checksum;
  uint64_t documents = 0;
  if (e["format"].get(format) || format != kFormat) {
    return Status::Mismatch(path + ": unsupported generation format (this build reads " +
                            std::string(kFormat) + ")");
  }
  if (e["name"].get(name) || e["scheme"].get(scheme) || e["documents"].get(documents) ||
      e["created"].get(created) || e["source"].get(source) || e["checksum"].get(checksum)) {
    return Status::Corruption(path + ": missing or mistyped fields");
  }
  GenerationRecord r;
  r.name = std::string(name);
  r.scheme = std::string(scheme);
  r.documents = documents;
  r.created = std::string(created);
  r.source = std::string(source);
  r.checksum = std::string(checksum);
  return r;
}

StatusOr<GenerationRecord> FreezeGeneration(const FreezeOptions& o) {
  if (fs::exists(o.out_dir)) return Status::AlreadyExists(o.out_dir + " already exists");
  StoreOptions ro;
  ro.read_only = true;
  SHINGLETON_ASSIGN_OR_RETURN(auto job, IndexStore::Open(o.index_path, nullptr, ro));
  if (!job->GetJobRecord().ok()) {
    return Status::InvalidArgument(o.index_path + " holds no finished job (no job record)");
  }
  const SketchScheme& scheme = job->scheme();
  const std::string building = o.out_dir + ".building";
  std::error_code ec;
  fs::remove_all(building, ec);
  fs::create_directories(building, ec);
  if (ec) return Status::IoError("cannot create " + building + ": " + ec.message());
  GenerationRecord rec;
  rec.name = o.name.empty() ? fs::path(o.out_dir).filename().string() : o.name;
  rec.scheme = scheme.Serialize();
  rec.source = o.index_path;
  rec.created = UtcNow();
  {
    StoreOptions bulk;
    bulk.bulk_load = true;
    SHINGLETON_ASSIGN_OR_RETURN(auto gen, IndexStore::Create(building + "/db", scheme, bulk));
    WriteBatchBuilder batch(gen.get());
    std::vector<uint64_t> buckets(scheme.bands);
    // One key-order scan of documents, decisions and signatures (no point lookups).
    Status s = job->ForEachDocumentRecord([&](const DocumentMeta& doc, const Decision* d,
                                              const std::vector<uint32_t>& sig) -> Status {
      if (!o.all_documents) {
        if (d == nullptr) return Status::Corruption("document " + doc.id + " has no decision in " + o.index_path);
        if (!d->kept()) return Status::Ok();
      }
      if (sig.empty()) return Status::Corruption("document " + doc.id + " has no signature in " + o.index_path);
      BandBuckets(sig.data(), scheme.bands, scheme.rows, scheme.seed, buckets.data());
      batch.AddDocument(doc, sig.data(), scheme.num_hashes, buckets.data());
      batch.AddContent(doc);
      if (!doc.url.empty()) {
        auto url = NormalizeUrl(doc.url);
        if (url.ok()) batch.AddUrl(url.value(), doc.key);
      }
      ++rec.documents;
      if (batch.count() > 50000) return gen->Write(&batch);
      return Status::Ok();
    });
    SHINGLETON_RETURN_IF_ERROR(s);
    SHINGLETON_RETURN_IF_ERROR(gen->Write(&batch));
    SHINGLETON_RETURN_IF_ERROR(gen->Flush());
    SHINGLETON_RETURN_IF_ERROR(gen->Compact());
  }
  SHINGLETON_ASSIGN_OR_RETURN(rec.checksum, SealFrozenStore(building + "/db"));
  JsonWriter w;
  w.BeginObject();
  w.Field("format", kFormat);
  w.Field("name", rec.name);
  w.Field("scheme", rec.scheme);
  w.FieldUint("documents", rec.documents);
  w.Field("created", rec.created);
  w.Field("source", rec.source);
  w.Field("checksum", rec.checksum);
  w.EndObject();
  SHINGLETON_RETURN_IF_ERROR(WriteFileAtomically(building + "/generation.json", w.str() + "\n"));
  fs::rename(building, o.out_dir, ec);
  if (ec) return Status::IoError("cannot rename " + building + " to " + o.out_dir + ": " + ec.message());
  return rec;
}

StatusOr<std::unique_ptr<ReferenceSet>> ReferenceSet::Open(const std::vector<std::string>& dirs,
                                                           const SketchScheme& scheme) {
  auto set = std::make_unique<ReferenceSet>();
  set->scheme_ = scheme;
  for (const std::string& dir : dirs) {
    Generation g;
    SHINGLETON_ASSIGN_OR_RETURN(g.record, ReadGenerationRecord(dir));
    if (g.record.scheme != scheme.Serialize()) {
      auto theirs = SketchScheme::Parse(g.record.scheme);
      const std::string diff = theirs.ok() ? theirs->DescribeDifference(scheme) : g.record.scheme;
      return Status::Mismatch("reference " + dir + " (generation " + g.record.name +
                              ") was built with another sketch scheme (" + diff +
                              "; reference vs this job); dedup against it with its scheme");
    }
    StoreOptions ro;
    ro.read_only = true;
    SHINGLETON_ASSIGN_OR_RETURN(g.store, IndexStore::Open(dir + "/db", &scheme, ro));
    set->generations_.push_back(std::move(g));
  }
  return set;
}

StatusOr<std::vector<ReferenceCandidate>> ReferenceSet::PointNearCandidates(const uint32_t* sig,
                                                                            double threshold) const {
  const int k = scheme_.num_hashes;
  std::vector<ReferenceCandidate> hits;
  for (int g = 0; g < static_cast<int>(generations_.size()); ++g) {
    std::vector<uint64_t> candidates;
    for (int b = 0; b < scheme_.bands; ++b) {
      SHINGLETON_ASSIGN_OR_RETURN(
          auto members,
          generations_[g].store->BucketMembers(b, BandBucket(sig, b, scheme_.rows, scheme_.seed)));
      candidates.insert(candidates.end(), members.begin(), members.end());
    }
    std::sort(candidates.begin(), candidates.end());
    candidates.erase(std::unique(candidates.begin(), candidates.end()), candidates.end());
    for (uint64_t key : candidates) {
      SHINGLETON_ASSIGN_OR_RETURN(std::vector<uint32_t> ref_sig, generations_[g].store->GetSignature(key));
      const double sim = EstimateJaccard(sig, ref_sig.data(), k);
      if (sim >= threshold) hits.push_back({g, key, static_cast<float>(sim), DropReason::kReferenceNear});
    }
  }
  return hits;
}

Status ReferenceSet::PointExactCandidates(const DocumentMeta& doc, const std::string& normalized_url,
                                          bool url_revisits, std::vector<ReferenceCandidate>* out) const {
  for (int g = 0; g < static_cast<int>(generations_.size()); ++g) {
    if (url_revisits && !normalized_url.empty()) {
      SHINGLETON_ASSIGN_OR_RETURN(auto keys, generations_[g].store->DocumentsWithUrl(normalized_url));
      for (uint64_t k : keys) out->push_back({g, k, 1.0f, DropReason::kUrl});
    }
    SHINGLETON_ASSIGN_OR_RETURN(auto keys, generations_[g].store->DocumentsWithContent(doc.content_hi, doc.content_lo));
    for (uint64_t k : keys) out->push_back({g, k, 1.0f, DropReason::kReferenceExact});
  }
  return Status::Ok();
}

}  // namespace shingleton
