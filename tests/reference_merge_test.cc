// The key-order merge with a frozen generation, and the parts a generation is cut
// into for the shards of a service. Both are checked against the definition of an
// LSH candidate (common practice, e.g. Mining of Massive Datasets ch. 3.4): a pair is
// a candidate iff its two signatures hash to the same bucket in at least one band;
// a candidate is kept iff its estimated Jaccard is at least the threshold.
#include <gtest/gtest.h>

#include <algorithm>
#include <fstream>
#include <iterator>
#include <map>
#include <set>
#include <tuple>

#include "index/bands.h"
#include "index/dedup_job.h"
#include "index/key_set.h"
#include "index/minhash.h"
#include "index/partition.h"
#include "index/reference_merge.h"
#include "index/reference_parts.h"
#include "index/reference_resolution.h"
#include "index/reference_set.h"
#include "index/url_normalizer.h"
#include "tests/test_util.h"

namespace shingleton {
namespace {

using namespace shingleton::testing;

const std::string kCorpus = std::string(SHINGLETON_SOURCE_DIR) + "/demo_data/crawl-2026-11.jsonl";

// The demo corpus in two crawls (even and odd lines); the first frozen at dir/ref.
void FreezeFirstHalf(const TempDir& dir) {
  SplitLinesInTwo(kCorpus, dir.File("old.jsonl"), dir.File("new.jsonl"));
  DedupOptions o;
  o.ingest.inputs = {dir.File("old.jsonl")};
  o.out_dir = dir.File("old");
  ASSERT_TRUE(RunDedupJob(o).ok());
  FreezeOptions fo;
  fo.index_path = dir.File("old/index");
  fo.out_dir = dir.File("ref");
  fo.name = "oct";
  ASSERT_TRUE(FreezeGeneration(fo).ok());
}

// The documents of a finished job's index, as the coordinator loads them.
DocTable LoadTable(const IndexStore& store) {
  DocTable table(store.scheme().num_hashes);
  EXPECT_TRUE(store
                  .ForEachDocument([&](DocumentMeta meta) -> Status {
                    SHINGLETON_ASSIGN_OR_RETURN(auto sig, store.GetSignature(meta.key));
                    return table.Add(std::move(meta), sig.data());
                  })
                  .ok());
  return table;
}

std::map<uint64_t, std::vector<uint32_t>> AllSignatures(const IndexStore& store) {
  std::map<uint64_t, std::vector<uint32_t>> sigs;
  EXPECT_TRUE(store
                  .ForEachSignature([&](uint64_t key, std::vector<uint32_t> sig) {
                    sigs.emplace(key, std::move(sig));
                    return Status::Ok();
                  })
                  .ok());
  return sigs;
}

using Hit = std::tuple<uint64_t, uint64_t, float>;  // doc, ref, similarity

// KeySet (the merge's set of settled documents) against std::set, the definition of
// membership: keys of every spread (hashes, small integers, 0, the largest value),
// with repeats, tested present and absent.
TEST(ReferenceMergeTest, KeySetHoldsExactlyItsKeys) {
  std::vector<uint64_t> keys = {0, 1, 2, UINT64_MAX, 1, 0};
  uint64_t state = 7;
  for (int i = 0; i < 5000; ++i) keys.push_back(SplitMix64(&state));
  for (uint64_t i = 100; i < 1100; ++i) keys.push_back(i << 20);  // clustered, not hash-like
  const std::set<uint64_t> want(keys.begin(), keys.end());
  const KeySet set(keys);
  EXPECT_EQ(set.size(), want.size());
  for (uint64_t k : want) EXPECT_TRUE(set.contains(k)) << k;
  for (int i = 0; i < 20000; ++i) {
    const uint64_t probe = i % 2 ? SplitMix64(&state) : static_cast<uint64_t>(i) << 19;
    EXPECT_EQ(set.contains(probe), want.count(probe) == 1) << probe;
  }
  EXPECT_FALSE(KeySet().contains(0));
  EXPECT_FALSE(KeySet().contains(42));
}

TEST(ReferenceMergeTest, MergeAndPointLookupsFindExactlyTheCandidatesByDefinition) {
  TempDir dir;
  FreezeFirstHalf(dir);
  DedupOptions o;
  o.ingest.inputs = {dir.File("new.jsonl")};
  o.out_dir = dir.File("new");
  ASSERT_TRUE(RunDedupJob(o).ok());
  StoreOptions ro;
  ro.read_only = true;
  auto job = IndexStore::Open(dir.File("new/index"), nullptr, ro).value();
  const SketchScheme scheme = job->scheme();
  const DocTable table = LoadTable(*job);
  auto refs = ReferenceSet::Open({dir.File("ref")}, scheme).value();
  const auto ref_sigs = AllSignatures(refs->store(0));
  const double t = 0.8;

  // By definition: every (new, reference) pair, all bands compared.
  std::set<Hit> expected;
  for (size_t i = 0; i < table.size(); ++i) {
    for (const auto& [rkey, rsig] : ref_sigs) {
      bool candidate = false;
      for (int b = 0; b < scheme.bands && !candidate; ++b) {
        candidate = BandBucket(table.signature(i), b, scheme.rows, scheme.seed) ==
                    BandBucket(rsig.data(), b, scheme.rows, scheme.seed);
      }
      const double sim = EstimateJaccard(table.signature(i), rsig.data(), scheme.num_hashes);
      if (candidate && sim >= t) expected.insert({table.doc(i).key, rkey, static_cast<float>(sim)});
    }
  }
  ASSERT_GT(expected.size(), 100u);  // the demo's families span both halves

  // The merge reads the job's postings: it finds, for every document with postings,
  // exactly the pairs of the definition (exact copies within the crawl have none;
  // the job gives them the candidates of the document they copy), on any number of
  // threads.
  std::set<uint64_t> with_postings;
  for (int b = 0; b < scheme.bands; ++b) {
    ASSERT_TRUE(job->ForEachBucket(b, 1, [&](int, uint64_t, const std::vector<uint64_t>& docs) {
                     with_postings.insert(docs.begin(), docs.end());
                     return Status::Ok();
                   }).ok());
  }
  ASSERT_LT(with_postings.size(), table.size()) << "the demo has exact copies";
  std::set<Hit> expected_with_postings;
  for (const Hit& h : expected) {
    if (with_postings.count(std::get<0>(h))) expected_with_postings.insert(h);
  }
  for (int threads : {1, 3}) {
    auto merged = MergeWithReference(refs->store(0), *job, t, threads);
    ASSERT_TRUE(merged.ok()) << merged.status().ToString();
    std::set<Hit> got;
    for (const ReferenceHit& h : merged.value()) got.insert({h.doc, h.ref, h.similarity});
    EXPECT_EQ(got.size(), merged->size()) << "each pair once";
    EXPECT_EQ(got, expected_with_postings) << threads << " threads";
  }

  std::set<Hit> point;
  for (size_t i = 0; i < table.size(); ++i) {
    auto hits = refs->PointNearCandidates(table.signature(i), t);
    ASSERT_TRUE(hits.ok());
    for (const ReferenceCandidate& h : hits.value()) {
      EXPECT_EQ(h.reason, DropReason::kReferenceNear);
      point.insert({table.doc(i).key, h.key, h.similarity});
    }
  }
  std::vector<Hit> only_point, only_expected;
  std::set_difference(point.begin(), point.end(), expected.begin(), expected.end(), std::back_inserter(only_point));
  std::set_difference(expected.begin(), expected.end(), point.begin(), point.end(),
                      std::back_inserter(only_expected));
  EXPECT_TRUE(only_point.empty() && only_expected.empty())
      << only_point.size() << " hits only by point lookups, " << only_expected.size() << " missed by them";
}

TEST(ReferenceMergeTest, ExactAndUrlMergesFindWhatPointLookupsFind) {
  // Exact copies by definition: identical normalised-content hash; URL revisits:
  // identical normalised URL (RFC 3986 normalisation, url_normalizer). The merge of
  // sorted keys and the per-document lookups must list the same candidates.
  TempDir dir;
  FreezeFirstHalf(dir);
  DedupOptions o;
  o.ingest.inputs = {kCorpus};  // both halves: every old document is in the new crawl
  o.out_dir = dir.File("all");
  ASSERT_TRUE(RunDedupJob(o).ok());
  StoreOptions ro;
  ro.read_only = true;
  auto job = IndexStore::Open(dir.File("all/index"), nullptr, ro).value();
  const DocTable table = LoadTable(*job);
  std::vector<std::string> urls(table.size());
  for (size_t i = 0; i < table.size(); ++i) {
    auto url = NormalizeUrl(job->GetDocument(table.key(i)).value().url);
    if (url.ok()) urls[i] = url.value();
  }
  auto refs = ReferenceSet::Open({dir.File("ref")}, job->scheme()).value();
  using Found = std::set<std::tuple<size_t, uint64_t, int>>;  // (doc index, ref key, reason)
  Found found[2];
  for (ReferenceLookup lookup : {ReferenceLookup::kMerge, ReferenceLookup::kPoint}) {
    ReferenceMatchOptions mo;
    mo.url_revisits = true;
    mo.threads = 2;
    mo.lookup = lookup;
    ReferenceCandidates c(table.size());
    ASSERT_TRUE(AddExactCandidates(*refs, table, urls, mo, &c).ok());
    for (size_t i = 0; i < c.size(); ++i) {
      for (const ReferenceCandidate& rc : c[i]) found[lookup == ReferenceLookup::kPoint].insert({i, rc.key, static_cast<int>(rc.reason)});
    }
  }
  // By definition, from the generation's documents themselves.
  std::multimap<std::pair<uint64_t, uint64_t>, uint64_t> by_content;
  std::multimap<std::string, uint64_t> by_url;
  ASSERT_TRUE(refs->store(0)
                  .ForEachDocument([&](DocumentMeta d) {
                    by_content.insert({{d.content_hi, d.content_lo}, d.key});
                    auto u = NormalizeUrl(d.url);
                    if (u.ok()) by_url.insert({u.value(), d.key});
                    return Status::Ok();
                  })
                  .ok());
  Found expected;
  for (size_t i = 0; i < table.size(); ++i) {
    auto [lo, hi] = by_content.equal_range(table.content(i));
    for (auto it = lo; it != hi; ++it) expected.insert({i, it->second, static_cast<int>(DropReason::kReferenceExact)});
    if (urls[i].empty()) continue;
    auto [ulo, uhi] = by_url.equal_range(urls[i]);
    for (auto it = ulo; it != uhi; ++it) expected.insert({i, it->second, static_cast<int>(DropReason::kUrl)});
  }
  // Every document of the generation is in the new crawl with its own text.
  EXPECT_GE(expected.size(), refs->record(0).documents);
  EXPECT_EQ(found[0], expected) << "merge";
  EXPECT_EQ(found[1], expected) << "point lookups";
}

TEST(ReferenceMergeTest, MergeAndPointJobsWriteIdenticalManifests) {
  TempDir dir;
  FreezeFirstHalf(dir);
  std::string files[2][2];
  int n = 0;
  for (ReferenceLookup lookup : {ReferenceLookup::kMerge, ReferenceLookup::kPoint}) {
    DedupOptions o;
    o.ingest.inputs = {dir.File("new.jsonl")};
    o.out_dir = dir.File("new-" + std::to_string(n));
    o.references = {dir.File("ref")};
    o.url_revisits = true;
    o.reference_lookup = lookup;
    auto s = RunDedupJob(o);
    ASSERT_TRUE(s.ok()) << s.status().ToString();
    EXPECT_GT(s->dropped_by_reason[static_cast<size_t>(DropReason::kReferenceNear)], 50u);
    files[n][0] = ReadFile(o.out_dir + "/keep.jsonl");
    files[n][1] = ReadFile(o.out_dir + "/drop.jsonl");
    ++n;
  }
  EXPECT_EQ(files[0][0], files[1][0]);
  EXPECT_EQ(files[0][1], files[1][1]);
}

TEST(ReferenceMergeTest, PartsPartitionTheGenerationByShardOfBucket) {
  TempDir dir;
  FreezeFirstHalf(dir);
  const std::string before = ChecksumDirectory(dir.File("ref/db")).value();
  const uint32_t kParts = 3;
  auto records = SplitGeneration(dir.File("ref"), kParts, dir.File("parts"));
  ASSERT_TRUE(records.ok()) << records.status().ToString();
  ASSERT_EQ(records->size(), kParts);
  EXPECT_EQ(ChecksumDirectory(dir.File("ref/db")).value(), before) << "the generation is only read";
  const GenerationRecord gen = ReadGenerationRecord(dir.File("ref")).value();

  StoreOptions ro;
  ro.read_only = true;
  auto whole = IndexStore::Open(dir.File("ref/db"), nullptr, ro).value();
  const auto whole_sigs = AllSignatures(*whole);
  using Posting = std::tuple<int, uint64_t, uint64_t>;
  auto postings_of = [](const IndexStore& s) {
    std::set<Posting> out;
    for (int b = 0; b < s.scheme().bands; ++b) {
      EXPECT_TRUE(s.ForEachBucket(b, 1, [&](int band, uint64_t bucket, const std::vector<uint64_t>& docs) {
                     for (uint64_t d : docs) out.insert({band, bucket, d});
                     return Status::Ok();
                   }).ok());
    }
    return out;
  };
  std::set<Posting> all = postings_of(*whole), united;
  for (uint32_t p = 0; p < kParts; ++p) {
    const std::string part_dir = dir.File("parts/" + PartDirName(p, kParts));
    auto part = OpenReferencePart(part_dir);
    ASSERT_TRUE(part.ok()) << part.status().ToString();
    EXPECT_EQ(part->record.part, p);
    EXPECT_EQ(part->record.parts, kParts);
    EXPECT_EQ(part->record.generation, "oct");
    EXPECT_EQ(part->record.generation_checksum, gen.checksum);
    std::set<uint64_t> docs;
    for (const auto& [band, bucket, doc] : postings_of(*part->store)) {
      EXPECT_EQ(ShardOf(band, bucket, kParts), p) << "a posting in the part of another shard";
      united.insert({band, bucket, doc});
      docs.insert(doc);
    }
    // Exactly the signatures of the part's documents, equal to the generation's.
    const auto sigs = AllSignatures(*part->store);
    EXPECT_EQ(sigs.size(), docs.size());
    for (const auto& [key, sig] : sigs) {
      EXPECT_TRUE(docs.count(key));
      EXPECT_EQ(sig, whole_sigs.at(key));
    }
    EXPECT_EQ(part->record.signatures, docs.size());
  }
  EXPECT_EQ(united, all) << "every posting in exactly one part";

  // A changed byte is caught on open; an existing target is refused.
  const std::string victim = dir.File("parts/" + PartDirName(1, kParts) + "/part.json");
  std::string json = ReadFile(victim);
  json.replace(json.find("\"checksum\":\"") + 12, 1, json[json.find("\"checksum\":\"") + 12] == '0' ? "1" : "0");
  WriteFile(victim, json);
  auto tampered = OpenReferencePart(dir.File("parts/" + PartDirName(1, kParts)));
  ASSERT_FALSE(tampered.ok());
  EXPECT_EQ(tampered.status().code(), Status::Code::kCorruption);
  EXPECT_EQ(SplitGeneration(dir.File("ref"), kParts, dir.File("parts")).status().code(),
            Status::Code::kAlreadyExists);
}

}  // namespace
}  // namespace shingleton
