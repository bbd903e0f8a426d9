// End-to-end tests of the embedded job (RunDedupJob) on real files and a real
// RocksDB index in temporary directories.
#include <gtest/gtest.h>

#include <algorithm>
#include <cstdlib>
#include <filesystem>
#include <random>

#include "index/dedup_job.h"
#include "index/index_store.h"
#include "index/normalizer.h"
#include "index/shingler.h"
#include "tests/test_util.h"

namespace shingleton {
namespace {

using testing::CommonLicense;
using testing::FileExists;
using testing::JsonLine;
using testing::ReadFile;
using testing::ReadManifests;
using testing::TempDir;
using testing::WriteFile;

DedupOptions Options(const std::vector<std::string>& inputs, const std::string& out) {
  DedupOptions o;
  o.ingest.inputs = inputs;
  o.out_dir = out;
  o.ingest.threads = 2;
  return o;
}

// The licenses in Debian's base-files package, as one JSONL corpus.
const std::vector<std::string> kLicenses = {"Apache-2.0", "Artistic", "BSD", "CC0-1.0",
                                            "GFDL-1.2", "GFDL-1.3", "GPL-1", "GPL-2", "GPL-3",
                                            "LGPL-2", "LGPL-2.1", "LGPL-3", "MPL-1.1", "MPL-2.0"};

std::string LicenseCorpus() {
  std::string out;
  for (const auto& name : kLicenses) out += JsonLine(name, CommonLicense(name));
  return out;
}

double ExactWordJaccard(const std::string& a, const std::string& b) {
  Normalizer n;
  NormalizedText ta, tb;
  n.Normalize(a, &ta);
  n.Normalize(b, &tb);
  const SketchScheme s = SketchScheme::Default();
  return ExactJaccard(ShingleSet(ta, ShingleKind::kWord, 5, s.seed),
                      ShingleSet(tb, ShingleKind::kWord, 5, s.seed));
}

// Real near-duplicates: Debian's /usr/share/common-licenses (package base-files).
// Exact Jaccard of word 5-grams is computed by brute force from the definition;
// the job must agree with it at the 0.8 threshold.
TEST(DedupJobTest, CommonLicensesClusterAsExactJaccardSays) {
  if (!FileExists("/usr/share/common-licenses/GFDL-1.3")) {
    GTEST_SKIP() << "base-files licenses missing";
  }
  TempDir dir;
  WriteFile(dir.File("lic.jsonl"), LicenseCorpus());
  auto summary = RunDedupJob(Options({dir.File("lic.jsonl")}, dir.File("out")));
  ASSERT_TRUE(summary.ok()) << summary.status().ToString();
  auto m = ReadManifests(dir.File("out"));
  ASSERT_EQ(m.kept_of.size(), kLicenses.size());

  const double gfdl = ExactWordJaccard(CommonLicense("GFDL-1.2"), CommonLicense("GFDL-1.3"));
  const double gpl = ExactWordJaccard(CommonLicense("GPL-2"), CommonLicense("GPL-3"));
  EXPECT_GT(gfdl, 0.8);  // ≈0.85 on word 5-grams
  EXPECT_LT(gpl, 0.5);
  EXPECT_EQ(m.kept_of["GFDL-1.2"], m.kept_of["GFDL-1.3"]) << "exact Jaccard " << gfdl;
  EXPECT_NE(m.kept_of["GPL-2"], m.kept_of["GPL-3"]) << "exact Jaccard " << gpl;
  // Every pair far from the threshold is decided as its exact Jaccard says.
  for (size_t i = 0; i < kLicenses.size(); ++i) {
    for (size_t j = i + 1; j < kLicenses.size(); ++j) {
      const double exact = ExactWordJaccard(CommonLicense(kLicenses[i]), CommonLicense(kLicenses[j]));
      const bool together = m.kept_of[kLicenses[i]] == m.kept_of[kLicenses[j]];
      if (exact >= 0.9) {
        EXPECT_TRUE(together) << kLicenses[i] << " " << kLicenses[j] << " " << exact;
      }
      if (exact < 0.6) {
        EXPECT_FALSE(together) << kLicenses[i] << " and " << kLicenses[j] << " at " << exact;
      }
    }
  }
  // The kept document of the GFDL pair is the longer text (policy `longest`).
  const std::string kept = m.kept_of["GFDL-1.2"];
  const std::string other = kept == "GFDL-1.2" ? "GFDL-1.3" : "GFDL-1.2";
  EXPECT_GE(CommonLicense(kept).size(), CommonLicense(other).size());
  EXPECT_NEAR(m.similarity[other], gfdl, 4 * std::sqrt(gfdl * (1 - gfdl) / 128));
}

// A small corpus with planted copies and edits, plus unrelated documents.
std::vector<std::string> PlantedCorpus(int families, int copies, uint32_t seed) {
  std::mt19937 rng(seed);
  const char* words[] = {"harbour", "ferry", "tide", "market", "lantern", "gull", "pier", "rope",
                         "salt", "bread", "cellar", "mill", "orchard", "storm", "quay", "net",
                         "slate", "chapel", "meadow", "beacon", "kelp", "cove", "ledger", "loom"};
  auto text = [&](int n) {
    std::string t;
    for (int i = 0; i < n; ++i) t += std::string(words[rng() % 24]) + (i % 11 == 10 ? ". " : " ");
    return t;
  };
  std::vector<std::string> lines;
  for (int f = 0; f < families; ++f) {
    const std::string base = text(200);
    for (int c = 0; c < copies; ++c) {
      std::string t = base;
      if (c % 2 == 1) t += " Posted on day " + std::to_string(c) + ".";  // small edit
      lines.push_back(JsonLine("f" + std::to_string(f) + "-c" + std::to_string(c), t));
    }
  }
  for (int u = 0; u < 40; ++u) lines.push_back(JsonLine("u" + std::to_string(u), text(150)));
  return lines;
}

std::string Join(const std::vector<std::string>& lines) {
  std::string s;
  for (const auto& l : lines) s += l;
  return s;
}

// Determinism: the same decisions for any thread count and any input order
// (keep policy `longest`, ties by id). Byte-identical manifests across threads.
TEST(DedupJobTest, DecisionsDoNotDependOnThreadsOrInputOrder) {
  TempDir dir;
  auto lines = PlantedCorpus(12, 6, 7);
  WriteFile(dir.File("a.jsonl"), Join(lines));
  std::shuffle(lines.begin(), lines.end(), std::mt19937(99));
  WriteFile(dir.File("b.jsonl"), Join(lines));

  auto run = [&](const std::string& input, int threads, const std::string& out) {
    DedupOptions o = Options({input}, dir.File(out));
    o.ingest.threads = threads;
    o.ingest.batch_lines = 7;  // many small batches, so threads really interleave
    auto s = RunDedupJob(o);
    EXPECT_TRUE(s.ok()) << s.status().ToString();
    return ReadManifests(dir.File(out));
  };
  auto one = run(dir.File("a.jsonl"), 1, "t1");
  auto four = run(dir.File("a.jsonl"), 4, "t4");
  auto shuffled = run(dir.File("b.jsonl"), 3, "shuffled");
  EXPECT_EQ(one.kept_of, four.kept_of);
  EXPECT_EQ(one.kept_of, shuffled.kept_of);
  EXPECT_EQ(ReadFile(dir.File("t1/keep.jsonl")), ReadFile(dir.File("t4/keep.jsonl")));
  EXPECT_EQ(ReadFile(dir.File("t1/drop.jsonl")), ReadFile(dir.File("t4/drop.jsonl")));
  // Each planted family is one cluster of 6; unrelated documents are kept alone.
  EXPECT_EQ(one.kept.size(), 12u + 40u);
  for (int f = 0; f < 12; ++f) {
    for (int c = 1; c < 6; ++c) {
      EXPECT_EQ(one.kept_of["f" + std::to_string(f) + "-c0"],
                one.kept_of["f" + std::to_string(f) + "-c" + std::to_string(c)]);
    }
  }
}

// The `first` policy keeps the earliest document in input order.
TEST(DedupJobTest, FirstPolicyKeepsEarliestAndFieldPolicyKeepsLargest) {
  TempDir dir;
  WriteFile(dir.File("in.jsonl"),
            "{\"id\":\"b\",\"text\":\"" + std::string("alpha beta gamma delta epsilon zeta eta theta") +
                "\",\"rank\":3}\n"
                "{\"id\":\"a\",\"text\":\"alpha beta gamma delta epsilon zeta eta theta\",\"rank\":1}\n"
                "{\"id\":\"c\",\"text\":\"alpha beta gamma delta epsilon zeta eta theta\"}\n");
  DedupOptions o = Options({dir.File("in.jsonl")}, dir.File("first"));
  o.policy = KeepPolicy::Parse("first").value();
  ASSERT_TRUE(RunDedupJob(o).ok());
  EXPECT_EQ(ReadManifests(dir.File("first")).kept_of["a"], "b");

  o.out_dir = dir.File("field");
  o.policy = KeepPolicy::Parse("field:rank").value();
  o.ingest.fields.rank = "rank";
  ASSERT_TRUE(RunDedupJob(o).ok());
  EXPECT_EQ(ReadManifests(dir.File("field")).kept_of["c"], "b");

  o.out_dir = dir.File("longest");  // all equal length: the smallest id wins
  o.policy = KeepPolicy();
  ASSERT_TRUE(RunDedupJob(o).ok());
  EXPECT_EQ(ReadManifests(dir.File("longest")).kept_of["b"], "a");
}

struct BadCase {
  const char* name;
  std::string line;
  const char* message;  // expected in the error
  BadRecord kind;
};

class BadInputTest : public ::testing::TestWithParam<BadCase> {};

// Bad input: a clear error naming file and line, no manifest written; with
// --skip-bad the record is skipped and counted.
TEST_P(BadInputTest, FailsWithFileAndLineOrSkipsAndCounts) {
  const BadCase& c = GetParam();
  TempDir dir;
  const std::string input = dir.File("in.jsonl");
  WriteFile(input, JsonLine("ok-1", "one two three four five six") + c.line + "\n" +
                       JsonLine("ok-2", "seven eight nine ten eleven twelve"));
  auto failed = RunDedupJob(Options({input}, dir.File("out")));
  ASSERT_FALSE(failed.ok());
  EXPECT_EQ(failed.status().code(), Status::Code::kBadInput);
  EXPECT_NE(failed.status().message().find(input + ":2"), std::string::npos)
      << failed.status().message();
  EXPECT_NE(failed.status().message().find(c.message), std::string::npos)
      << failed.status().message();
  EXPECT_FALSE(FileExists(dir.File("out/keep.jsonl")));
  EXPECT_FALSE(FileExists(dir.File("out/drop.jsonl")));
  EXPECT_FALSE(FileExists(dir.File("out/summary.json")));
  EXPECT_FALSE(FileExists(dir.File("out/index")));

  DedupOptions o = Options({input}, dir.File("out"));
  o.skip_bad = true;
  auto skipped = RunDedupJob(o);
  ASSERT_TRUE(skipped.ok()) << skipped.status().ToString();
  EXPECT_EQ(skipped->skipped_total(), 1u);
  EXPECT_EQ(skipped->skipped[static_cast<size_t>(c.kind)], 1u);
  EXPECT_EQ(skipped->documents, c.kind == BadRecord::kDuplicateId ? 2u : 2u);
  EXPECT_NE(ReadFile(dir.File("out/summary.json")).find(BadRecordName(c.kind)), std::string::npos);
}

INSTANTIATE_TEST_SUITE_P(
    Cases, BadInputTest,
    ::testing::Values(
        BadCase{"malformed", "{\"id\": \"x\", \"text\": \"unterminated}", "malformed JSON",
                BadRecord::kMalformedJson},
        BadCase{"trailing_garbage", "{\"id\": \"x\", \"text\": \"t\"} extra", "malformed JSON",
                BadRecord::kMalformedJson},
        BadCase{"not_object", "[1, 2, 3]", "not a JSON object", BadRecord::kMalformedJson},
        BadCase{"missing_id", "{\"text\": \"no id here\"}", "missing field \"id\"",
                BadRecord::kMissingField},
        BadCase{"missing_text", "{\"id\": \"x\"}", "missing field \"text\"", BadRecord::kMissingField},
        BadCase{"numeric_id", "{\"id\": 7, \"text\": \"t\"}", "\"id\" is not a string",
                BadRecord::kWrongType},
        BadCase{"invalid_utf8", "{\"id\": \"x\", \"text\": \"caf\xC3\x28\"}", "UTF-8",
                BadRecord::kInvalidUtf8},
        BadCase{"lone_surrogate", "{\"id\": \"x\", \"text\": \"\\ud800 alone\"}", "",
                BadRecord::kMalformedJson},
        BadCase{"duplicate_id", "{\"id\": \"ok-1\", \"text\": \"another text entirely\"}",
                "duplicate id \"ok-1\"", BadRecord::kDuplicateId}),
    [](const ::testing::TestParamInfo<BadCase>& info) { return info.param.name; });

// Gzip input (.gz) is read like plain JSONL; a truncated gzip file is an error
// naming the file, and nothing is written.
TEST(DedupJobTest, ReadsGzipAndRejectsTruncatedGzip) {
  TempDir dir;
  WriteFile(dir.File("lic.jsonl"), LicenseCorpus());
  ASSERT_EQ(std::system(("gzip -k -f " + dir.File("lic.jsonl")).c_str()), 0);
  auto plain = RunDedupJob(Options({dir.File("lic.jsonl")}, dir.File("plain")));
  auto gz = RunDedupJob(Options({dir.File("lic.jsonl.gz")}, dir.File("gz")));
  ASSERT_TRUE(plain.ok() && gz.ok());
  EXPECT_EQ(ReadFile(dir.File("plain/keep.jsonl")), ReadFile(dir.File("gz/keep.jsonl")));
  EXPECT_EQ(ReadFile(dir.File("plain/drop.jsonl")), ReadFile(dir.File("gz/drop.jsonl")));

  std::string bytes = ReadFile(dir.File("lic.jsonl.gz"));
  WriteFile(dir.File("cut.jsonl.gz"), bytes.substr(0, bytes.size() / 2));
  auto cut = RunDedupJob(Options({dir.File("cut.jsonl.gz")}, dir.File("cut")));
  ASSERT_FALSE(cut.ok());
  EXPECT_NE(cut.status().message().find("cut.jsonl.gz"), std::string::npos) << cut.status().ToString();
  EXPECT_FALSE(FileExists(dir.File("cut/keep.jsonl")));
}

// A failed job leaves an earlier index and manifests exactly as they were.
TEST(DedupJobTest, FailedRerunLeavesEarlierResultsUntouched) {
  TempDir dir;
  WriteFile(dir.File("good.jsonl"), LicenseCorpus());
  WriteFile(dir.File("bad.jsonl"), LicenseCorpus() + "{\"id\": broken\n");
  ASSERT_TRUE(RunDedupJob(Options({dir.File("good.jsonl")}, dir.File("out"))).ok());
  const std::string keep = ReadFile(dir.File("out/keep.jsonl"));
  const std::string summary = ReadFile(dir.File("out/summary.json"));

  DedupOptions o = Options({dir.File("bad.jsonl")}, dir.File("out"));
  o.replace = true;
  auto failed = RunDedupJob(o);
  ASSERT_FALSE(failed.ok());
  EXPECT_NE(failed.status().message().find("bad.jsonl:15"), std::string::npos)
      << failed.status().ToString();
  EXPECT_EQ(ReadFile(dir.File("out/keep.jsonl")), keep);
  EXPECT_EQ(ReadFile(dir.File("out/summary.json")), summary);
  // The old index still opens and holds the old job.
  auto store = IndexStore::Open(dir.File("out/index"), nullptr);
  ASSERT_TRUE(store.ok()) << store.status().ToString();
  EXPECT_EQ(store.value()->GetJobRecord().value(), summary.substr(0, summary.size() - 1));
  // No temporary files or half-built indexes are left behind.
  for (const auto& e : std::filesystem::directory_iterator(dir.File("out"))) {
    const std::string name = e.path().filename().string();
    EXPECT_TRUE(name == "keep.jsonl" || name == "drop.jsonl" || name == "summary.json" ||
                name == "index")
        << name;
  }
}

// Without --replace an existing result is refused; an existing index built with
// another scheme is refused with both schemes named.
TEST(DedupJobTest, RefusesToOverwriteAndNamesSchemeMismatch) {
  TempDir dir;
  WriteFile(dir.File("in.jsonl"), LicenseCorpus());
  ASSERT_TRUE(RunDedupJob(Options({dir.File("in.jsonl")}, dir.File("out"))).ok());
  auto again = RunDedupJob(Options({dir.File("in.jsonl")}, dir.File("out")));
  ASSERT_FALSE(again.ok());
  EXPECT_EQ(again.status().code(), Status::Code::kAlreadyExists);

  DedupOptions o = Options({dir.File("in.jsonl")}, dir.File("out"));
  o.num_hashes = 64;
  auto other = RunDedupJob(o);
  ASSERT_FALSE(other.ok());
  EXPECT_EQ(other.status().code(), Status::Code::kMismatch);
  EXPECT_NE(other.status().message().find("signature minhash-ms32:128 vs minhash-ms32:64"),
            std::string::npos)
      << other.status().message();

  o.replace = true;
  auto replaced = RunDedupJob(o);
  ASSERT_TRUE(replaced.ok()) << replaced.status().ToString();
  EXPECT_EQ(IndexStore::ReadScheme(dir.File("out/index")).value().num_hashes, 64);
}

// Empty documents (no token after normalisation) share the sentinel signature
// and form one cluster; every input id appears exactly once in the manifests.
TEST(DedupJobTest, EmptyDocumentsClusterTogether) {
  TempDir dir;
  WriteFile(dir.File("in.jsonl"), JsonLine("e1", "") + JsonLine("e2", " ... !!! ") +
                                      JsonLine("e3", "\t") + JsonLine("t", "real words here"));
  auto s = RunDedupJob(Options({dir.File("in.jsonl")}, dir.File("out")));
  ASSERT_TRUE(s.ok()) << s.status().ToString();
  EXPECT_EQ(s->empty_documents, 3u);
  auto m = ReadManifests(dir.File("out"));
  EXPECT_EQ(m.kept_of.size(), 4u);
  EXPECT_EQ(m.kept_of["e2"], m.kept_of["e1"]);
  EXPECT_EQ(m.kept_of["e3"], m.kept_of["e1"]);
  EXPECT_EQ(m.kept_of["t"], "t");
}

// A bucket holding many copies of one page is verified in O(m * leaders), not
// O(m^2), and still yields one cluster.
TEST(DedupJobTest, HugeBucketIsLinearAndStillOneCluster) {
  TempDir dir;
  const std::string page = CommonLicense("MPL-2.0").substr(0, 3000);
  std::string corpus;
  const int copies = 2000;
  for (int i = 0; i < copies; ++i) corpus += JsonLine("copy-" + std::to_string(i), page);
  WriteFile(dir.File("in.jsonl"), corpus);
  auto s = RunDedupJob(Options({dir.File("in.jsonl")}, dir.File("out")));
  ASSERT_TRUE(s.ok()) << s.status().ToString();
  EXPECT_EQ(s->kept, 1u);
  EXPECT_EQ(s->largest_cluster, static_cast<uint64_t>(copies));
  // 16 bands x (copies - 1) comparisons with one leader, far below copies^2 / 2.
  EXPECT_LE(s->comparisons, 16u * copies);
}

// Character shingles for scripts written without spaces: CJK text (code points
// U+4E00..U+9FFF, all assigned CJK Unified Ideographs per Unicode's Blocks.txt)
// with planted edits. The job with --shingle char must agree with exact Jaccard
// of character 5-grams computed by brute force.
TEST(DedupJobTest, CharacterShinglesForTextWithoutSpaces) {
  std::mt19937 rng(11);
  auto cjk = [&]() {
    uint32_t cp = 0x4E00 + rng() % 0x5200;
    std::string s;
    s.push_back(static_cast<char>(0xE0 | (cp >> 12)));
    s.push_back(static_cast<char>(0x80 | ((cp >> 6) & 0x3F)));
    s.push_back(static_cast<char>(0x80 | (cp & 0x3F)));
    return s;
  };
  std::vector<std::string> ids, texts;
  for (int f = 0; f < 6; ++f) {
    std::vector<std::string> base;
    for (int i = 0; i < 400; ++i) base.push_back(i % 37 == 36 ? "\xE3\x80\x82" : cjk());  // 。
    for (double rate : {0.0, 0.005, 0.03, 0.2}) {
      std::vector<std::string> v = base;
      for (auto& c : v) {
        if (rng() % 10000 < rate * 10000) c = cjk();
      }
      std::string t;
      for (const auto& c : v) t += c;
      ids.push_back("f" + std::to_string(f) + "-e" + std::to_string(int(rate * 1000)));
      texts.push_back(t);
    }
  }
  TempDir dir;
  std::string corpus;
  for (size_t i = 0; i < ids.size(); ++i) corpus += JsonLine(ids[i], texts[i]);
  WriteFile(dir.File("cjk.jsonl"), corpus);
  DedupOptions o = Options({dir.File("cjk.jsonl")}, dir.File("out"));
  o.shingle_kind = ShingleKind::kChar;
  auto s = RunDedupJob(o);
  ASSERT_TRUE(s.ok()) << s.status().ToString();
  EXPECT_EQ(s->scheme.shingle_kind, ShingleKind::kChar);
  auto m = ReadManifests(dir.File("out"));
  Normalizer n;
  auto set_of = [&](const std::string& text) {
    NormalizedText t;
    n.Normalize(text, &t);
    return ShingleSet(t, ShingleKind::kChar, 5, SketchScheme().seed);
  };
  int close_pairs = 0;
  for (size_t i = 0; i < ids.size(); ++i) {
    for (size_t j = i + 1; j < ids.size(); ++j) {
      const double exact = ExactJaccard(set_of(texts[i]), set_of(texts[j]));
      const bool together = m.kept_of[ids[i]] == m.kept_of[ids[j]];
      if (exact >= 0.9) {
        ++close_pairs;
        EXPECT_TRUE(together) << ids[i] << " " << ids[j] << " " << exact;
      }
      if (exact < 0.6) {
        EXPECT_FALSE(together) << ids[i] << " " << ids[j] << " " << exact;
      }
    }
  }
  EXPECT_GE(close_pairs, 6);  // at least the 0% vs 0.5% edit pairs
}

}  // namespace
}  // namespace shingleton
