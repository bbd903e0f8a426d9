// Crawl over crawl: freeze one crawl as a reference generation, deduplicate the
// next against it. Checked against exact Jaccard by brute force (by definition)
// and against checksums of the reference files, which must never change.
#include <gtest/gtest.h>
#include <zlib.h>

#include <fstream>
#include <set>

#include "index/dedup_job.h"
#include "index/reference_set.h"
#include "tests/test_util.h"

namespace shingleton {
namespace {

using namespace shingleton::testing;

const std::string kCorpus = std::string(SHINGLETON_SOURCE_DIR) + "/demo_data/crawl-2026-11.jsonl";

// The demo corpus split in two "crawls": even lines and odd lines.
void SplitInTwo(const TempDir& dir) { SplitLinesInTwo(kCorpus, dir.File("old.jsonl"), dir.File("new.jsonl")); }

DedupOptions Job(const std::string& input, const std::string& out) {
  DedupOptions o;
  o.ingest.inputs = {input};
  o.out_dir = out;
  return o;
}

struct DropLine {
  std::string duplicate_of, reason, reference;
};

std::map<std::string, DropLine> ReadDrops(const std::string& out_dir) {
  std::map<std::string, DropLine> drops;
  simdjson::dom::parser parser;
  std::ifstream in(out_dir + "/drop.jsonl");
  for (std::string line; std::getline(in, line);) {
    simdjson::dom::element e;
    if (parser.parse(line).get(e)) continue;
    DropLine d;
    d.duplicate_of = std::string(std::string_view(e["duplicate_of"]));
    d.reason = std::string(std::string_view(e["reason"]));
    std::string_view ref;
    if (!e["reference"].get(ref)) d.reference = std::string(ref);
    drops[std::string(std::string_view(e["id"]))] = d;
  }
  return drops;
}

// Deduplicates `input` into `job_dir`, then freezes it as generation `name` at `ref_dir`.
StatusOr<GenerationRecord> DedupAndFreeze(const std::string& input, const std::string& job_dir,
                                          const std::string& ref_dir, const std::string& name) {
  auto job = RunDedupJob(Job(input, job_dir));
  if (!job.ok()) return job.status();
  FreezeOptions fo;
  fo.index_path = job_dir + "/index";
  fo.out_dir = ref_dir;
  fo.name = name;
  return FreezeGeneration(fo);
}

TEST(ReferenceTest, NewCrawlAgainstFrozenReference) {
  TempDir dir;
  SplitInTwo(dir);
  auto rec = DedupAndFreeze(dir.File("old.jsonl"), dir.File("old"), dir.File("ref"), "crawl-2026-10");
  ASSERT_TRUE(rec.ok()) << rec.status().ToString();
  const Manifests old = ReadManifests(dir.File("old"));
  EXPECT_EQ(rec->documents, old.kept.size());
  const std::string before = ChecksumDirectory(dir.File("ref/db")).value();
  EXPECT_EQ(before, rec->checksum);

  DedupOptions o = Job(dir.File("new.jsonl"), dir.File("new"));
  o.references = {dir.File("ref")};
  auto s = RunDedupJob(o);
  ASSERT_TRUE(s.ok()) << s.status().ToString();
  // The reference files are byte-identical after the job (checksum of every file).
  EXPECT_EQ(ChecksumDirectory(dir.File("ref/db")).value(), before);
  EXPECT_EQ(ReadGenerationRecord(dir.File("ref")).value().checksum, before);

  const Corpus all = ReadJsonlCorpus(kCorpus);
  const Corpus fresh = ReadJsonlCorpus(dir.File("new.jsonl"));
  const Manifests now = ReadManifests(dir.File("new"));
  const auto drops = ReadDrops(dir.File("new"));
  // Reference documents never appear in the new manifests: exactly the new ids do.
  std::set<std::string> ids(fresh.ids.begin(), fresh.ids.end());
  std::set<std::string> listed;
  for (const auto& [id, k] : now.kept_of) listed.insert(id);
  EXPECT_EQ(listed, ids);

  // Every new document whose exact Jaccard with a reference (kept) document is
  // >= 0.9 is dropped against the reference (brute force over all pairs).
  std::map<std::string, size_t> index;
  for (size_t i = 0; i < all.ids.size(); ++i) index[all.ids[i]] = i;
  size_t must_drop = 0, dropped_right = 0;
  for (const ExactPair& p : AllPairsExactJaccard(all, 0.9)) {
    for (auto [n, r] : {std::pair{p.a, p.b}, std::pair{p.b, p.a}}) {
      if (!ids.count(all.ids[n]) || !old.kept.count(all.ids[r])) continue;
      ++must_drop;
      auto it = drops.find(all.ids[n]);
      if (it != drops.end() && it->second.reference == "crawl-2026-10" &&
          it->second.reason.rfind("reference-", 0) == 0 && old.kept.count(it->second.duplicate_of)) {
        ++dropped_right;
      } else {
        ADD_FAILURE() << all.ids[n] << " has J=" << p.jaccard << " with reference " << all.ids[r]
                      << " but was not dropped against the reference";
      }
    }
  }
  EXPECT_GT(must_drop, 50u);
  EXPECT_EQ(dropped_right, must_drop);
  // Reference drops are at least the threshold from their reference document.
  for (const auto& [id, d] : drops) {
    if (d.reference.empty()) continue;
    const double j = ExactJaccardOf(all.texts[index[id]], all.texts[index[d.duplicate_of]]);
    EXPECT_GE(j, 0.7) << id << " vs " << d.duplicate_of;
    if (d.reason == "reference-exact") {
      EXPECT_DOUBLE_EQ(j, 1.0) << id;
    }
  }
}

TEST(ReferenceTest, SchemeMismatchIsRefusedAndGenerationsStack) {
  TempDir dir;
  SplitInTwo(dir);
  ASSERT_TRUE(DedupAndFreeze(dir.File("old.jsonl"), dir.File("old"), dir.File("ref1"), "gen-1").ok());

  DedupOptions other = Job(dir.File("new.jsonl"), dir.File("x"));
  other.num_hashes = 64;
  other.references = {dir.File("ref1")};
  auto refused = RunDedupJob(other);
  ASSERT_FALSE(refused.ok());
  EXPECT_EQ(refused.status().code(), Status::Code::kMismatch);
  EXPECT_NE(refused.status().message().find("gen-1"), std::string::npos) << refused.status().message();
  EXPECT_NE(refused.status().message().find("minhash-ms32:128 vs minhash-ms32:64"), std::string::npos);

  // Month two is frozen after deduplicating against month one; month three sees both.
  DedupOptions two = Job(dir.File("new.jsonl"), dir.File("two"));
  two.references = {dir.File("ref1")};
  ASSERT_TRUE(RunDedupJob(two).ok());
  FreezeOptions fo;
  fo.index_path = dir.File("two/index");
  fo.out_dir = dir.File("ref2");
  fo.name = "gen-2";
  ASSERT_TRUE(FreezeGeneration(fo).ok());
  DedupOptions three = Job(kCorpus, dir.File("three"));
  three.references = {dir.File("ref1"), dir.File("ref2")};
  auto s3 = RunDedupJob(three);
  ASSERT_TRUE(s3.ok()) << s3.status().ToString();
  // Every document of the whole corpus was kept by generation 1 or 2, or dropped;
  // so month three keeps only what both generations lack and names both.
  std::set<std::string> gens;
  for (const auto& [id, d] : ReadDrops(dir.File("three"))) gens.insert(d.reference);
  EXPECT_TRUE(gens.count("gen-1"));
  EXPECT_TRUE(gens.count("gen-2"));
  EXPECT_EQ(s3->dropped_by_reason[static_cast<size_t>(DropReason::kReferenceExact)] +
                s3->dropped_by_reason[static_cast<size_t>(DropReason::kReferenceNear)] +
                s3->dropped_by_reason[static_cast<size_t>(DropReason::kNear)] +
                s3->dropped_by_reason[static_cast<size_t>(DropReason::kExact)],
            s3->dropped);
}

// URL revisits: a page re-crawled under another spelling of its URL (RFC 3986 §6
// normalisation: case of scheme and host, default port, fragment, tracking
// parameters, parameter order) is dropped with reason "url" when asked.
TEST(ReferenceTest, UrlRevisitsAndExactFastPath) {
  TempDir dir;
  WriteFile(dir.File("old.jsonl"),
            JsonLine("old-1", "Ferry timetable for the winter season from Tarnwick pier to Osk harbour",
                     "https://ferries.example/timetable?season=winter&route=7") +
                JsonLine("old-2", "The co-op bakery opens at seven on market days and closes at noon sharp",
                         "https://coop.example/bakery"));
  DedupOptions o = Job(dir.File("old.jsonl"), dir.File("old"));
  ASSERT_TRUE(RunDedupJob(o).ok());
  FreezeOptions fo;
  fo.index_path = dir.File("old/index");
  fo.out_dir = dir.File("ref");
  ASSERT_TRUE(FreezeGeneration(fo).ok());
  const std::string page = "Completely rewritten page about lighthouse tours and gull colonies on Brellan";
  WriteFile(dir.File("new.jsonl"),
            JsonLine("new-1", page,
                     "HTTPS://Ferries.EXAMPLE:443/timetable?route=7&utm_source=mail&season=winter#top") +
                JsonLine("new-2", page + " with a different ending entirely, nothing alike",
                         "https://ferries.example/other") +
                JsonLine("new-3", "Gull colony census results for the northern cliffs of Osk island this year") +
                JsonLine("new-4", "Gull colony census results for the northern cliffs of Osk island this year") +
                JsonLine("new-5", "GULL colony census results, for the northern cliffs of Osk island this year!"));
  DedupOptions n = Job(dir.File("new.jsonl"), dir.File("new"));
  n.references = {dir.File("ref")};
  n.url_revisits = true;
  auto s = RunDedupJob(n);
  ASSERT_TRUE(s.ok()) << s.status().ToString();
  const auto drops = ReadDrops(dir.File("new"));
  ASSERT_TRUE(drops.count("new-1")) << ReadFile(dir.File("new/drop.jsonl"));
  // new-5 has the most raw bytes (its punctuation), so `longest` keeps it.
  ASSERT_TRUE(drops.count("new-3") && drops.count("new-4")) << ReadFile(dir.File("new/drop.jsonl"));
  EXPECT_EQ(drops.at("new-1").reason, "url");
  EXPECT_EQ(drops.at("new-1").duplicate_of, "old-1");
  EXPECT_FALSE(drops.count("new-2"));
  // Identical normalised texts join at once with reason "exact" and no LSH work.
  EXPECT_EQ(s->exact_duplicates, 2u);
  EXPECT_EQ(drops.at("new-3").reason, "exact");
  EXPECT_EQ(drops.at("new-4").reason, "exact");
  EXPECT_EQ(drops.at("new-4").duplicate_of, "new-5");
}

// The new crawl as WARC (record-at-a-time gzip members, WARC 1.1 annex D; written
// here with zlib, one gzip member per record) gives the same decisions against
// the reference as the same documents as JSON Lines.
TEST(ReferenceTest, WarcCrawlDecidesLikeJsonl) {
  TempDir dir;
  SplitInTwo(dir);
  ASSERT_TRUE(DedupAndFreeze(dir.File("old.jsonl"), dir.File("old"), dir.File("ref"), "ref").ok());
  const Corpus fresh = ReadJsonlCorpus(dir.File("new.jsonl"));
  const std::string warc = dir.File("new.warc.gz");
  for (size_t i = 0; i < fresh.ids.size(); ++i) {
    // A resource record (WARC 1.1 §6.4) with a text/plain block, and a request
    // record that holds no document.
    const std::string block = fresh.texts[i];
    std::string rec = "WARC/1.1\r\nWARC-Type: resource\r\nWARC-Record-ID: " + fresh.ids[i] +
                      "\r\nWARC-Date: 2026-11-15T12:00:00Z\r\nWARC-Target-URI: https://isles.example/p/" +
                      std::to_string(i) + "\r\nContent-Type: text/plain; charset=utf-8\r\nContent-Length: " +
                      std::to_string(block.size()) + "\r\n\r\n" + block + "\r\n\r\n";
    const std::string req = "GET /p HTTP/1.1\r\nHost: isles.example\r\n\r\n";
    rec += "WARC/1.1\r\nWARC-Type: request\r\nWARC-Record-ID: <urn:uuid:req-" + std::to_string(i) +
           ">\r\nContent-Type: application/http; msgtype=request\r\nContent-Length: " +
           std::to_string(req.size()) + "\r\n\r\n" + req + "\r\n\r\n";
    gzFile gz = gzopen(warc.c_str(), "ab");
    ASSERT_NE(gz, nullptr);
    ASSERT_EQ(gzwrite(gz, rec.data(), static_cast<unsigned>(rec.size())), static_cast<int>(rec.size()));
    gzclose(gz);
  }
  DedupOptions a = Job(warc, dir.File("warc"));
  a.references = {dir.File("ref")};
  auto sa = RunDedupJob(a);
  ASSERT_TRUE(sa.ok()) << sa.status().ToString();
  DedupOptions b = Job(dir.File("new.jsonl"), dir.File("jsonl"));
  b.references = {dir.File("ref")};
  ASSERT_TRUE(RunDedupJob(b).ok());
  EXPECT_EQ(sa->documents, fresh.ids.size());
  EXPECT_EQ(sa->records_without_document.at("record_type"), fresh.ids.size());
  EXPECT_EQ(ReadManifests(dir.File("warc")).kept_of, ReadManifests(dir.File("jsonl")).kept_of);
}

// Keep policies newest and oldest use the capture date.
TEST(ReferenceTest, NewestAndOldestPolicies) {
  TempDir dir;
  const std::string t = "Storm warning issued for the outer isles, ferries suspended until further notice";
  WriteFile(dir.File("in.jsonl"), "{\"id\":\"a\",\"text\":\"" + t + "\",\"date\":\"2026-11-02T10:00:00Z\"}\n"
                                  "{\"id\":\"b\",\"text\":\"" + t + "\",\"date\":\"2026-11-09T10:00:00Z\"}\n"
                                  "{\"id\":\"c\",\"text\":\"" + t + "\"}\n");
  for (const char* policy : {"newest", "oldest"}) {
    DedupOptions o = Job(dir.File("in.jsonl"), dir.File(policy));
    o.policy = KeepPolicy::Parse(policy).value();
    o.ingest.fields.date = "date";
    ASSERT_TRUE(RunDedupJob(o).ok());
    EXPECT_EQ(ReadManifests(dir.File(policy)).kept_of["c"], std::string(policy) == "newest" ? "b" : "a");
  }
}

}  // namespace
}  // namespace shingleton
