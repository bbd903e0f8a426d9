// IndexStore on a real RocksDB in a temporary directory: layout and scheme
// records are checked on open, postings group into buckets, values round-trip.
#include "index/index_store.h"
#include "index/wal_pages.h"

#include <gtest/gtest.h>
#include <rocksdb/db.h>

#include <algorithm>
#include <thread>
#include <tuple>

#include "index/candidates.h"

#include "tests/test_util.h"

namespace shingleton {
namespace {

using testing::TempDir;

SketchScheme SmallScheme() {
  SketchScheme s = SketchScheme::Default();
  s.num_hashes = 8;
  s.bands = 2;
  s.rows = 4;
  return s;
}

DocumentMeta Doc(const std::string& id, uint64_t ordinal) {
  DocumentMeta d;
  d.id = id;
  d.key = DocKey(id);
  d.ordinal = ordinal;
  d.text_bytes = 100 + ordinal;
  d.url = "https://quay-notices.example/" + id;
  d.source = "in.jsonl:" + std::to_string(ordinal + 1);
  d.excerpt = "Ferry to Oskarholm — excerpt";
  return d;
}

TEST(IndexStoreTest, RoundTripsDocumentsSignaturesAndBuckets) {
  TempDir dir;
  const SketchScheme scheme = SmallScheme();
  auto store = IndexStore::Create(dir.File("idx"), scheme);
  ASSERT_TRUE(store.ok()) << store.status().ToString();
  WriteBatchBuilder batch(store->get());
  const uint32_t sig[8] = {1, 2, 3, 4, 5, 6, 7, 8};
  // a and b share bucket 42 of band 0; c is alone there; all share band 1's bucket 7.
  const uint64_t ab[2] = {42, 7}, c[2] = {43, 7};
  batch.AddDocument(Doc("a", 0), sig, 8, ab);
  batch.AddDocument(Doc("b", 1), sig, 8, ab);
  batch.AddDocument(Doc("c", 2), sig, 8, c);
  ASSERT_TRUE(store.value()->Write(&batch).ok());

  std::vector<std::pair<uint64_t, std::vector<uint64_t>>> band0, band1;
  ASSERT_TRUE(store.value()->ForEachBucket(0, 2, [&](int, uint64_t bucket, const std::vector<uint64_t>& m) {
    band0.emplace_back(bucket, m);
    return Status::Ok();
  }).ok());
  ASSERT_TRUE(store.value()->ForEachBucket(1, 1, [&](int, uint64_t bucket, const std::vector<uint64_t>& m) {
    band1.emplace_back(bucket, m);
    return Status::Ok();
  }).ok());
  ASSERT_EQ(band0.size(), 1u);  // bucket 43 has one member, below min_size 2
  EXPECT_EQ(band0[0].first, 42u);
  std::vector<uint64_t> expect_ab = {DocKey("a"), DocKey("b")};
  std::sort(expect_ab.begin(), expect_ab.end());
  EXPECT_EQ(band0[0].second, expect_ab);
  ASSERT_EQ(band1.size(), 1u);
  EXPECT_EQ(band1[0].second.size(), 3u);
  EXPECT_TRUE(std::is_sorted(band1[0].second.begin(), band1[0].second.end()));

  auto doc = store.value()->GetDocument(DocKey("b"));
  ASSERT_TRUE(doc.ok());
  EXPECT_EQ(doc->id, "b");
  EXPECT_EQ(doc->url, "https://quay-notices.example/b");
  EXPECT_EQ(doc->excerpt, "Ferry to Oskarholm — excerpt");
  EXPECT_EQ(doc->text_bytes, 101u);
  auto got = store.value()->GetSignature(DocKey("c"));
  ASSERT_TRUE(got.ok());
  EXPECT_EQ(got.value(), std::vector<uint32_t>(sig, sig + 8));
  EXPECT_EQ(store.value()->GetDocument(DocKey("zzz")).status().code(), Status::Code::kNotFound);

  Decision d;
  d.key = DocKey("b");
  d.kept_key = d.cluster = DocKey("a");
  d.similarity = 0.875f;
  d.cluster_size = 2;
  Edge e;
  e.a = std::min(DocKey("a"), DocKey("b"));
  e.b = std::max(DocKey("a"), DocKey("b"));
  e.similarity = 0.875f;
  e.band = 1;
  batch.AddDecision(d);
  batch.AddEdge(e);
  ASSERT_TRUE(store.value()->Write(&batch).ok());
  auto back = store.value()->GetDecision(DocKey("b"));
  ASSERT_TRUE(back.ok());
  EXPECT_EQ(back->kept_key, DocKey("a"));
  EXPECT_FLOAT_EQ(back->similarity, 0.875f);
  EXPECT_EQ(back->cluster_size, 2u);
  for (const char* id : {"a", "b"}) {
    auto edges = store.value()->EdgesOf(DocKey(id));
    ASSERT_TRUE(edges.ok());
    ASSERT_EQ(edges->size(), 1u);
    EXPECT_EQ(edges->at(0).a, e.a);
    EXPECT_EQ(edges->at(0).band, 1);
  }
}

TEST(IndexStoreTest, OpenChecksSchemeAndLayout) {
  TempDir dir;
  const SketchScheme scheme = SmallScheme();
  { ASSERT_TRUE(IndexStore::Create(dir.File("idx"), scheme).ok()); }
  EXPECT_TRUE(IndexStore::Open(dir.File("idx"), &scheme).ok());

  SketchScheme other = scheme;
  other.shingle_size = 3;
  auto refused = IndexStore::Open(dir.File("idx"), &other);
  ASSERT_FALSE(refused.ok());
  EXPECT_EQ(refused.status().code(), Status::Code::kMismatch);
  EXPECT_NE(refused.status().message().find("shingles word:5 vs word:3"), std::string::npos)
      << refused.status().message();

  EXPECT_EQ(IndexStore::Open(dir.File("nothing-here"), nullptr).status().code(),
            Status::Code::kNotFound);
  EXPECT_EQ(IndexStore::Create(dir.File("idx"), scheme).status().code(),
            Status::Code::kAlreadyExists);

  // A future layout version is refused with both versions named. The record is
  // rewritten with RocksDB directly, as another build would have written it.
  {
    rocksdb::DBOptions opts;
    std::vector<rocksdb::ColumnFamilyDescriptor> families;
    for (const char* n : {"default", "meta", "postings", "signatures", "docs", "decisions", "edges",
                          "content", "urls"}) {
      families.emplace_back(n, rocksdb::ColumnFamilyOptions());
    }
    std::vector<rocksdb::ColumnFamilyHandle*> handles;
    rocksdb::DB* db = nullptr;
    ASSERT_TRUE(rocksdb::DB::Open(opts, dir.File("idx"), families, &handles, &db).ok());
    ASSERT_TRUE(db->Put(rocksdb::WriteOptions(), handles[1], "layout", "99").ok());
    for (auto* h : handles) db->DestroyColumnFamilyHandle(h);
    delete db;
  }
  auto future = IndexStore::Open(dir.File("idx"), &scheme);
  ASSERT_FALSE(future.ok());
  EXPECT_EQ(future.status().code(), Status::Code::kMismatch);
  EXPECT_NE(future.status().message().find("layout version 99"), std::string::npos);
}

TEST(IndexStoreTest, SchemeTextRoundTripsAndRejectsGarbage) {
  SketchScheme s = SmallScheme();
  s.shingle_kind = ShingleKind::kChar;
  s.seed = 0xdeadbeefULL;
  auto back = SketchScheme::Parse(s.Serialize());
  ASSERT_TRUE(back.ok()) << back.status().ToString();
  EXPECT_EQ(back.value(), s);
  EXPECT_FALSE(SketchScheme::Parse("hello").ok());
  EXPECT_EQ(SketchScheme::Parse("shingleton-scheme/9 norm=1").status().code(), Status::Code::kMismatch);
  EXPECT_FALSE(SketchScheme::Parse("shingleton-scheme/1 norm=1 unicode=15 shingle=word:x seed=0x1 "
                                   "sig=minhash-ms32:8 bands=2x4").ok());
}

}  // namespace
}  // namespace shingleton

