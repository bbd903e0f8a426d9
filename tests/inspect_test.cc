// `shingleton inspect` on the demo job: every answer is checked against something
// the inspection code did not produce — the job's own manifests (keep.jsonl,
// drop.jsonl, summary.json), the planted families of demo_data/truth.tsv, exact
// Jaccard by definition (|A ∩ B| / |A ∪ B| of word 5-gram sets, computed by the
// brute-force helper in test_util), and hand-worked shingle sets.
#include "index/inspect.h"

#include <gtest/gtest.h>
#include <simdjson.h>

#include <algorithm>
#include <map>
#include <set>

#include "index/dedup_job.h"
#include "index/inspect_report.h"
#include "tests/process_util.h"
#include "tests/test_util.h"

namespace shingleton {
namespace {

using namespace shingleton::testing;

class InspectTest : public ::testing::Test {
 protected:
  // The demo job twice: as deploy/demo.sh runs it, and with --store-text.
  static void SetUpTestSuite() {
    dir_ = new TempDir();
    for (const char* name : {"plain", "text"}) {
      std::vector<std::string> args = {"dedup", "--input",        DemoCorpusPath(),
                                       "--out", dir_->File(name), "--quiet"};
      if (std::string(name) == "text") args.push_back("--store-text");
      RunResult r = RunShingleton(args);
      ASSERT_EQ(r.exit_code, 0) << r.output;
    }
    auto plain = Inspector::Open(dir_->File("plain") + "/index");
    auto text = Inspector::Open(dir_->File("text") + "/index");
    ASSERT_TRUE(plain.ok()) << plain.status().ToString();
    ASSERT_TRUE(text.ok()) << text.status().ToString();
    plain_ = plain.value().release();
    text_ = text.value().release();
  }
  static void TearDownTestSuite() {
    delete plain_;
    delete text_;
    delete dir_;
  }
  static std::string Index(const char* name = "plain") {
    return dir_->File(name) + "/index";
  }
  static std::vector<ManifestLine> Drops(const char* name = "plain") {
    return ReadManifestLines(dir_->File(name) + "/drop.jsonl");
  }
  static std::vector<ManifestLine> Keeps(const char* name = "plain") {
    return ReadManifestLines(dir_->File(name) + "/keep.jsonl");
  }
  static std::string Run(const std::vector<std::string>& args) {
    RunResult r = RunShingleton(args);
    EXPECT_EQ(r.exit_code, 0) << r.output;
    return r.output;
  }
  static TempDir* dir_;
  static Inspector* plain_;
  static Inspector* text_;
};
TempDir* InspectTest::dir_ = nullptr;
Inspector* InspectTest::plain_ = nullptr;
Inspector* InspectTest::text_ = nullptr;

// Source: the job's manifests and summary.json (index/manifest.h documents them).
TEST_F(InspectTest, StatsAgreeWithTheManifests) {
  const auto keeps = Keeps();
  const auto drops = Drops();
  std::map<std::string, uint64_t> reasons;
  for (const auto& d : drops) ++reasons[d.reason];
  uint64_t clusters = 0, largest = 0;
  for (const auto& k : keeps) {
    if (k.cluster_size >= 2) ++clusters;
    largest = std::max<uint64_t>(largest, k.cluster_size);
  }
  const std::string json = Run({"inspect", "stats", "--index", Index(), "--json"});
  simdjson::dom::parser parser;
  simdjson::dom::element e;
  ASSERT_FALSE(parser.parse(json).get(e)) << json;
  EXPECT_EQ(uint64_t(e["documents"]), 2500u);
  EXPECT_EQ(uint64_t(e["kept"]), keeps.size());
  EXPECT_EQ(uint64_t(e["dropped"]), drops.size());
  EXPECT_EQ(uint64_t(e["clusters"]), clusters);
  EXPECT_EQ(uint64_t(e["largest_cluster"]), largest);
  EXPECT_EQ(uint64_t(e["full_text_documents"]), 0u);
  EXPECT_GT(uint64_t(e["bytes_on_disk"]), 0u);
  EXPECT_GT(double(e["bytes_per_document"]), 0.0);
  EXPECT_DOUBLE_EQ(double(e["threshold"]), 0.8);
  EXPECT_EQ(std::string_view(e["keep_policy"]), "longest");
  for (const auto& [reason, n] : reasons)
    EXPECT_EQ(uint64_t(e["dropped_by_reason"][reason]), n) << reason;
  uint64_t in_histogram = 0;
  for (simdjson::dom::element bin : e["cluster_sizes"].get_array())
    in_histogram += uint64_t(bin["clusters"]);
  EXPECT_EQ(in_histogram, clusters);
  auto summary = parser.parse(ReadFile(dir_->File("plain") + "/summary.json"));
  EXPECT_EQ(std::string(std::string_view(e["scheme"])),
            std::string(std::string_view(summary["scheme"])));

  const std::string table =
      Run({"inspect", "stats", "--index", Index(), "--colour", "never"});
  EXPECT_NE(table.find("documents                2500\n"), std::string::npos) << table;
  EXPECT_NE(table.find("dropped                  " + std::to_string(drops.size()) + "\n"),
            std::string::npos)
      << table;
  EXPECT_EQ(table.find("\x1b["), std::string::npos) << "colour without a terminal";
  const std::string coloured =
      Run({"inspect", "stats", "--index", Index(), "--colour", "always"});
  EXPECT_NE(coloured.find("\x1b[1m"), std::string::npos);
}

// Source: keep.jsonl cluster sizes and drop.jsonl similarities of each cluster.
TEST_F(InspectTest, ClustersBySizeAndBySpread) {
  std::map<std::string, unsigned> size_of;
  std::map<std::string, double> spread_of;
  for (const auto& k : Keeps()) size_of[k.cluster] = k.cluster_size;
  for (const auto& d : Drops()) {
    auto [it, fresh] = spread_of.emplace(d.cluster, d.similarity);
    if (!fresh) it->second = std::min(it->second, d.similarity);
  }
  ClusterQuery q;
  q.limit = 0;
  auto all = plain_->Clusters(q);
  ASSERT_TRUE(all.ok());
  size_t expected = 0;
  for (const auto& [c, n] : size_of) expected += n >= 2;
  ASSERT_EQ(all->size(), expected);
  for (size_t i = 0; i < all->size(); ++i) {
    const ClusterRow& r = (*all)[i];
    EXPECT_EQ(r.size, size_of.at(r.cluster));
    EXPECT_NEAR(r.spread, spread_of.at(r.cluster), 5e-5);  // manifests carry 4 decimals
    if (i) {
      EXPECT_GE((*all)[i - 1].size, r.size);
    }
  }
  q.sort_by_spread = true;
  auto by_spread = plain_->Clusters(q);
  ASSERT_TRUE(by_spread.ok());
  for (size_t i = 1; i < by_spread->size(); ++i)
    EXPECT_LE((*by_spread)[i - 1].spread, (*by_spread)[i].spread);
  q.chains_only = true;
  auto chains = plain_->Clusters(q);
  ASSERT_TRUE(chains.ok());
  for (const ClusterRow& r : *chains) EXPECT_LT(r.spread, 0.8);

  const std::string table =
      Run({"inspect", "clusters", "--index", Index(), "--limit", "3"});
  const ClusterRow& top = (*all)[0];
  EXPECT_EQ(
      table.rfind("cluster           size  spread  kept document\n" + top.cluster, 0), 0u)
      << table;
  const std::string json =
      Run({"inspect", "clusters", "--index", Index(), "--limit", "3", "--json"});
  simdjson::dom::parser parser;
  simdjson::dom::array rows = parser.parse(json).get_array();
  ASSERT_EQ(rows.size(), 3u);
  EXPECT_EQ(std::string_view(rows.at(0)["cluster"]), top.cluster);
  EXPECT_EQ(uint64_t(rows.at(0)["size"]), top.size);
  EXPECT_EQ(std::string_view(rows.at(0)["kept_id"]), top.kept_id);
}

// Sources: drop.jsonl for decisions and similarities; exact Jaccard by definition
// (test_util's brute-force word 5-gram sets) for the --store-text job.
TEST_F(InspectTest, ClusterMembersWithEstimatedAndExactJaccard) {
  ClusterQuery q;
  q.limit = 1;
  auto largest = text_->Clusters(q);
  ASSERT_TRUE(largest.ok() && largest->size() == 1);
  auto report = text_->Cluster((*largest)[0].kept_id);
  ASSERT_TRUE(report.ok()) << report.status().ToString();
  EXPECT_EQ(report->members.size(), (*largest)[0].size);
  std::map<std::string, ManifestLine> drops;
  for (const auto& d : Drops("text")) drops[d.id] = d;
  Corpus corpus = ReadJsonlCorpus(DemoCorpusPath());
  std::map<std::string, size_t> at;
  for (size_t i = 0; i < corpus.ids.size(); ++i) at[corpus.ids[i]] = i;
  const std::string& kept_text = corpus.texts[at.at(report->summary.kept_id)];
  ASSERT_TRUE(report->members[0].decision.kept);
  for (const MemberRow& m : report->members) {
    if (!m.decision.kept) {
      const ManifestLine& d = drops.at(m.doc.id);
      EXPECT_EQ(m.decision.duplicate_of, d.duplicate_of);
      EXPECT_NEAR(m.decision.similarity, d.similarity, 5e-5);
    }
    ASSERT_GE(m.exact_jaccard, 0) << m.doc.id;
    EXPECT_NEAR(m.exact_jaccard, ExactJaccardOf(corpus.texts[at.at(m.doc.id)], kept_text),
                1e-9)
        << m.doc.id;
  }
  // Without stored text there is no exact Jaccard, and the table says how to get it.
  const std::string table =
      Run({"inspect", "cluster", (*largest)[0].cluster, "--index", Index()});
  EXPECT_NE(table.find("exact J needs the whole texts: run dedup with --store-text"),
            std::string::npos)
      << table;
  const std::string json = Run(
      {"inspect", "cluster", (*largest)[0].kept_id, "--index", Index("text"), "--json"});
  simdjson::dom::parser parser;
  simdjson::dom::element e = parser.parse(json);
  EXPECT_EQ(uint64_t(e["size"]), (*largest)[0].size);
  simdjson::dom::element first = e["members"].at(0);
  for (const char* field :
       {"id", "url", "text_bytes", "kept", "similarity", "exact_jaccard", "cluster"}) {
    EXPECT_FALSE(first[field].error()) << field;
  }
}

// Source: drop.jsonl — every dropped document of the demo job, its duplicate_of,
// reason and similarity; and the stored edges must chain it to duplicate_of.
TEST_F(InspectTest, ExplainAgreesWithDropJsonlForEveryDrop) {
  const auto drops = Drops();
  ASSERT_GT(drops.size(), 300u);
  std::map<std::string, std::string> cluster_of;
  for (const auto& k : Keeps()) cluster_of[k.id] = k.cluster;
  for (const auto& d : drops) cluster_of[d.id] = d.cluster;
  for (const ManifestLine& d : drops) {
    auto x = plain_->Explain(d.id, 1000);
    ASSERT_TRUE(x.ok()) << d.id << ": " << x.status().ToString();
    EXPECT_FALSE(x->decision.kept) << d.id;
    EXPECT_EQ(x->decision.duplicate_of, d.duplicate_of) << d.id;
    EXPECT_EQ(x->decision.reason, d.reason) << d.id;
    EXPECT_NEAR(x->decision.similarity, d.similarity, 5e-5) << d.id;
    EXPECT_EQ(x->decision.cluster, d.cluster) << d.id;
    ASSERT_FALSE(x->chain.empty()) << d.id;
    EXPECT_EQ(x->chain.front().from, d.id);
    EXPECT_EQ(x->chain.back().to, d.duplicate_of);
    for (size_t i = 0; i < x->chain.size(); ++i) {
      EXPECT_GE(x->chain[i].similarity, 0.8)
          << d.id << " hop " << i;  // verified edges only
      if (i) {
        EXPECT_EQ(x->chain[i - 1].to, x->chain[i].from);
      }
    }
    bool edge_seen = false;
    for (const EvidenceRow& e : x->evidence) {
      if (!e.edge) {
        EXPECT_FALSE(e.bands.empty()) << "a candidate shares a bucket";
        // A similar pair never compared directly is still joined through other edges.
        if (e.similarity >= 0.8) {
          EXPECT_EQ(cluster_of.at(e.other_id), d.cluster) << d.id << " " << e.other_id;
        }
      }
      edge_seen = edge_seen || (e.edge && e.other_id == x->chain.front().to);
    }
    EXPECT_TRUE(edge_seen) << d.id;
  }
  for (const ManifestLine& k : Keeps()) {
    if (k.cluster_size < 2) continue;
    auto x = plain_->Explain(k.id);
    ASSERT_TRUE(x.ok());
    EXPECT_TRUE(x->decision.kept) << k.id;
    EXPECT_TRUE(x->chain.empty());
  }
  const ManifestLine& d = drops.front();
  const std::string json =
      Run({"inspect", "explain", d.id, "--index", Index(), "--json"});
  simdjson::dom::parser parser;
  simdjson::dom::element e = parser.parse(json);
  EXPECT_EQ(std::string_view(e["duplicate_of"]), d.duplicate_of);
  EXPECT_EQ(std::string_view(e["reason"]), d.reason);
  EXPECT_GT(e["evidence"].get_array().size(), 0u);
  EXPECT_GT(e["chain"].get_array().size(), 0u);
  const std::string table = Run({"inspect", "explain", d.id, "--index", Index()});
  EXPECT_EQ(table.rfind(d.id + ": dropped (" + d.reason + ") as a duplicate of " +
                            d.duplicate_of + "\n",
                        0),
            0u)
      << table;
  EXPECT_NE(table.find("Chain of edges to the kept document"), std::string::npos);
}

// Source: demo_data/truth.tsv. Querying with a base document's text finds its
// planted copies (identical after normalisation: estimated Jaccard exactly 1) and
// its light edits (1% of words), and nothing outside the family.
TEST_F(InspectTest, QueryFindsThePlantedNearDuplicates) {
  const auto truth = ReadDemoTruth();
  Corpus corpus = ReadJsonlCorpus(DemoCorpusPath());
  std::map<std::string, std::vector<std::string>> family;
  std::map<std::string, std::string> base_of;
  for (const auto& [id, t] : truth) {
    if (t.family == "-") continue;
    family[t.family].push_back(id);
    if (t.role == "base") base_of[t.family] = id;
  }
  size_t families = 0, copies = 0, light = 0;
  for (size_t i = 0; i < corpus.ids.size() && families < 25; ++i) {
    const TruthRow& t = truth.at(corpus.ids[i]);
    if (t.role != "base" || family[t.family].size() > 10) continue;
    ++families;
    auto hits = plain_->Query(corpus.texts[i], 0, 0);
    ASSERT_TRUE(hits.ok()) << hits.status().ToString();
    std::map<std::string, double> found;
    for (const TextQueryHit& h : *hits) found[h.id] = h.similarity;
    EXPECT_DOUBLE_EQ(found[corpus.ids[i]], 1.0);
    for (const auto& [id, s] : found)
      EXPECT_EQ(truth.at(id).family, t.family) << id << " for " << corpus.ids[i];
    for (const std::string& member : family[t.family]) {
      const TruthRow& m = truth.at(member);
      if (m.kind == "exact" || m.kind == "case-punct") {
        ++copies;
        ASSERT_TRUE(found.count(member))
            << member << " (" << m.kind << ") of " << corpus.ids[i];
        EXPECT_DOUBLE_EQ(found[member], 1.0);
      } else if (m.kind == "edit" && m.edit_rate <= 0.01) {
        ++light;
        EXPECT_TRUE(found.count(member)) << member << " (1% edits) of " << corpus.ids[i];
      }
    }
  }
  EXPECT_GT(copies, 5u);
  EXPECT_GT(light, 2u);
  // The binary reads the text from a file or standard input.
  const std::string base = corpus.ids[0];
  WriteFile(dir_->File("q.txt"), corpus.texts[0]);
  const std::string json = Run({"inspect", "query", "--text-file", dir_->File("q.txt"),
                                "--index", Index(), "--json"});
  simdjson::dom::parser parser;
  simdjson::dom::array rows = parser.parse(json).get_array();
  ASSERT_GT(rows.size(), 0u);
  bool self = false;
  for (simdjson::dom::element r : rows) {
    for (const char* field : {"id", "url", "similarity", "bands", "decision"})
      EXPECT_FALSE(r[field].error());
    self = self || std::string_view(r["id"]) == base;
  }
  EXPECT_TRUE(self);
}

// Hand-worked: A and B are word 5-gram shingled; they share exactly the two
// shingles "the ferry to osk leaves" and "ferry to osk leaves at".
TEST_F(InspectTest, DiffMarksSharedShinglesGolden) {
  TempDir dir;
  WriteFile(dir.File("in.jsonl"),
            JsonLine("a", "The ferry to Osk leaves at nine every morning.") +
                JsonLine("b", "The ferry to Osk leaves at ten every morning!"));
  Run({"dedup", "--input", dir.File("in.jsonl"), "--out", dir.File("out"), "--store-text",
       "--quiet"});
  const std::string text = Run({"inspect", "diff", "a", "b", "--index",
                                dir.File("out") + "/index", "--width", "60"});
  // Golden: the shingle counts and the marking are hand-worked (5 shingles each,
  // 2 shared: exact Jaccard 2 / 8); the estimated Jaccard is the index's MinHash.
  const std::string golden =
      "            A           B\n"
      "id          a           b\n"
      "url\n"
      "text bytes  46          45\n"
      "stored      whole text  whole text\n"
      "shingles    5           5\n"
      "shared shingles 2; Jaccard of the stored texts 0.2500 (exact); estimated Jaccard "
      "0.1797\n"
      "normalised text as the shingler sees it; shared shingles in [brackets]\n"
      "\n"
      "A a\n"
      "[the ferry to osk leaves at] nine every morning\n"
      "\n"
      "B b\n"
      "[the ferry to osk leaves at] ten every morning\n";
  EXPECT_EQ(text, golden);
  const std::string side =
      Run({"inspect", "diff", "a", "b", "--index", dir.File("out") + "/index", "--width",
           "60", "--side-by-side"});
  EXPECT_NE(side.find("A a                          | B b\n"
                      "[the ferry to osk leaves at] | [the ferry to osk leaves at]\n"
                      "nine every morning           | ten every morning\n"),
            std::string::npos)
      << side;
  const std::string coloured = Run({"inspect", "diff", "a", "b", "--index",
                                    dir.File("out") + "/index", "--colour", "always"});
  EXPECT_NE(coloured.find("\x1b[32mthe ferry to osk leaves at\x1b[0m nine every morning"),
            std::string::npos)
      << coloured;
}

// Source: truth.tsv "wrap" variants (the base text with a syndication header or
// footer added) and exact Jaccard by definition. Every shingle of the base is in
// the variant, so the whole base is marked shared.
TEST_F(InspectTest, DiffOfAWrappedCopy) {
  const auto truth = ReadDemoTruth();
  std::map<std::string, std::string> base_of;
  for (const auto& [id, t] : truth) {
    if (t.role == "base") base_of[t.family] = id;
  }
  std::string variant;
  for (const auto& [id, t] : truth) {
    if (t.kind == "wrap") {
      variant = id;
      break;
    }
  }
  ASSERT_FALSE(variant.empty());
  const std::string base = base_of.at(truth.at(variant).family);
  auto diff = text_->Diff(base, variant);
  ASSERT_TRUE(diff.ok()) << diff.status().ToString();
  EXPECT_TRUE(diff->exact);
  ASSERT_EQ(diff->runs_a.size(), 1u);
  EXPECT_TRUE(diff->runs_a[0].shared);
  bool unshared = false;
  for (const TextRun& r : diff->runs_b) unshared = unshared || !r.shared;
  EXPECT_TRUE(unshared);
  Corpus corpus = ReadJsonlCorpus(DemoCorpusPath());
  std::map<std::string, size_t> at;
  for (size_t i = 0; i < corpus.ids.size(); ++i) at[corpus.ids[i]] = i;
  EXPECT_NEAR(diff->text_jaccard,
              ExactJaccardOf(corpus.texts[at[base]], corpus.texts[at[variant]]), 1e-9);
  EXPECT_EQ(diff->shingles_a, diff->shared_shingles);
  const std::string json =
      Run({"inspect", "diff", base, variant, "--index", Index("text"), "--json"});
  simdjson::dom::parser parser;
  simdjson::dom::element e = parser.parse(json);
  EXPECT_TRUE(bool(e["exact"]));
  EXPECT_EQ(uint64_t(e["shared_shingles"]), diff->shared_shingles);
  EXPECT_NEAR(double(e["text_jaccard"]), diff->text_jaccard, 5e-5);
}

// Golden tables of the demo job (regression pins; the same values are checked
// against the manifests by the tests above).
TEST_F(InspectTest, GoldenTablesOfTheDemoJob) {
  EXPECT_EQ(Run({"inspect", "clusters", "--index", Index(), "--limit", "5"}),
            "cluster           size  spread  kept document\n"
            "a17cfd74f7dd171a    87  0.7266  doc-001664\n"
            "99184c54e3eb6683     9  0.8828  doc-001195\n"
            "780149d2da6e4798     8  0.8125  doc-000599\n"
            "80a29de3aa98d95d     8  0.7266  doc-000254\n"
            "3e9e3b5995974d60     7  0.8516  doc-000450\n");
  const std::string explain =
      Run({"inspect", "explain", "doc-001024", "--index", Index()});
  EXPECT_EQ(explain.rfind("doc-001024: dropped (near) as a duplicate of doc-000254\n"
                          "estimated Jaccard to it  0.8594\n"
                          "cluster                  80a29de3aa98d95d (8 documents)\n",
                          0),
            0u)
      << explain;
  const size_t table = explain.find("other       kind");
  ASSERT_NE(table, std::string::npos) << explain;
  EXPECT_EQ(
      explain.substr(table),
      "other       kind             est. J  shared bands                           "
      "other's decision\n"
      "doc-000798  edge (exact)     1.0000  0,1,2,3,4,5,6,7,8,9,10,11,12,13,14,15  "
      "dropped -> doc-000254\n"
      "doc-001117  edge (exact)     1.0000  0,1,2,3,4,5,6,7,8,9,10,11,12,13,14,15  "
      "dropped -> doc-000254\n"
      "doc-001436  edge (exact)     1.0000  0,1,2,3,4,5,6,7,8,9,10,11,12,13,14,15  "
      "dropped -> doc-000254\n"
      "doc-002104  edge             0.8984  1,2,4,7,10,15                          "
      "dropped -> doc-000254\n"
      "doc-000254  edge             0.8594  3,4,5,10,12,13                         kept\n"
      "doc-000494  edge             0.8594  3,6,9,15                               "
      "dropped -> doc-000254\n"
      "doc-000906  edge             0.8516  2,12,13,15                             "
      "dropped -> doc-000254\n"
      "doc-000337  below threshold  0.6328  10                                     kept\n"
      "\n"
      "Chain of edges to the kept document\n"
      "from        to          est. J  via\n"
      "doc-001024  doc-000254  0.8594  band 3\n");
}

// --store-text changes what is stored, never a decision.
TEST_F(InspectTest, StoreTextKeepsDecisions) {
  EXPECT_EQ(ReadFile(dir_->File("plain") + "/drop.jsonl"),
            ReadFile(dir_->File("text") + "/drop.jsonl"));
  EXPECT_EQ(ReadFile(dir_->File("plain") + "/keep.jsonl"),
            ReadFile(dir_->File("text") + "/keep.jsonl"));
}

TEST_F(InspectTest, ErrorsNameWhatIsMissing) {
  RunResult r = RunShingleton({"inspect", "explain", "no-such-doc", "--index", Index()});
  EXPECT_EQ(r.exit_code, 1);
  EXPECT_NE(r.output.find("no document with id \"no-such-doc\""), std::string::npos)
      << r.output;
  r = RunShingleton({"inspect", "stats"});
  EXPECT_EQ(r.exit_code, 2);
  EXPECT_NE(r.output.find("exactly one of --index DIR and --coordinator ADDR"),
            std::string::npos)
      << r.output;
  for (const char* sub : {"stats", "clusters", "cluster", "explain", "query", "diff"}) {
    r = RunShingleton({"inspect", sub, "--help"});
    EXPECT_EQ(r.exit_code, 0) << sub;
    for (const char* opt : {"--index", "--coordinator TEXT=127.0.0.1:7400", "--json",
                            "--colour TEXT=auto", "--width INT=0"}) {
      EXPECT_NE(r.output.find(opt), std::string::npos) << sub << " --help lacks " << opt;
    }
  }
}

// Aligned columns by construction; colour sequences take no room.
TEST(TextTableTest, AlignsWithAndWithoutColour) {
  TextTable t({"id", "n"}, "lr");
  t.AddRow({"a", "1"});
  t.AddRow({"bbb", "22"});
  ReportStyle plain;
  EXPECT_EQ(t.Render(plain), "id    n\na     1\nbbb  22\n");
  ReportStyle colour;
  colour.colour = true;
  std::string shown = t.Render(colour), stripped;
  for (size_t i = 0; i < shown.size(); ++i) {
    if (shown[i] == '\x1b') {
      while (shown[i] != 'm') ++i;
    } else {
      stripped += shown[i];
    }
  }
  EXPECT_NE(shown, stripped);
  EXPECT_EQ(stripped, t.Render(plain));
  EXPECT_EQ(DisplayWidth("\x1b[32mcafé\x1b[0m"), 4u);
}

// Drops in favour of a frozen reference generation: explain names the reference
// document's key (its id lives in the generation), stats count the reasons the
// manifests give, and such a document is in no cluster of the job.
TEST(InspectReferenceTest, ReferenceDropsAreExplained) {
  TempDir dir;
  std::string text;
  for (int i = 0; i < 60; ++i)
    text += "tide table for brellan harbour entry " + std::to_string(i) + " ";
  WriteFile(dir.File("oct.jsonl"), JsonLine("oct-1", text));
  WriteFile(
      dir.File("nov.jsonl"),
      JsonLine("nov-1", text) + JsonLine("nov-2", "an unrelated page about ferries"));
  ASSERT_EQ(RunShingleton({"dedup", "--input", dir.File("oct.jsonl"), "--out",
                           dir.File("oct"), "--quiet"})
                .exit_code,
            0);
  RunResult frozen =
      RunShingleton({"freeze", "--from", dir.File("oct"), "--to", dir.File("ref")});
  ASSERT_EQ(frozen.exit_code, 0) << frozen.output;
  ASSERT_EQ(RunShingleton({"dedup", "--input", dir.File("nov.jsonl"), "--out",
                           dir.File("nov"), "--reference", dir.File("ref"), "--quiet"})
                .exit_code,
            0);
  const auto drops = ReadManifestLines(dir.File("nov") + "/drop.jsonl");
  ASSERT_EQ(drops.size(), 1u);
  EXPECT_EQ(drops[0].reason, "reference-exact");
  auto inspector = Inspector::Open(dir.File("nov") + "/index");
  ASSERT_TRUE(inspector.ok());
  auto x = inspector.value()->Explain("nov-1");
  ASSERT_TRUE(x.ok()) << x.status().ToString();
  EXPECT_FALSE(x->decision.kept);
  EXPECT_EQ(x->decision.reason, "reference");
  EXPECT_EQ(x->decision.duplicate_of, "reference document " + drops[0].cluster);
  auto stats = inspector.value()->Stats();
  ASSERT_TRUE(stats.ok());
  EXPECT_EQ(stats->dropped_by_reason.at("reference-exact"), 1u);
  EXPECT_EQ(stats->clusters, 0u);
  EXPECT_EQ(inspector.value()->Cluster("nov-1").status().code(), Status::Code::kNotFound);
}

}  // namespace
}  // namespace shingleton
