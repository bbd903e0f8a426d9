#include "tests/test_util.h"

#include <gtest/gtest.h>
#include <simdjson.h>
#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>

#include "index/json_writer.h"

namespace shingleton::testing {

namespace fs = std::filesystem;

TempDir::TempDir() {
  const char* base = std::getenv("TMPDIR");
  std::string templ = std::string(base && *base ? base : "/tmp") + "/shingleton-test-XXXXXX";
  char* made = ::mkdtemp(templ.data());
  if (!made) std::abort();
  path_ = made;
}

TempDir::~TempDir() {
  std::error_code ec;
  fs::remove_all(path_, ec);
}

void SplitLinesInTwo(const std::string& path, const std::string& even, const std::string& odd) {
  std::ifstream in(path);
  std::string a, b;
  int n = 0;
  for (std::string line; std::getline(in, line); ++n) (n % 2 ? b : a) += line + "\n";
  WriteFile(even, a);
  WriteFile(odd, b);
}

std::string ReadFile(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::stringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

void WriteFile(const std::string& path, const std::string& data) {
  std::ofstream out(path, std::ios::binary);
  out << data;
}

bool FileExists(const std::string& path) { return fs::exists(path); }

std::string JsonLine(const std::string& id, const std::string& text, const std::string& url) {
  JsonWriter w;
  w.BeginObject();
  w.Key("id");
  w.String(id);
  w.Key("text");
  w.String(text);
  if (!url.empty()) {
    w.Key("url");
    w.String(url);
  }
  w.EndObject();
  return w.Take() + "\n";
}

Manifests ReadManifests(const std::string& out_dir) {
  Manifests m;
  simdjson::dom::parser parser;
  for (const char* name : {"keep.jsonl", "drop.jsonl"}) {
    std::ifstream in(out_dir + "/" + name);
    EXPECT_TRUE(in.good()) << "missing " << out_dir << "/" << name;
    for (std::string line; std::getline(in, line);) {
      simdjson::dom::element e;
      EXPECT_FALSE(parser.parse(line).get(e)) << line;
      std::string id{std::string_view(e["id"])};
      EXPECT_EQ(m.kept_of.count(id), 0u) << "id twice in manifests: " << id;
      if (std::string(name) == "keep.jsonl") {
        m.kept_of[id] = id;
        m.kept.insert(id);
      } else {
        m.kept_of[id] = std::string(std::string_view(e["duplicate_of"]));
        m.similarity[id] = double(e["similarity"]);
      }
    }
  }
  return m;
}

std::string CommonLicense(const std::string& name) {
  return ReadFile("/usr/share/common-licenses/" + name);
}

}  // namespace shingleton::testing

#include <unordered_map>

#include "index/normalizer.h"
#include "index/scheme.h"
#include "index/shingler.h"

namespace shingleton::testing {
namespace {

std::vector<uint64_t> Shingles(const std::string& text) {
  Normalizer n;
  NormalizedText t;
  n.Normalize(text, &t);
  return ShingleSet(t, ShingleKind::kWord, 5, SketchScheme::Default().seed);
}

}  // namespace

std::string Corpus::ToJsonl() const {
  std::string out;
  for (size_t i = 0; i < ids.size(); ++i) out += JsonLine(ids[i], texts[i]);
  return out;
}

Corpus ReadJsonlCorpus(const std::string& path) {
  Corpus c;
  simdjson::dom::parser parser;
  std::ifstream in(path);
  EXPECT_TRUE(in.good()) << "cannot read " << path;
  for (std::string line; std::getline(in, line);) {
    simdjson::dom::element e;
    if (parser.parse(line).get(e)) {
      ADD_FAILURE() << "bad line in " << path;
      continue;
    }
    c.ids.emplace_back(std::string_view(e["id"]));
    c.texts.emplace_back(std::string_view(e["text"]));
  }
  return c;
}

double ExactJaccardOf(const std::string& a, const std::string& b) {
  return ExactJaccard(Shingles(a), Shingles(b));
}

std::vector<ExactPair> AllPairsExactJaccard(const Corpus& corpus, double min_jaccard) {
  const size_t n = corpus.texts.size();
  std::vector<std::vector<uint64_t>> sets(n);
  std::unordered_map<uint64_t, std::vector<uint32_t>> postings;
  for (size_t i = 0; i < n; ++i) {
    sets[i] = Shingles(corpus.texts[i]);
    for (uint64_t s : sets[i]) postings[s].push_back(static_cast<uint32_t>(i));
  }
  std::vector<ExactPair> out;
  std::vector<uint32_t> common(n, 0);
  std::vector<uint32_t> touched;
  for (size_t i = 0; i < n; ++i) {
    for (uint64_t s : sets[i]) {
      for (uint32_t j : postings[s]) {
        if (j <= i) continue;
        if (common[j]++ == 0) touched.push_back(j);
      }
    }
    for (uint32_t j : touched) {
      const double jac = double(common[j]) / double(sets[i].size() + sets[j].size() - common[j]);
      if (jac >= min_jaccard) out.push_back({i, j, jac});
      common[j] = 0;
    }
    touched.clear();
  }
  // Two empty documents share no shingle but are identical: J = 1 by convention.
  std::vector<size_t> empty;
  for (size_t i = 0; i < n; ++i) {
    if (sets[i].empty()) empty.push_back(i);
  }
  for (size_t x = 0; x < empty.size(); ++x) {
    for (size_t y = x + 1; y < empty.size(); ++y) out.push_back({empty[x], empty[y], 1.0});
  }
  return out;
}

Quality Evaluate(const Corpus& corpus, const Manifests& m, double pair_threshold, double drop_floor) {
  Quality q;
  for (const ExactPair& p : AllPairsExactJaccard(corpus, pair_threshold)) {
    ++q.true_pairs;
    const std::string& a = corpus.ids[p.a];
    const std::string& b = corpus.ids[p.b];
    if (m.kept_of.at(a) == m.kept_of.at(b)) {
      ++q.found_pairs;
    } else if (q.examples.size() < 10) {
      q.examples.push_back("missed " + a + " ~ " + b + " J=" + std::to_string(p.jaccard));
    }
  }
  std::unordered_map<std::string, size_t> index;
  for (size_t i = 0; i < corpus.ids.size(); ++i) index[corpus.ids[i]] = i;
  for (const auto& [id, kept] : m.kept_of) {
    if (id == kept) continue;
    ++q.drops;
    const double j = ExactJaccardOf(corpus.texts[index.at(id)], corpus.texts[index.at(kept)]);
    if (j >= drop_floor) {
      ++q.good_drops;
    } else if (q.examples.size() < 20) {
      q.examples.push_back("dropped " + id + " for " + kept + " at exact J=" + std::to_string(j));
    }
  }
  return q;
}

}  // namespace shingleton::testing

#include <algorithm>
#include <cmath>

namespace shingleton::testing {

double BruteForceJaccard(const std::vector<uint64_t>& a, const std::vector<uint64_t>& b) {
  const std::set<uint64_t> sa(a.begin(), a.end()), sb(b.begin(), b.end());
  size_t common = 0;
  for (uint64_t v : sa) common += sb.count(v);
  const size_t uni = sa.size() + sb.size() - common;
  return uni == 0 ? 1.0 : static_cast<double>(common) / static_cast<double>(uni);
}

SetPair MakeSetPair(double j, int union_size, std::mt19937_64* rng) {
  const int common = static_cast<int>(std::lround(j * union_size));
  std::set<uint64_t> seen;
  auto fresh = [&]() {
    uint64_t v;
    do {
      v = (*rng)();
    } while (!seen.insert(v).second);
    return v;
  };
  SetPair p;
  for (int i = 0; i < common; ++i) {
    const uint64_t v = fresh();
    p.a.push_back(v);
    p.b.push_back(v);
  }
  for (int i = common; i < union_size; ++i) {
    ((*rng)() & 1 ? p.a : p.b).push_back(fresh());
  }
  std::shuffle(p.a.begin(), p.a.end(), *rng);
  std::shuffle(p.b.begin(), p.b.end(), *rng);
  return p;
}

}  // namespace shingleton::testing