namespace shingleton {
namespace {

// Every bucket of every band, as ForEachBucket reports it.
std::vector<std::tuple<int, uint64_t, std::vector<uint64_t>>> AllBuckets(const IndexStore& store) {
  std::vector<std::tuple<int, uint64_t, std::vector<uint64_t>>> out;
  for (int band = 0; band < store.scheme().bands; ++band) {
    EXPECT_TRUE(store.ForEachBucket(band, 1, [&](int b, uint64_t bucket, const std::vector<uint64_t>& m) {
      out.emplace_back(b, bucket, m);
      return Status::Ok();
    }).ok());
  }
  return out;
}

// The bulk writer's contract for a repeated key (index_store.h): the last value
// added wins, whether the repeats share a run or fall in runs written one after
// another (each run reuses the buffers of the last run of its kind); postings, held
// apart from the other families' entries, are stored once however often added.
TEST(IndexStoreTest, BulkRepeatedKeyKeepsTheLastValue) {
  TempDir dir;
  StoreOptions bulk_options;
  bulk_options.bulk_load = true;
  auto store = IndexStore::Create(dir.File("bulk"), SmallScheme(), bulk_options);
  ASSERT_TRUE(store.ok());
  {
    BulkIndexWriter bulk(store->get(), 4096);  // tiny runs
    for (uint32_t round = 0; round < 3; ++round) {
      for (uint32_t i = 0; i < 200; ++i) {
        const uint32_t stale[8] = {99, 99, 99, 99, 99, 99, 99, 99};
        if (i % 10 == 0) {
          ASSERT_TRUE(bulk.AddSignature(i, stale, 8).ok());  // then again, same run
        }
        const uint32_t sig[8] = {round, i, round, i, round, i, round, i};
        ASSERT_TRUE(bulk.AddSignature(i, sig, 8).ok());
        // A posting (held apart from the other families' entries) repeats too.
        if (i % 10 == 0) {
          ASSERT_TRUE(bulk.AddPosting(1, i % 7, i).ok());
        }
        ASSERT_TRUE(bulk.AddPosting(1, i % 7, i).ok());
      }
    }
    ASSERT_TRUE(bulk.Finish().ok());
    EXPECT_GT(bulk.files(), 3u);
  }
  for (uint32_t i = 0; i < 200; ++i) {
    EXPECT_EQ(store.value()->GetSignature(i).value(), (std::vector<uint32_t>{2, i, 2, i, 2, i, 2, i})) << i;
  }
  // Band 1 holds each posting once, in key order (bucket, then document).
  std::vector<std::pair<uint64_t, uint64_t>> band, want;
  ASSERT_TRUE(store.value()->ReadBand(1, &band).ok());
  for (uint64_t i = 0; i < 200; ++i) want.emplace_back(i % 7, i);
  std::sort(want.begin(), want.end());
  EXPECT_EQ(band, want);
}

// The bulk path (sorted runs as ingested SST files, several overlapping runs) and the
// WriteBatch path must store the same postings and signatures: checked against each
// other, and the batched reads (BucketMembersOf, GetSignatures, QueryIndex) against
// the one-at-a-time reads and a brute-force similarity by definition.
TEST(IndexStoreTest, BulkRunsEqualWriteBatchesAndBatchedReadsEqualPointReads) {
  TempDir dir;
  const SketchScheme scheme = SmallScheme();
  StoreOptions bulk_options;
  bulk_options.bulk_load = true;
  auto bulk_store = IndexStore::Create(dir.File("bulk"), scheme, bulk_options);
  auto batch_store = IndexStore::Create(dir.File("batch"), scheme);
  ASSERT_TRUE(bulk_store.ok() && batch_store.ok());
  {
    BulkIndexWriter bulk(bulk_store->get(), 4096);  // tiny runs: many overlapping files
    WriteBatchBuilder batch(batch_store->get());
    for (uint32_t i = 0; i < 600; ++i) {
      DocumentMeta d = Doc("d" + std::to_string(i), i);
      uint32_t sig[8];
      for (uint32_t j = 0; j < 8; ++j) sig[j] = (i / 3) * 10 + (j < 7 ? j : i % 3);  // families of 3
      const uint64_t buckets[2] = {i / 3, 1000 + i % 7};
      ASSERT_TRUE(bulk.AddMeta(d).ok());
      ASSERT_TRUE(bulk.AddSignature(d.key, sig, 8).ok());
      batch.AddDocument(d, sig, 8, buckets);
      for (int b = 0; b < 2; ++b) ASSERT_TRUE(bulk.AddPosting(b, buckets[b], d.key).ok());
    }
    ASSERT_TRUE(bulk.Finish().ok());
    EXPECT_GT(bulk.files(), 4u);
    ASSERT_TRUE(batch_store.value()->Write(&batch).ok());
  }
  const IndexStore& a = *bulk_store.value();
  const IndexStore& b = *batch_store.value();
  EXPECT_EQ(AllBuckets(a), AllBuckets(b));
  std::vector<BucketRef> probes = {{1, 1003}, {0, 5}, {0, 99999}, {1, 1000}};
  std::vector<std::vector<uint64_t>> members;
  ASSERT_TRUE(a.BucketMembersOf(probes, &members).ok());
  for (size_t i = 0; i < probes.size(); ++i) {
    EXPECT_EQ(members[i], b.BucketMembers(probes[i].band, probes[i].bucket).value());
  }
  EXPECT_TRUE(members[2].empty());
  const std::vector<uint64_t> keys = {DocKey("d7"), DocKey("nobody"), DocKey("d599")};
  std::vector<uint32_t> sigs;
  std::vector<char> found;
  ASSERT_TRUE(a.GetSignatures(keys, &sigs, &found).ok());
  EXPECT_EQ(found, (std::vector<char>{1, 0, 1}));
  EXPECT_EQ(std::vector<uint32_t>(sigs.begin(), sigs.begin() + 8), b.GetSignature(DocKey("d7")).value());
  EXPECT_EQ(a.GetDocument(DocKey("d42")).value().id, "d42");

  // Query with d9's own signature and buckets: its family (d9, d10, d11) shares bucket 3
  // of band 0; by definition the estimate is the share of equal values (7/8, or 1 for itself).
  const uint32_t* q = nullptr;
  std::vector<uint32_t> qsig = b.GetSignature(DocKey("d9")).value();
  q = qsig.data();
  const uint64_t qb[2] = {3, 1000 + 9 % 7};
  std::vector<std::vector<QueryHit>> hits;
  ASSERT_TRUE(QueryIndex(a, q, qb, 1, 0.8, &hits).ok());
  std::vector<uint64_t> got;
  for (const QueryHit& h : hits[0]) got.push_back(h.key);
  std::vector<uint64_t> want = {DocKey("d9"), DocKey("d10"), DocKey("d11")};
  std::sort(want.begin(), want.end());
  EXPECT_EQ(got, want);
}

// Batched reads take one of two routes by how dense the keys are in their key range
// (IndexStore::ReadInKeyOrder): a sequential scan or one MultiGet. Both must return,
// per key, what a point read of that key returns (the definition), whatever the key
// order, with repeats and with missing keys.
TEST(IndexStoreTest, DenseAndSparseBatchedReadsEqualPointReads) {
  TempDir dir;
  const SketchScheme scheme = SmallScheme();
  auto store = IndexStore::Create(dir.File("idx"), scheme);
  ASSERT_TRUE(store.ok());
  WriteBatchBuilder batch(store->get());
  std::vector<uint64_t> all;
  for (uint32_t i = 0; i < 3000; ++i) {
    const DocumentMeta d = Doc("d" + std::to_string(i), i);
    uint32_t sig[8];
    for (uint32_t j = 0; j < 8; ++j) sig[j] = i * 8 + j;
    const uint64_t buckets[2] = {i, i};
    batch.AddDocument(d, sig, 8, buckets);
    all.push_back(d.key);
  }
  ASSERT_TRUE(store.value()->Write(&batch).ok());
  ASSERT_TRUE(store.value()->Flush().ok());
  const IndexStore& s = *store.value();
  // Dense: every third document (1 in 3 of the range, above 1 in kDenseReadRatio),
  // unsorted, one repeated, two absent keys. Sparse: 8 keys spread over the whole
  // key range of 3000 documents (1 in 375).
  std::vector<uint64_t> dense;
  for (size_t i = 0; i < all.size(); i += 3) dense.push_back(all[i]);
  dense.push_back(all[6]);
  dense.push_back(DocKey("nobody"));
  dense.push_back(DocKey("no one either"));
  std::vector<uint64_t> sparse(all.begin(), all.begin() + 8);
  sparse.push_back(DocKey("nobody"));
  for (const std::vector<uint64_t>* keys : {&dense, &sparse}) {
    std::vector<uint32_t> sigs;
    std::vector<char> found;
    ASSERT_TRUE(s.GetSignatures(*keys, &sigs, &found).ok());
    ASSERT_EQ(found.size(), keys->size());
    for (size_t i = 0; i < keys->size(); ++i) {
      auto one = s.GetSignature((*keys)[i]);
      ASSERT_EQ(found[i] != 0, one.ok()) << i;
      if (one.ok()) {
        EXPECT_EQ(std::vector<uint32_t>(sigs.begin() + 8 * i, sigs.begin() + 8 * i + 8), one.value());
      }
    }
    std::vector<uint64_t> present;
    for (size_t i = 0; i < keys->size(); ++i) {
      if (found[i]) present.push_back((*keys)[i]);
    }
    auto docs = s.GetDocuments(present);
    ASSERT_TRUE(docs.ok()) << docs.status().ToString();
    for (size_t i = 0; i < present.size(); ++i) {
      EXPECT_EQ(docs.value()[i].id, s.GetDocument(present[i]).value().id);
    }
    EXPECT_EQ(s.GetDocuments(*keys).status().code(), Status::Code::kNotFound);
  }
}

// Appended postings (StoreOptions::append_postings: a vector memtable that the first
// read after writes flushes) must read exactly as skip-list postings: after each of
// several writes interleaved with every kind of postings read, from concurrent readers,
// and after reopening (the WAL replayed).
TEST(IndexStoreTest, AppendedPostingsReadAsSkipListPostings) {
  TempDir dir;
  const SketchScheme scheme = SmallScheme();
  StoreOptions plain;
  plain.sync_writes = true;
  StoreOptions append = plain;
  append.append_postings = true;
  auto appended = IndexStore::Create(dir.File("append"), scheme, append);
  auto skiplist = IndexStore::Create(dir.File("plain"), scheme, plain);
  ASSERT_TRUE(appended.ok() && skiplist.ok());
  const std::vector<BucketRef> probes = {{0, 3}, {1, 1002}, {0, 77777}, {1, 1006}};
  auto band_of = [](const IndexStore& s, int band) {
    std::vector<std::pair<uint64_t, uint64_t>> out;
    EXPECT_TRUE(s.ReadBand(band, &out).ok());
    return out;
  };
  auto expect_same_postings = [&](const IndexStore& a, const IndexStore& b, size_t postings_per_band) {
    EXPECT_EQ(AllBuckets(a), AllBuckets(b));
    for (int band = 0; band < 2; ++band) {
      EXPECT_EQ(band_of(a, band).size(), postings_per_band);
      EXPECT_EQ(band_of(a, band), band_of(b, band));
    }
    std::vector<std::vector<uint64_t>> ma, mb;
    ASSERT_TRUE(a.BucketMembersOf(probes, &ma).ok() && b.BucketMembersOf(probes, &mb).ok());
    EXPECT_EQ(ma, mb);
    for (const BucketRef& p : probes) {
      EXPECT_EQ(a.BucketMembers(p.band, p.bucket).value(), b.BucketMembers(p.band, p.bucket).value());
    }
  };
  auto write_round = [&](uint32_t round) {
    WriteBatchBuilder a(appended->get()), b(skiplist->get());
    for (uint32_t i = 0; i < 150; ++i) {
      const uint32_t doc = round * 150 + 149 - i;  // descending: not in key order
      uint32_t sig[8];
      for (uint32_t j = 0; j < 8; ++j) sig[j] = doc * 8 + j;
      const uint64_t buckets[2] = {doc / 3 % 40, 1000 + doc % 7};
      a.AddDocument(Doc("d" + std::to_string(doc), doc), sig, 8, buckets);
      b.AddDocument(Doc("d" + std::to_string(doc), doc), sig, 8, buckets);
    }
    ASSERT_TRUE(appended.value()->Write(&a).ok());
    ASSERT_TRUE(skiplist.value()->Write(&b).ok());
  };
  for (uint32_t round = 0; round < 3; ++round) {
    write_round(round);
    expect_same_postings(*appended.value(), *skiplist.value(), 150 * (round + 1));
  }
  write_round(3);
  std::vector<std::thread> readers;
  std::vector<std::vector<std::pair<uint64_t, uint64_t>>> seen(4);
  for (int t = 0; t < 4; ++t) readers.emplace_back([&, t] { seen[t] = band_of(*appended.value(), t % 2); });
  for (auto& r : readers) r.join();
  for (int t = 0; t < 4; ++t) EXPECT_EQ(seen[t], band_of(*skiplist.value(), t % 2)) << t;
  // The reads found the postings sorted in a file: the memtable was flushed.
  uint64_t in_memtable = 1;
  ASSERT_TRUE(appended.value()->raw_db()->GetIntProperty(
      appended.value()->raw_family(IndexStore::Family::kPostings),
      "rocksdb.num-entries-active-mem-table", &in_memtable));
  EXPECT_EQ(in_memtable, 0u);

  write_round(4);  // left in the WAL and the memtable only
  appended->reset();
  appended = IndexStore::Open(dir.File("append"), &scheme, append);
  ASSERT_TRUE(appended.ok()) << appended.status().ToString();
  expect_same_postings(*appended.value(), *skiplist.value(), 750);
}

// A store that syncs its writes drops the synced part of its WAL from the page cache
// (wal_pages.h); recovery reads the WAL from disk and must find every write: 3 MiB
// of synced batches, closed without a flush, reopened, read back value by value.
// (Whether pages were dropped is a matter of speed, measured by the bench, not here.)
TEST(IndexStoreTest, SyncedWalRecoversAfterItsPagesAreDropped) {
  TempDir dir;
  const SketchScheme scheme = SmallScheme();
  StoreOptions synced;
  synced.sync_writes = true;
  auto store = IndexStore::Create(dir.File("db"), scheme, synced);
  ASSERT_TRUE(store.ok()) << store.status().ToString();
  EXPECT_EQ(store.value()->raw_db()->GetEnv(), WalPageDroppingEnv());
  auto sig_of = [](uint32_t doc) {
    std::vector<uint32_t> sig(8);
    for (uint32_t j = 0; j < 8; ++j) sig[j] = doc * 2654435761u + j;
    return sig;
  };
  const uint32_t docs = 12000;  // ~270 bytes of WAL each
  for (uint32_t first = 0; first < docs; first += 100) {
    WriteBatchBuilder batch(store->get());
    for (uint32_t doc = first; doc < first + 100; ++doc) {
      const uint64_t buckets[2] = {doc % 97, doc % 89};
      batch.AddDocument(Doc("doc-" + std::to_string(doc) + std::string(100, 'x'), doc), sig_of(doc).data(), 8, buckets);
    }
    ASSERT_TRUE(store.value()->Write(&batch).ok());
  }
  store->reset();
  store = IndexStore::Open(dir.File("db"), &scheme, synced);
  ASSERT_TRUE(store.ok()) << store.status().ToString();
  for (uint32_t doc = 0; doc < docs; ++doc) {
    const uint64_t key = Doc("doc-" + std::to_string(doc) + std::string(100, 'x'), doc).key;
    auto sig = store.value()->GetSignature(key);
    ASSERT_TRUE(sig.ok()) << doc << ": " << sig.status().ToString();
    ASSERT_EQ(sig.value(), sig_of(doc)) << doc;
  }
}

}  // namespace
}  // namespace shingleton
