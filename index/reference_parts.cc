#include "index/reference_parts.h"

#include <simdjson.h>

#include <algorithm>
#include <filesystem>
#include <tuple>

#include "index/atomic_file.h"
#include "index/json_writer.h"
#include "index/partition.h"
#include "index/reference_set.h"

namespace shingleton {
namespace {

namespace fs = std::filesystem;
constexpr char kPartFormat[] = "shingleton-generation-part/1";

std::string PartJson(const PartRecord& r) {
  JsonWriter w;
  w.BeginObject();
  w.Field("format", kPartFormat);
  w.Field("generation", r.generation);
  w.Field("generation_checksum", r.generation_checksum);
  w.Field("scheme", r.scheme);
  w.FieldUint("part", r.part);
  w.FieldUint("parts", r.parts);
  w.FieldUint("postings", r.postings);
  w.FieldUint("signatures", r.signatures);
  w.Field("checksum", r.checksum);
  w.EndObject();
  return w.Take() + "\n";
}

// Writes part `p`: the postings in `postings` (band, bucket, doc) and the
// signatures of their documents, read from `gen`.
Status WritePart(const IndexStore& gen, const std::vector<std::tuple<uint16_t, uint64_t, uint64_t>>& postings,
                 const std::string& dir, PartRecord* rec) {
  std::vector<uint64_t> docs;
  docs.reserve(postings.size());
  for (const auto& [band, bucket, doc] : postings) docs.push_back(doc);
  std::sort(docs.begin(), docs.end());
  docs.erase(std::unique(docs.begin(), docs.end()), docs.end());
  std::error_code ec;
  fs::create_directories(dir, ec);
  if (ec) return Status::IoError("cannot create " + dir + ": " + ec.message());
  {
    StoreOptions bulk;
    bulk.bulk_load = true;
    SHINGLETON_ASSIGN_OR_RETURN(auto store, IndexStore::Create(dir + "/db", gen.scheme(), bulk));
    WriteBatchBuilder batch(store.get());
    for (const auto& [band, bucket, doc] : postings) {
      batch.AddPosting(band, bucket, doc);
      if (batch.count() >= 100000) SHINGLETON_RETURN_IF_ERROR(store->Write(&batch));
    }
    for (uint64_t doc : docs) {
      SHINGLETON_ASSIGN_OR_RETURN(std::vector<uint32_t> sig, gen.GetSignature(doc));
      batch.AddSignature(doc, sig.data(), gen.scheme().num_hashes);
      if (batch.count() >= 100000) SHINGLETON_RETURN_IF_ERROR(store->Write(&batch));
    }
    SHINGLETON_RETURN_IF_ERROR(store->Write(&batch));
    SHINGLETON_RETURN_IF_ERROR(store->Flush());
    SHINGLETON_RETURN_IF_ERROR(store->Compact());
  }
  rec->postings = postings.size();
  rec->signatures = docs.size();
  SHINGLETON_ASSIGN_OR_RETURN(rec->checksum, SealFrozenStore(dir + "/db"));
  return WriteFileAtomically(dir + "/part.json", PartJson(*rec));
}

}  // namespace

std::string PartDirName(uint32_t part, uint32_t parts) {
  return "part-" + std::to_string(part) + "-of-" + std::to_string(parts);
}

StatusOr<std::vector<PartRecord>> SplitGeneration(const std::string& ref_dir, uint32_t parts,
                                                  const std::string& out_dir) {
  if (parts == 0) return Status::InvalidArgument("a generation is split into at least 1 part");
  if (fs::exists(out_dir)) return Status::AlreadyExists(out_dir + " already exists");
  SHINGLETON_ASSIGN_OR_RETURN(GenerationRecord gen_rec, ReadGenerationRecord(ref_dir));
  SHINGLETON_ASSIGN_OR_RETURN(SketchScheme scheme, SketchScheme::Parse(gen_rec.scheme));
  StoreOptions ro;
  ro.read_only = true;
  SHINGLETON_ASSIGN_OR_RETURN(auto gen, IndexStore::Open(ref_dir + "/db", &scheme, ro));
  const std::string building = out_dir + ".building";
  std::error_code ec;
  fs::remove_all(building, ec);
  // One pass over the generation's postings per part keeps memory to one part.
  std::vector<PartRecord> records;
  for (uint32_t p = 0; p < parts; ++p) {
    std::vector<std::tuple<uint16_t, uint64_t, uint64_t>> postings;
    for (int b = 0; b < scheme.bands; ++b) {
      SHINGLETON_RETURN_IF_ERROR(
          gen->ForEachBucket(b, 1, [&](int band, uint64_t bucket, const std::vector<uint64_t>& docs) {
            if (ShardOf(band, bucket, parts) != p) return Status::Ok();
            for (uint64_t d : docs) postings.emplace_back(static_cast<uint16_t>(band), bucket, d);
            return Status::Ok();
          }));
    }
    PartRecord rec;
    rec.generation = gen_rec.name;
    rec.generation_checksum = gen_rec.checksum;
    rec.scheme = gen_rec.scheme;
    rec.part = p;
    rec.parts = parts;
    SHINGLETON_RETURN_IF_ERROR(WritePart(*gen, postings, building + "/" + PartDirName(p, parts), &rec));
    records.push_back(rec);
  }
  fs::rename(building, out_dir, ec);
  if (ec) return Status::IoError("cannot rename " + building + " to " + out_dir + ": " + ec.message());
  return records;
}

StatusOr<PartRecord> ReadPartRecord(const std::string& part_dir) {
  const std::string path = part_dir + "/part.json";
  simdjson::dom::parser parser;
  simdjson::dom::element e;
  if (parser.load(path).get(e)) {
    return Status::NotFound(part_dir + " is not a reference part (no readable part.json)");
  }
  std::string_view format, generation, generation_checksum, scheme, checksum;
  uint64_t part = 0, parts = 0, postings = 0, signatures = 0;
  if (e["format"].get(format) || format != kPartFormat) {
    return Status::Mismatch(path + ": unsupported part format (this build reads " + std::string(kPartFormat) +
                            ")");
  }
  if (e["generation"].get(generation) || e["generation_checksum"].get(generation_checksum) ||
      e["scheme"].get(scheme) || e["part"].get(part) || e["parts"].get(parts) ||
      e["postings"].get(postings) || e["signatures"].get(signatures) || e["checksum"].get(checksum) ||
      parts == 0 || part >= parts) {
    return Status::Corruption(path + ": missing or mistyped fields");
  }
  PartRecord r;
  r.generation = std::string(generation);
  r.generation_checksum = std::string(generation_checksum);
  r.scheme = std::string(scheme);
  r.part = static_cast<uint32_t>(part);
  r.parts = static_cast<uint32_t>(parts);
  r.postings = postings;
  r.signatures = signatures;
  r.checksum = std::string(checksum);
  return r;
}

StatusOr<ReferencePart> OpenReferencePart(const std::string& part_dir) {
  ReferencePart p;
  SHINGLETON_ASSIGN_OR_RETURN(p.record, ReadPartRecord(part_dir));
  SHINGLETON_ASSIGN_OR_RETURN(std::string sum, ChecksumDirectory(part_dir + "/db"));
  if (sum != p.record.checksum) {
    return Status::Corruption(part_dir + ": its files do not match the checksum in part.json (" + sum +
                              " vs " + p.record.checksum + "); split the generation again");
  }
  SHINGLETON_ASSIGN_OR_RETURN(SketchScheme scheme, SketchScheme::Parse(p.record.scheme));
  StoreOptions ro;
  ro.read_only = true;
  SHINGLETON_ASSIGN_OR_RETURN(p.store, IndexStore::Open(part_dir + "/db", &scheme, ro));
  return p;
}

}  // namespace shingleton
